using Orleans.Configuration;
using Orleans.TestingHost;
using StreamForecast.Forecasting;
using StreamForecast.Orleans;
using StreamForecast.Orleans.PostgreSql;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tests.Clusters;

namespace StreamForecast.PostgreSql.Tests;

// The forecast buckets on an in-process 2-silo cluster whose grain storage is the throwaway PostgreSQL server, with a
// silo killed mid-stream; the single-process engine on the same input is the oracle.
[Collection(PostgreSqlCollection.Name)]
public sealed class ClusterOnPostgreSqlTests : IAsyncLifetime
{
    private static readonly ForecastClusterOptions Cluster = new(bucketCount: 8, retryDelay: TimeSpan.FromMilliseconds(100), maxRetryDelay: TimeSpan.FromSeconds(1), maxAttempts: 60);
    private static readonly DateTimeOffset Start = new(2025, 6, 2, 0, 0, 0, TimeSpan.Zero);
    private readonly PostgreSqlServer _server;
    private readonly string _schema = "test_" + Guid.NewGuid().ToString("N");
    private InProcessTestCluster _cluster = null!;

    public ClusterOnPostgreSqlTests(PostgreSqlServer server) => _server = server;

    public async Task InitializeAsync()
    {
        var builder = new InProcessTestClusterBuilder(2);
        builder.Options.ConfigureFileLogging = false;
        string connectionString = _server.ConnectionString;
        string schema = _schema;
        builder.ConfigureSilo((_, silo) =>
        {
            silo.AddForecastBuckets(EngineOptions(), SnapshotKeyCodecs.Utf8String, Cluster)
                .AddPostgreSqlCheckpointGrainStorage(connectionString, schemaName: schema);
            FastFailover.Configure(silo); // a killed silo is declared dead within seconds
        });
        FastFailover.ConfigureClient(builder);
        _cluster = builder.Build();
        await _cluster.DeployAsync();
    }

    public async Task DisposeAsync()
    {
        await _cluster.DisposeAsync();
        await using var drop = _server.DataSource.CreateCommand($"DROP SCHEMA IF EXISTS {_schema} CASCADE");
        await drop.ExecuteNonQueryAsync();
    }

    [Fact]
    public async Task PostBatchAsync_SiloKilledMidStream_CountersAndLatestForecastsEqualTheSingleProcessEngine()
    {
        Observation<string>[] input = Stream(keys: 40, hours: 20);

        var engine = new ForecastEngine<string>(EngineOptions());
        var expected = new LatestByKey();
        EngineCounters expectedCounters;
        using (engine.Forecasts.Subscribe(expected))
        {
            await engine.PostBatchAsync(input);
            await engine.FlushAsync();
            expectedCounters = engine.GetCounters();
            await engine.DisposeAsync();
        }

        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var actual = new LatestByKey();
        using IDisposable subscription = client.Forecasts.Subscribe(actual);
        Observation<string>[][] batches = [.. input.Chunk(100)];
        int killAt = batches.Length * 2 / 5;
        string killed = "";
        for (int i = 0; i < batches.Length; i++)
        {
            if (i == killAt)
            {
                BucketStatus status = await client.Bucket(client.BucketOf("kiln-0")).GetStatusAsync();
                InProcessSiloHandle victim = _cluster.Silos.Single(s => s.SiloAddress.ToString() == status.Silo);
                killed = victim.SiloAddress.ToString();
                Task inFlight = client.PostBatchAsync(batches[i]).AsTask();
                await _cluster.KillSiloAsync(victim);
                await inFlight;
                continue;
            }

            await client.PostBatchAsync(batches[i]);
        }

        await client.FlushAsync();
        EngineCounters actualCounters = await client.GetCountersAsync();
        BucketStatus after = await client.Bucket(client.BucketOf("kiln-0")).GetStatusAsync();

        // The bucket moved to the surviving silo, which loaded its state from PostgreSQL; nothing acknowledged was lost
        // or counted twice, and every series ends on the engine's forecast.
        Assert.NotEqual(killed, after.Silo);
        Assert.Equal(expectedCounters.Observations, actualCounters.Observations);
        Assert.Equal(expectedCounters.PeriodsClosed, actualCounters.PeriodsClosed);
        Assert.Equal(expectedCounters.Duplicates, actualCounters.Duplicates);
        for (int i = 0; i < 200 && !actual.SameAs(expected); i++)
        {
            await Task.Delay(25); // output travels one-way after each acknowledgement; the last may still be on the wire
        }

        Assert.Equal(40, expected.Snapshot().Count);
        Assert.Equal(expected.Snapshot(), actual.Snapshot());
        await using var rows = _server.DataSource.CreateCommand($"SELECT count(DISTINCT stream), max(n) FROM (SELECT stream, count(*) AS n FROM {_schema}.checkpoints GROUP BY stream) s");
        await using var reader = await rows.ExecuteReaderAsync();
        Assert.True(await reader.ReadAsync());
        Assert.Equal(Cluster.BucketCount, reader.GetInt64(0)); // every bucket stored its state in the database
        Assert.Equal(2, reader.GetInt64(1));                    // the newest two versions of each, as registered
    }

    private static ForecastEngineOptions<string> EngineOptions() => new(
        new SeriesOptions(new MovingAverageOptions(4), PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)), duplicateWindow: 16),
        keyComparer: StringComparer.Ordinal,
        partitions: 2);

    // Invented kiln temperatures, one reading per kiln every 20 minutes, with now and then an event delivered twice.
    private static Observation<string>[] Stream(int keys, int hours)
    {
        var random = new Random(2026);
        var events = new List<Observation<string>>();
        int id = 0;
        for (int minute = 0; minute < hours * 60; minute += 20)
        {
            for (int k = 0; k < keys; k++)
            {
                var o = new Observation<string>("kiln-" + k, Start.AddMinutes(minute + random.Next(20)), Math.Round(700 + (k * 3) + (random.NextDouble() * 10), 1), "e" + id++);
                events.Add(o);
                if (random.Next(50) == 0)
                {
                    events.Add(o);
                }
            }
        }

        return [.. events];
    }

    private sealed class LatestByKey : IObserver<ForecastUpdate<string>>
    {
        private readonly Dictionary<string, ForecastUpdate<string>> _latest = new(StringComparer.Ordinal);

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value)
        {
            lock (_latest)
            {
                _latest[value.Key] = value;
            }
        }

        public List<KeyValuePair<string, ForecastUpdate<string>>> Snapshot()
        {
            lock (_latest)
            {
                return [.. _latest.OrderBy(p => p.Key, StringComparer.Ordinal)];
            }
        }

        public bool SameAs(LatestByKey other) => Snapshot().SequenceEqual(other.Snapshot());
    }
}
