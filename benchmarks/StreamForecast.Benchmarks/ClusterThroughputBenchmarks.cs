using BenchmarkDotNet.Attributes;
using Orleans.TestingHost;
using StreamForecast.Orleans;
using StreamForecast.Orleans.PostgreSql;
using StreamForecast.PostgreSql.Tests;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Throughput of the Orleans scale-out on this machine against the single-process engine (the baseline), on the same
/// input: 1,000 string keys, one reading per key per hour, four hours per invocation posted in batches of <see cref="Batch"/> and then
/// flushed, so an invocation ends when every reading has been applied (and, in the cluster, stored). The cluster is the
/// in-process test cluster of the tests: 3 silos on loopback, 24 buckets, grain state in one shared SQLite file.
/// Each invocation continues the event time of the last one, so the series' state does not grow between iterations.
/// <see cref="ThreeSiloClusterNotDurable"/> runs the same cluster with Orleans' in-memory grain storage, which loses a
/// bucket when its silo dies (never use it for the buckets): the difference between the two is the cost of the durable writes.
/// <see cref="ThreeSiloClusterPostgreSql"/> runs the same cluster with the bucket state in PostgreSQL
/// (<c>AddPostgreSqlCheckpointGrainStorage</c>, every silo on one database of a throwaway server started in the setup
/// on loopback, on this same machine).
/// </summary>
[MemoryDiagnoser]
public class ClusterThroughputBenchmarks
{
    private const int Keys = 1_000;
    private const int HoursPerInvoke = 4;
    private const int Ops = Keys * HoursPerInvoke;
    private static readonly DateTimeOffset s_t0 = new(2025, 1, 6, 0, 0, 0, TimeSpan.Zero);
    private static readonly ForecastClusterOptions s_cluster = new(bucketCount: 24);

    private string[] _keys = [];
    private int _round;
    private ForecastEngine<string>? _engine;
    private InProcessTestCluster? _silos;
    private ForecastClusterClient<string>? _client;
    private string _directory = "";
    private ThrowawayPostgreSql? _postgres;

    /// <summary>Observations per post: 1,000 (about 42 per bucket call) or 4,000 (about 167); a bucket stores once per call.</summary>
    [ParamsSource(nameof(Batches))]
    public int Batch { get; set; }

    /// <summary>
    /// 1,000 and 4,000; only 1,000 when STREAMFORECAST_BENCH_SMOKE=1 (the CI dry run, which must stay short: each case
    /// starts a 3-silo cluster, and the PostgreSQL case a database server too).
    /// </summary>
    public static IEnumerable<int> Batches =>
        Environment.GetEnvironmentVariable("STREAMFORECAST_BENCH_SMOKE") == "1" ? [1_000] : [1_000, 4_000];

    /// <summary>Setup for the single-process engine (2 partitions, as on this 2-core machine).</summary>
    [GlobalSetup(Target = nameof(SingleProcessEngine))]
    public void SetupEngine()
    {
        Common();
        _engine = new ForecastEngine<string>(Options());
        for (int i = 0; i < 3; i++)
        {
            SingleProcessEngine();
        }
    }

    /// <summary>Setup for the cluster: 3 silos, shared SQLite storage, one connected client.</summary>
    [GlobalSetup(Target = nameof(ThreeSiloCluster))]
    public void SetupCluster() => StartCluster(Storage.Sqlite);

    /// <summary>Setup for the same cluster on PostgreSQL: a throwaway server, then the silos on it.</summary>
    [GlobalSetup(Target = nameof(ThreeSiloClusterPostgreSql))]
    public void SetupClusterPostgreSql()
    {
        _postgres = ThrowawayPostgreSql.StartAsync("sf-bench-pg-").GetAwaiter().GetResult();
        try
        {
            StartCluster(Storage.PostgreSql);
        }
        catch
        {
            Cleanup(); // a setup that throws gets no cleanup: stop the server here
            throw;
        }
    }

    /// <summary>Setup for the same cluster on Orleans' in-memory storage.</summary>
    [GlobalSetup(Target = nameof(ThreeSiloClusterNotDurable))]
    public void SetupClusterNotDurable() => StartCluster(Storage.Memory);

    private enum Storage
    {
        Sqlite,
        PostgreSql,
        Memory,
    }

