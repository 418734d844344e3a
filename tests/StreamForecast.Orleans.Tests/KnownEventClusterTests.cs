using System.Collections.Immutable;
using Orleans.Configuration;
using Orleans.TestingHost;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tests.Clusters;

namespace StreamForecast.Orleans.Tests;

/// <summary>
/// Known events on the cluster against the in-process engine as the oracle (invented demo data: hourly sales of a few
/// tills in two shops, with a promotion that doubles one till's sales for six hours). A 3-silo in-process cluster with
/// the shared SQLite grain storage, so a bucket can be made to move by killing its silo.
/// </summary>
public sealed class KnownEventClusterTests : IAsyncLifetime
{
    private static readonly ForecastClusterOptions Cluster = new(bucketCount: 8, retryDelay: TimeSpan.FromMilliseconds(100), maxRetryDelay: TimeSpan.FromSeconds(1), maxAttempts: 60);
    private static readonly DateTimeOffset Start = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
    private const string Promoted = "shop-a/till-1";
    private static readonly string[] Keys = [Promoted, "shop-a/till-2", "shop-b/till-1", "shop-b/till-2"];
    private static readonly KnownEvent<string> Promotion = KnownEvent.ForSeries(Promoted, EventKind.Promotion, Start.AddHours(40), Start.AddHours(46));
    private static readonly KnownEvent<string> ShopBClosed = KnownEvent.ForGroup<string>("shop-b", EventKind.Closure, Start.AddHours(30), Start.AddHours(32));

    private readonly string _directory = Path.Combine(Path.GetTempPath(), "sf-orleans-events-" + Guid.NewGuid().ToString("N"));
    private InProcessTestCluster _cluster = null!;

    public async Task InitializeAsync()
    {
        Directory.CreateDirectory(_directory);
        var builder = new InProcessTestClusterBuilder(3);
        builder.Options.ConfigureFileLogging = false;
        string path = Path.Combine(_directory, "buckets.db");
        builder.ConfigureSilo((_, silo) =>
        {
            silo.AddForecastBuckets(Options(), SnapshotKeyCodecs.Utf8String, Cluster).AddSqliteCheckpointGrainStorage(path);
            FastFailover.Configure(silo); // a killed silo is declared dead within seconds
        });
        FastFailover.ConfigureClient(builder);
        _cluster = builder.Build();
        await _cluster.DeployAsync();
    }

