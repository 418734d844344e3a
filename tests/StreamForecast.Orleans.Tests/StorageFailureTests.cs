using Orleans.TestingHost;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

/// <summary>A one-silo cluster whose storage fails every fifth write: the buckets must reload and the retries must land once.</summary>
public sealed class StorageFailureTests : IAsyncLifetime
{
    private static readonly ForecastClusterOptions Cluster = new(bucketCount: 4, retryDelay: TimeSpan.FromMilliseconds(20), maxRetryDelay: TimeSpan.FromMilliseconds(200), maxAttempts: 20);
    private readonly string _directory = Path.Combine(Path.GetTempPath(), "sf-flaky-" + Guid.NewGuid().ToString("N"));
    private InProcessTestCluster _cluster = null!;

    public async Task InitializeAsync()
    {
        Directory.CreateDirectory(_directory);
        string path = Path.Combine(_directory, "buckets.db");
        var builder = new InProcessTestClusterBuilder(1);
        builder.Options.ConfigureFileLogging = false; // no log files in the working directory
        builder.ConfigureSilo((_, silo) => silo
            .AddForecastBuckets(ClusterScenario.EngineOptions(), SnapshotKeyCodecs.Utf8String, Cluster)
            .AddCheckpointGrainStorage((_, stream) => new FlakyStore(new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(2, streamName: stream)))));
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
    public async Task PostBatchAsync_StorageFailsEveryFifthWrite_RetriesApplyEachObservationOnce()
    {
        List<Observation<string>> input = ClusterScenario.Stream(keys: 20, hours: 12, seed: 11);
        ForecastEngineOptions<string> options = ClusterScenario.EngineOptions();
        EngineCounters expected;
        await using (var engine = new ForecastEngine<string>(options))
        {
            await engine.PostBatchAsync(input.ToArray());
            await engine.FlushAsync();
            expected = engine.GetCounters();
        }

        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        foreach (Observation<string>[] batch in input.Chunk(100))
        {
            await client.PostBatchAsync(batch);
        }

        await client.FlushAsync();
        EngineCounters actual = await client.GetCountersAsync();

        Assert.True(client.Retries > 0, "the flaky store never failed a write");
        Assert.True(FlakyStore.Failures > 0);
        Assert.Equal(expected.Observations, actual.Observations);
        Assert.Equal(expected.Duplicates, actual.Duplicates);
        Assert.Equal(expected.PeriodsClosed, actual.PeriodsClosed);
        Assert.Equal(expected.AlertsRaised, actual.AlertsRaised);
        Assert.Equal(expected.ActiveSeries, actual.ActiveSeries);
    }

    /// <summary>Fails every fifth conditional save with an I/O error, before writing anything.</summary>
    private sealed class FlakyStore(SqliteCheckpointStore inner) : IConditionalCheckpointStore, IDisposable
    {
        private static int s_saves;

        public static int Failures;

        public ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default) =>
            inner.SaveAsync(snapshot, inputPosition, cancellationToken);

        public ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default) => inner.LoadLatestAsync(cancellationToken);

        public ValueTask<bool> TrySaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, long? expectedLatestPosition, CancellationToken cancellationToken = default)
        {
            if (Interlocked.Increment(ref s_saves) % 5 == 0)
            {
                Interlocked.Increment(ref Failures);
                throw new IOException("The disk is having a bad moment (injected by the test).");
            }

            return inner.TrySaveAsync(snapshot, inputPosition, expectedLatestPosition, cancellationToken);
        }

        public void Dispose() => inner.Dispose();
    }
}
