using Microsoft.Extensions.DependencyInjection;
using Orleans;
using Orleans.Serialization;
using Orleans.TestingHost;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

/// <summary>
/// A bucket whose state was stored by an earlier version (applied call ids as a list, the newest output field by field)
/// is read, and written in the compact forms from then on.
/// </summary>
public sealed class BucketStateUpgradeTests : IAsyncLifetime
{
    private static readonly ForecastClusterOptions Cluster = new(bucketCount: 4);
    private readonly string _directory = Path.Combine(Path.GetTempPath(), "sf-upgrade-" + Guid.NewGuid().ToString("N"));
    private InProcessTestCluster _cluster = null!;

    private string DatabasePath => Path.Combine(_directory, "buckets.db");

    public async Task InitializeAsync()
    {
        Directory.CreateDirectory(_directory);
        string path = DatabasePath;
        var builder = new InProcessTestClusterBuilder(1);
        builder.Options.ConfigureFileLogging = false; // no log files in the working directory
        builder.ConfigureSilo((_, silo) => silo
            .AddForecastBuckets(ClusterScenario.EngineOptions(), SnapshotKeyCodecs.Utf8String, Cluster)
            .AddSqliteCheckpointGrainStorage(path));
        _cluster = builder.Build();
        await _cluster.DeployAsync();
    }

    public async Task DisposeAsync()
    {
        await _cluster.DisposeAsync();
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        Directory.Delete(_directory, recursive: true);
    }

    [Fact]
    public async Task PostAsync_IdRememberedInTheListFormOfAnEarlierVersion_IsARepeatAndTheStateIsRewrittenCompactly()
    {
        const string Key = "site-1/sensor-1";
        int bucket = new BucketMap<string>(SnapshotKeyCodecs.Utf8String, Cluster.BucketCount).BucketOf(Key);
        ISeriesBucketGrain<string> grain = _cluster.Client.GetGrain<ISeriesBucketGrain<string>>(bucket); // not activated yet
        string stream = CheckpointGrainStorage.StreamOf("bucket", grain.GetGrainId());
        Serializer serializer = _cluster.Client.ServiceProvider.GetRequiredService<Serializer>();
        Guid oldCall = Guid.NewGuid();
        var legacy = new BucketState<string> { Applied = [new AppliedCall(Guid.NewGuid(), 6), new AppliedCall(oldCall, 7)], Sequence = 7 };
        using (var store = new SqliteCheckpointStore(DatabasePath, new SqliteCheckpointStoreOptions(2, streamName: stream)))
        {
            byte[] bytes = [1, .. serializer.SerializeToArray(legacy)]; // CheckpointGrainStorage's "state follows" mark, then the state
            await store.SaveAsync(bytes, 1);
        }

        Observation<string>[] batch = [new(Key, ClusterScenario.Start, 5.0)];
        CallReceipt retry = await grain.PostAsync(oldCall, batch);
        CallReceipt fresh = await grain.PostAsync(Guid.NewGuid(), batch);
        CallReceipt freshAgain = await grain.PostAsync(oldCall, batch);

        Assert.True(retry.Repeat);
        Assert.Equal(7, retry.Sequence);
        Assert.Equal(0, retry.Observations);
        Assert.False(fresh.Repeat);
        Assert.Equal(8, fresh.Sequence);
        Assert.Equal(1, fresh.Observations);
        Assert.True(freshAgain.Repeat);

        using var reader = new SqliteCheckpointStore(DatabasePath, new SqliteCheckpointStoreOptions(2, streamName: stream));
        Checkpoint? stored = await reader.LoadLatestAsync();
        BucketState<string> state = serializer.Deserialize<BucketState<string>>(stored!.Snapshot[1..])!;
        Assert.Null(state.Applied);
        Assert.Equal(3, state.CallIdCount);
        var window = new CallIdWindow(Cluster.RememberedCommands);
        window.Load(state.CallIds!, state.CallIdCount, state.CallIdNext);
        Assert.True(window.TryGet(oldCall, out long sequence));
        Assert.Equal(7, sequence);
    }