    private void StartCluster(Storage storage)
    {
        Common();
        _directory = Path.Combine(Path.GetTempPath(), "sf-bench-cluster-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(_directory);
        string path = Path.Combine(_directory, "buckets.db");
        var builder = new InProcessTestClusterBuilder(3);
        builder.Options.ConfigureFileLogging = false; // no log files in the working directory
        builder.ConfigureSilo((_, silo) =>
        {
            silo.AddForecastBuckets(Options(), SnapshotKeyCodecs.Utf8String, s_cluster);
            switch (storage)
            {
                case Storage.Sqlite:
                    silo.AddSqliteCheckpointGrainStorage(path);
                    break;
                case Storage.PostgreSql:
                    silo.AddPostgreSqlCheckpointGrainStorage(_postgres!.ConnectionString(maxPoolSize: 30));
                    break;
                default:
                    silo.AddMemoryGrainStorage(ForecastClusterOptions.StorageName);
                    break;
            }
        });
        _silos = builder.Build();
        _silos.DeployAsync().GetAwaiter().GetResult();
        _client = ForecastCluster.ConnectAsync(_silos.Client, s_cluster, SnapshotKeyCodecs.Utf8String).GetAwaiter().GetResult();
        for (int i = 0; i < 3; i++)
        {
            RunAsync(_client).GetAwaiter().GetResult();
        }
    }

    /// <summary>The average length of the bucket states the SQLite case keeps (each bucket's newest writes); 0 in the other cases.</summary>
    /// <returns>Bytes per stored state (the grain storage's mark and the serialized state).</returns>
    internal double AverageStoredStateBytes()
    {
        if (_postgres is not null)
        {
            // PostgreSQL: the bytes as written, and as kept (pg_column_size: after TOAST compression, if it paid off).
            using var pg = new Npgsql.NpgsqlConnection(_postgres.ConnectionString(maxPoolSize: 2));
            pg.Open();
            using var query = pg.CreateCommand();
            query.CommandText = "SELECT avg(octet_length(snapshot))::float8, avg(pg_column_size(snapshot))::float8 FROM streamforecast.checkpoints";
            using var row = query.ExecuteReader();
            row.Read();
            Console.WriteLine(string.Create(System.Globalization.CultureInfo.InvariantCulture, $"PostgreSQL: {row.GetDouble(0):F0} B per stored state as written, {row.GetDouble(1):F0} B as kept"));
            return row.GetDouble(0);
        }

        string path = Path.Combine(_directory, "buckets.db");
        if (_directory.Length == 0 || !File.Exists(path))
        {
            return 0;
        }

        using var connection = new Microsoft.Data.Sqlite.SqliteConnection($"Data Source={path};Mode=ReadOnly;Pooling=False");
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT avg(snapshot_length) FROM checkpoints";
        return command.ExecuteScalar() is double average ? average : 0;
    }

    /// <summary>Stops what the setup started.</summary>
    [GlobalCleanup]
    public void Cleanup()
    {
        _engine?.DisposeAsync().AsTask().GetAwaiter().GetResult();
        _client?.DisposeAsync().AsTask().GetAwaiter().GetResult();
        _silos?.DisposeAsync().AsTask().GetAwaiter().GetResult();
        if (_directory.Length > 0)
        {
            Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
            Directory.Delete(_directory, recursive: true);
        }

        _postgres?.DisposeAsync().AsTask().GetAwaiter().GetResult();
        _postgres = null;
    }

    /// <summary>The baseline: post and flush through the in-process engine.</summary>
    [Benchmark(Baseline = true, OperationsPerInvoke = Ops)]
    public void SingleProcessEngine() => RunAsync(_engine!).GetAwaiter().GetResult();

    /// <summary>Post and flush through the cluster client: applied and stored by the bucket grains.</summary>
    [Benchmark(OperationsPerInvoke = Ops)]
    public void ThreeSiloCluster() => RunAsync(_client!).GetAwaiter().GetResult();

    /// <summary>The same with the bucket state in PostgreSQL (one throwaway server on loopback, shared by the 3 silos).</summary>
    [Benchmark(OperationsPerInvoke = Ops)]
    public void ThreeSiloClusterPostgreSql() => RunAsync(_client!).GetAwaiter().GetResult();

    /// <summary>The same on in-memory grain storage (not durable; for the comparison only).</summary>
    [Benchmark(OperationsPerInvoke = Ops)]
    public void ThreeSiloClusterNotDurable() => RunAsync(_client!).GetAwaiter().GetResult();

    private static ForecastEngineOptions<string> Options() => new(
        new SeriesOptions(new StreamForecast.Forecasting.MovingAverageOptions(12), StreamForecast.Periods.PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)),
            rules: [new StreamForecast.Alerts.TrackingSignalRuleOptions()]),
        partitions: 2,
        maxEventTimeAhead: Timeout.InfiniteTimeSpan);

    private void Common()
    {
        _keys = new string[Keys];
        for (int i = 0; i < Keys; i++)
        {
            _keys[i] = $"site-{i % 40}/sensor-{i}";
        }
    }

    private async Task RunAsync(IForecastEngine<string> target)
    {
        // The same code drives both hosts: only the IForecastEngine behind it differs.
        var batch = new Observation<string>[Batch];
        int filled = 0;
        for (int h = 0; h < HoursPerInvoke; h++)
        {
            DateTimeOffset hour = s_t0.AddHours((_round * HoursPerInvoke) + h);
            for (int k = 0; k < Keys; k++)
            {
                batch[filled++] = new Observation<string>(_keys[k], hour.AddMinutes(k % 60), 10 + (k % 17) + ((h + k) % 5));
                if (filled == Batch)
                {
                    await target.PostBatchAsync(batch).ConfigureAwait(false);
                    filled = 0;
                }
            }
        }

        await target.FlushAsync().ConfigureAwait(false);
        _round++;
    }
}