    public async Task DisposeAsync()
    {
        await _cluster.DisposeAsync();
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(_directory, recursive: true);
        }
        catch (IOException)
        {
        }
    }

    [Fact]
    public async Task DeclareEventAsync_PromotionDeclaredOnClusterAndEngine_SameOutputsAndNoAlert()
    {
        List<Observation<string>> input = Sales();

        // Undeclared, the promotion raises a drift alert on the promoted till (checked on the engine, the oracle).
        Run undeclared = await RunEngineAsync(input, []);
        Assert.Contains(undeclared.Alerts, a => a.Key == Promoted && a.Transition.Kind == DriftTransitionKind.Raised);

        // Declared ahead (with a group closure for the other shop, which goes to every bucket), it raises none, on the
        // engine and on the cluster, and the cluster's outputs equal the engine's.
        Run expected = await RunEngineAsync(input, [Promotion, ShopBClosed]);
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var actual = new Run();
        using (client.Forecasts.Subscribe(actual.ForecastSink))
        using (client.Alerts.Subscribe(actual.AlertSink))
        {
            KnownEventReceipt receipt = await client.DeclareEventAsync(Promotion);
            await client.DeclareEventAsync(ShopBClosed);
            Assert.Equal(new KnownEventReceipt(0, 0, 0), receipt); // declared before its series exists
            await client.PostBatchAsync(input.ToArray());
            await client.FlushAsync();
            actual.Lift = await client.GetEventLiftAsync();
            await WaitUntilAsync(() => actual.Count >= expected.Count);
        }

        Assert.DoesNotContain(expected.Alerts, a => a.Key == Promoted && a.Transition.Kind == DriftTransitionKind.Raised);
        AssertSame(expected, actual);
        Assert.Equal(6, actual.Lift.Single(l => l.Kind == EventKind.Promotion).Periods);
        Assert.Contains(actual.Forecasts.Values.SelectMany(f => f), u => u.Key == "shop-b/till-2" && u.Event == EventKind.Closure);
    }

    [Fact]
    public async Task DeclareEventAsync_BucketMovesAfterDeclaration_EventKeptAndOutputsEqualEngine()
    {
        List<Observation<string>> input = Sales();
        Run expected = await RunEngineAsync(input, [Promotion, ShopBClosed]);

        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var actual = new Run();
        using (client.Forecasts.Subscribe(actual.ForecastSink))
        using (client.Alerts.Subscribe(actual.AlertSink))
        {
            await client.DeclareEventAsync(Promotion);
            await client.DeclareEventAsync(ShopBClosed);
            int cut = input.FindIndex(o => o.Timestamp >= Start.AddHours(20));
            await client.PostBatchAsync(input.GetRange(0, cut).ToArray());

            // The silo holding the promoted till's bucket dies: the bucket comes back elsewhere from its stored state,
            // which must hold the declared events (nothing declares them again).
            BucketStatus before = await client.Bucket(client.BucketOf(Promoted)).GetStatusAsync();
            InProcessSiloHandle victim = _cluster.Silos.Single(s => s.SiloAddress.ToString() == before.Silo);
            await _cluster.KillSiloAsync(victim);

            await client.PostBatchAsync(input.GetRange(cut, input.Count - cut).ToArray());
            await client.FlushAsync();
            BucketStatus after = await client.Bucket(client.BucketOf(Promoted)).GetStatusAsync();
            Assert.NotEqual(before.Silo, after.Silo);
            actual.Lift = await client.GetEventLiftAsync();
            await WaitUntilAsync(() => actual.Count >= expected.Count);
        }

        AssertSame(expected, actual);
        Assert.DoesNotContain(actual.Alerts, a => a.Key == Promoted && a.Transition.Kind == DriftTransitionKind.Raised);
    }

    [Fact]
    public async Task WithdrawEventAsync_LateDeclarationThenWithdrawal_RestatesAsEngine()
    {
        // Declared after the fact (inside the restatement horizon of 2 periods), then withdrawn: the restatements and
        // receipts equal the engine's.
        List<Observation<string>> input = Sales().Where(o => o.Timestamp < Start.AddHours(43)).ToList();
        KnownEvent<string> late = KnownEvent.ForSeries(Promoted, EventKind.Promotion, Start.AddHours(40), Start.AddHours(42));

        var expected = new Run();
        var engine = new ForecastEngine<string>(Options());
        (KnownEventReceipt Declared, KnownEventReceipt Withdrawn) engineReceipts;
        using (engine.Forecasts.Subscribe(expected.ForecastSink))
        using (engine.Alerts.Subscribe(expected.AlertSink))
        {
            await engine.PostBatchAsync(input.ToArray());
            await engine.AdvanceAsync(Start.AddHours(43));
            engineReceipts = (await engine.DeclareEventAsync(late), await engine.WithdrawEventAsync(late));
            expected.Lift = await engine.GetEventLiftAsync();
            await engine.DisposeAsync();
        }

        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var actual = new Run();
        (KnownEventReceipt Declared, KnownEventReceipt Withdrawn) clusterReceipts;
        using (client.Forecasts.Subscribe(actual.ForecastSink))
        using (client.Alerts.Subscribe(actual.AlertSink))
        {
            await client.PostBatchAsync(input.ToArray());
            await client.AdvanceAsync(Start.AddHours(43));
            clusterReceipts = (await client.DeclareEventAsync(late), await client.WithdrawEventAsync(late));
            actual.Lift = await client.GetEventLiftAsync();
            await WaitUntilAsync(() => actual.Count >= expected.Count);
        }

        Assert.Equal(1, engineReceipts.Declared.SeriesAffected);
        Assert.True(engineReceipts.Declared.PeriodsRestated > 0);
        Assert.Equal(engineReceipts, clusterReceipts);
        Assert.Contains(actual.Forecasts[Promoted], u => u.IsRestatement && u.Event == EventKind.Promotion);
        AssertSame(expected, actual);
    }

    [Fact]
    public async Task DeclareEventAsync_SeriesEventSentToAnotherBucket_GrainRefusesIt()
    {
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        ISeriesBucketGrain<string> wrong = client.Bucket((client.BucketOf(Promoted) + 1) % Cluster.BucketCount);
        BucketStatus before = await wrong.GetStatusAsync();

        ArgumentException error = await Assert.ThrowsAnyAsync<ArgumentException>(() => wrong.DeclareEventAsync(Guid.NewGuid(), Promotion));

        Assert.Contains("BucketCount", error.Message, StringComparison.Ordinal);
        Assert.Equal(before.Sequence, (await wrong.GetStatusAsync()).Sequence);
    }

    /// <summary>Hourly calendar, a moving average of 4 with the tracking-signal and CUSUM rules; groups by the shop before '/'.</summary>
    private static ForecastEngineOptions<string> Options() => new(
        new SeriesOptions(
            new MovingAverageOptions(4),
            PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)),
            lateness: new LatenessPolicy(TimeSpan.FromMinutes(90), restatementPeriods: 2),
            rules: ImmutableArray.Create<DriftRuleOptions>(new TrackingSignalRuleOptions(), new CusumRuleOptions())),
        partitions: 2,
        events: new EventCalendar<string>([], EventGroups.ByKeyPrefix('/')));

    /// <summary>60 hours of sales per till around a steady level with a small repeating wiggle; the promoted till sells 2.2 times as much in hours 40 to 45.</summary>
    private static List<Observation<string>> Sales()
    {
        var sales = new List<Observation<string>>();
        for (int h = 0; h < 60; h++)
        {
            for (int k = 0; k < Keys.Length; k++)
            {
                double level = 20 + (3 * k) + ((h * 7 + k) % 5) - 2;
                if (Keys[k] == Promoted && h is >= 40 and < 46)
                {
                    level *= 2.2;
                }

                sales.Add(new Observation<string>(Keys[k], Start.AddHours(h).AddMinutes(10 + k), level));
            }
        }

        return sales;
    }

    private static async Task<Run> RunEngineAsync(List<Observation<string>> input, KnownEvent<string>[] events)
    {
        var run = new Run();
        var engine = new ForecastEngine<string>(Options());
        using (engine.Forecasts.Subscribe(run.ForecastSink))
        using (engine.Alerts.Subscribe(run.AlertSink))
        {
            foreach (KnownEvent<string> e in events)
            {
                await engine.DeclareEventAsync(e);
            }

            await engine.PostBatchAsync(input.ToArray());
            await engine.FlushAsync();
            run.Lift = await engine.GetEventLiftAsync();
            await engine.DisposeAsync();
        }

        return run;
    }

    private static void AssertSame(Run expected, Run actual)
    {
        Assert.Equal(expected.Forecasts.Keys.Order(StringComparer.Ordinal), actual.Forecasts.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<ForecastUpdate<string>> updates) in expected.Forecasts)
        {
            Assert.Equal(updates, actual.Forecasts[key]);
        }

        Assert.Equal(expected.Alerts.Count, actual.Alerts.Count);
        foreach (string key in Keys)
        {
            Assert.Equal(expected.Alerts.Where(a => a.Key == key), actual.Alerts.Where(a => a.Key == key));
        }

        Assert.Equal(expected.Lift, actual.Lift);
    }

    private static async Task WaitUntilAsync(Func<bool> condition)
    {
        // Output is sent one-way after each acknowledgement, so the last of it may still be on the wire.
        for (int i = 0; i < 200 && !condition(); i++)
        {
            await Task.Delay(25);
        }
    }

    /// <summary>What one run published: forecast updates per key in arrival order, alert transitions, and the lift read at the end.</summary>
    private sealed class Run
    {
        private int _count;

        public Run()
        {
            Forecasts = new Dictionary<string, List<ForecastUpdate<string>>>(StringComparer.Ordinal);
            ForecastSink = new Sink<ForecastUpdate<string>>(this, u => { Add(Forecasts, u.Key, u); });
            AlertSink = new Sink<DriftAlert<string>>(this, a => Alerts.Add(a));
        }

        public Dictionary<string, List<ForecastUpdate<string>>> Forecasts { get; }

        public List<DriftAlert<string>> Alerts { get; } = [];

        public IReadOnlyList<EventLift> Lift { get; set; } = [];

        public IObserver<ForecastUpdate<string>> ForecastSink { get; }

        public IObserver<DriftAlert<string>> AlertSink { get; }

        public int Count => Volatile.Read(ref _count);

        private static void Add(Dictionary<string, List<ForecastUpdate<string>>> byKey, string key, ForecastUpdate<string> u)
        {
            if (!byKey.TryGetValue(key, out List<ForecastUpdate<string>>? list))
            {
                byKey[key] = list = [];
            }

            list.Add(u);
        }

        private sealed class Sink<T>(Run owner, Action<T> add) : IObserver<T>
        {
            public void OnCompleted()
            {
            }

            public void OnError(Exception error)
            {
            }

            public void OnNext(T value)
            {
                lock (owner)
                {
                    add(value);
                    owner._count++;
                }
            }
        }
    }
}