    [Fact]
    public async Task Activation_NewestOutputStoredFieldByFieldByAnEarlierVersion_IsSentAgainAndRewrittenCompactly()
    {
        (ISeriesBucketGrain<string> grain, string stream, int bucket) = Grain("site-2/sensor-7");
        var receiver = new Receiver();
        ISeriesBucketObserver<string> observer = _cluster.Client.CreateObjectReference<ISeriesBucketObserver<string>>(receiver);
        BucketOutput<string> output = Output(bucket, number: 3, sequence: 5);
        var legacy = new BucketState<string>
        {
            Sequence = 5, Outputs = 3, LastOutput = output,
            Subscribers = [new BucketSubscriber<string>(observer, DateTimeOffset.UtcNow.AddHours(1))],
        };
        await StoreAsync(stream, legacy);

        await grain.GetStatusAsync(); // activates it
        BucketOutput<string> sent = await receiver.Next.Task.WaitAsync(TimeSpan.FromSeconds(30));
        await grain.SubscribeAsync(observer, TimeSpan.FromHours(1)); // a write without a new output keeps the newest one

        AssertSameOutput(output, sent);
        BucketState<string> state = await LoadAsync(stream);
        Assert.Null(state.LastOutput);
        AssertSameOutput(output, BucketOutputReader.Read(state.LastOutputData!, SnapshotKeyCodecs.Utf8String));
    }

    [Fact]
    public async Task Activation_NewestOutputStoredCompactly_IsSentAgain()
    {
        (ISeriesBucketGrain<string> grain, string stream, int bucket) = Grain("site-3/sensor-2");
        var receiver = new Receiver();
        ISeriesBucketObserver<string> observer = _cluster.Client.CreateObjectReference<ISeriesBucketObserver<string>>(receiver);
        BucketOutput<string> output = Output(bucket, number: 8, sequence: 9);
        await StoreAsync(stream, new BucketState<string>
        {
            Sequence = 9, Outputs = 8, LastOutputData = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(output),
            Subscribers = [new BucketSubscriber<string>(observer, DateTimeOffset.UtcNow.AddHours(1))],
        });

        await grain.GetStatusAsync();

        AssertSameOutput(output, await receiver.Next.Task.WaitAsync(TimeSpan.FromSeconds(30)));
    }

    [Fact]
    public async Task Activation_StoredNewestOutputDamaged_FailsNamingIt()
    {
        (ISeriesBucketGrain<string> grain, string stream, int bucket) = Grain("site-4/sensor-4");
        byte[] data = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(Output(bucket, number: 1, sequence: 1));
        data[data.Length / 2] ^= 0x10;
        await StoreAsync(stream, new BucketState<string> { Sequence = 1, Outputs = 1, LastOutputData = data });

        Exception error = await Assert.ThrowsAnyAsync<Exception>(() => grain.GetStatusAsync());

        string messages = string.Join(" / ", Chain(error).Select(e => e.Message));
        Assert.Contains("stored newest output cannot be loaded", messages, StringComparison.Ordinal);
        Assert.Contains("does not match its hash", messages, StringComparison.Ordinal);
    }

    private static IEnumerable<Exception> Chain(Exception? error)
    {
        for (; error is not null; error = error.InnerException)
        {
            yield return error;
        }
    }

    private (ISeriesBucketGrain<string> Grain, string Stream, int Bucket) Grain(string key)
    {
        int bucket = new BucketMap<string>(SnapshotKeyCodecs.Utf8String, Cluster.BucketCount).BucketOf(key);
        ISeriesBucketGrain<string> grain = _cluster.Client.GetGrain<ISeriesBucketGrain<string>>(bucket); // not activated yet
        return (grain, CheckpointGrainStorage.StreamOf("bucket", grain.GetGrainId()), bucket);
    }

