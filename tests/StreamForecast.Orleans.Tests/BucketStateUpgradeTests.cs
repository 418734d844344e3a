using Microsoft.Extensions.DependencyInjection;
using Orleans;
using Orleans.Serialization;
using Orleans.TestingHost;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

/// <summary>A bucket whose state was stored by an earlier version (applied call ids as a list) is read, and written in the compact form from then on.</summary>
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
}