    private async Task StoreAsync(string stream, BucketState<string> state)
    {
        Serializer serializer = _cluster.Client.ServiceProvider.GetRequiredService<Serializer>();
        using var store = new SqliteCheckpointStore(DatabasePath, new SqliteCheckpointStoreOptions(2, streamName: stream));
        byte[] bytes = [1, .. serializer.SerializeToArray(state)]; // CheckpointGrainStorage's "state follows" mark, then the state
        await store.SaveAsync(bytes, 1);
    }

    private async Task<BucketState<string>> LoadAsync(string stream)
    {
        Serializer serializer = _cluster.Client.ServiceProvider.GetRequiredService<Serializer>();
        using var reader = new SqliteCheckpointStore(DatabasePath, new SqliteCheckpointStoreOptions(2, streamName: stream));
        Checkpoint? stored = await reader.LoadLatestAsync();
        return serializer.Deserialize<BucketState<string>>(stored!.Snapshot[1..])!;
    }

    /// <summary>An output with NaN, −0 and an event mark (invented values).</summary>
    private static BucketOutput<string> Output(int bucket, long number, long sequence)
    {
        var next = new ForecastPoint(1, 12.5, -0.0, double.PositiveInfinity, StreamForecast.Tracking.IntervalKind.Normal, 0.9);
        var errors = new ErrorSummary(4, -0.0, 1.25, 1.1, 2.5, double.NaN, double.NaN, 0.8, -1.5, 0.25, 1.4);
        ForecastUpdate<string>[] forecasts =
        [
            new("site-2/sensor-7", 17, ClusterScenario.Start.AddHours(17), 11, false, 12.5, -1.5, next, next, errors, "MA(3)", false) { Event = EventKind.Promotion },
            new("site-2/sensor-8", 17, ClusterScenario.Start.AddHours(17), double.Epsilon, true, 12.5, double.NaN, next, next with { Horizon = 4 }, errors, "MA(3)", true),
        ];
        var transition = new StreamForecast.Alerts.DriftTransition(StreamForecast.Alerts.DriftTransitionKind.Raised, StreamForecast.Alerts.DriftRuleKind.TrackingSignal, 2, StreamForecast.Alerts.DriftDirection.OverForecast, StreamForecast.Alerts.DriftSeverity.Warning, 4.2, 4, 17, StreamForecast.Alerts.DriftCloseReason.None);
        return new BucketOutput<string>(bucket, number, sequence, forecasts, [new DriftAlert<string>("site-2/sensor-7", 17, ClusterScenario.Start.AddHours(17), 0, "tracking signal", transition, errors)], [new SeriesFault<string>("site-2/sensor-9", 16, SeriesFaultKind.ActualRejected, "refused")]);
    }

    private static void AssertSameOutput(BucketOutput<string> expected, BucketOutput<string> actual)
    {
        Assert.Equal((expected.Bucket, expected.Number, expected.Sequence), (actual.Bucket, actual.Number, actual.Sequence));
        Assert.Equal(expected.Forecasts, actual.Forecasts); // record equality: NaN equals NaN; −0 checked by its bits below
        Assert.Equal(expected.Alerts, actual.Alerts);
        Assert.Equal(expected.Faults, actual.Faults);
        Assert.Equal(BitConverter.DoubleToInt64Bits(expected.Forecasts[0].Next.Lower), BitConverter.DoubleToInt64Bits(actual.Forecasts[0].Next.Lower));
        Assert.Equal(BitConverter.DoubleToInt64Bits(expected.Forecasts[0].Errors.Rsfe), BitConverter.DoubleToInt64Bits(actual.Forecasts[0].Errors.Rsfe));
    }

    /// <summary>Collects what a bucket sends.</summary>
    private sealed class Receiver : ISeriesBucketObserver<string>
    {
        public TaskCompletionSource<BucketOutput<string>> Next { get; } = new(TaskCreationOptions.RunContinuationsAsynchronously);

        public Task OnOutputAsync(BucketOutput<string> output)
        {
            Next.TrySetResult(output);
            return Task.CompletedTask;
        }
    }
}
