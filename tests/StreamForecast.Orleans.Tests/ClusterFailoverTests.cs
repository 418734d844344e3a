using Microsoft.Extensions.DependencyInjection;
using Orleans.Configuration;
using Orleans.Serialization;
using Orleans.TestingHost;
using Xunit.Abstractions;
using StreamForecast.Streaming;
using StreamForecast.Tests.Clusters;

namespace StreamForecast.Orleans.Tests;

/// <summary>
/// A 3-silo in-process cluster (loopback) with the shared SQLite grain storage, against the single-process engine on
/// the same input as the oracle.
/// </summary>
public sealed class ClusterFailoverTests : IAsyncLifetime
{
    private static readonly ForecastClusterOptions Cluster = new(bucketCount: 12, retryDelay: TimeSpan.FromMilliseconds(100), maxRetryDelay: TimeSpan.FromSeconds(1), maxAttempts: 60);

    private readonly ITestOutputHelper _output;
    private readonly string _directory = Path.Combine(Path.GetTempPath(), "sf-orleans-" + Guid.NewGuid().ToString("N"));
    private InProcessTestCluster _cluster = null!;

    public ClusterFailoverTests(ITestOutputHelper output) => _output = output;

    private string DatabasePath => Path.Combine(_directory, "buckets.db");

    public async Task InitializeAsync()
    {
        Directory.CreateDirectory(_directory);
        var builder = new InProcessTestClusterBuilder(3);
        builder.Options.ConfigureFileLogging = false; // no log files in the working directory
        string path = DatabasePath;
        builder.ConfigureSilo((_, silo) =>
        {
            silo.AddForecastBuckets(ClusterScenario.EngineOptions(), SnapshotKeyCodecs.Utf8String, Cluster)
                .AddSqliteCheckpointGrainStorage(path);
            FastFailover.Configure(silo); // a killed silo is declared dead within seconds
        });
        FastFailover.ConfigureClient(builder);
        _cluster = builder.Build();
        await _cluster.DeployAsync();
    }

    public async Task DisposeAsync()
    {
        await _cluster.DisposeAsync();
        SqliteCleanup();
    }

    [Fact]
    public async Task PostBatchAsync_SiloHostingBusiestBucketKilledMidStream_FinalStateAndForecastsEqualSingleProcessEngine()
    {
        List<Observation<string>> input = ClusterScenario.Stream(keys: 150, hours: 30, seed: 2026);

        // Oracle: the in-process engine on the same input, in the same order.
        ForecastEngineOptions<string> options = ClusterScenario.EngineOptions();
        var expected = new Recorder();
        byte[] expectedSnapshot;
        EngineCounters expectedCounters;
        var engine = new ForecastEngine<string>(options);
        using (engine.Forecasts.Subscribe(expected.Forecasts))
        using (engine.Alerts.Subscribe(expected.Alerts))
        {
            await engine.PostBatchAsync(input.ToArray());
            await engine.FlushAsync();
            using var buffer = new MemoryStream();
            await engine.SnapshotAsync(buffer, SnapshotKeyCodecs.Utf8String, input.Count);
            expectedSnapshot = buffer.ToArray();
            expectedCounters = engine.GetCounters();
            await engine.DisposeAsync(); // completes after every subscriber has been handed everything
        }

        // The cluster: the same input in batches of 250; a silo dies after 40 % of them.
        var actual = new Recorder();
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        using IDisposable clusterForecasts = client.Forecasts.Subscribe(actual.Forecasts);
        using IDisposable clusterAlerts = client.Alerts.Subscribe(actual.Alerts);
        Observation<string>[][] batches = input.Chunk(250).ToArray();
        int killAt = batches.Length * 2 / 5;
        string killed = "";
        for (int i = 0; i < batches.Length; i++)
        {
            if (i == killAt)
            {
                // The busiest key is sensor-0; kill the silo its bucket lives on (no graceful shutdown) while a batch is in flight.
                BucketStatus status = await client.Bucket(client.BucketOf("site-0/sensor-0")).GetStatusAsync();
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
        BucketStatus after = await client.Bucket(client.BucketOf("site-0/sensor-0")).GetStatusAsync();
        _output.WriteLine($"{input.Count} observations in {batches.Length} batches; killed {killed}, busiest bucket now on {after.Silo}; client retries {client.Retries}, missed outputs {client.MissedOutputs}, repeated outputs {client.RepeatedOutputs}");

        // The busiest bucket did move, and nothing acknowledged was lost or counted twice.
        Assert.NotEqual(killed, after.Silo);
        Assert.Equal(expectedCounters.Observations, actualCounters.Observations);
        Assert.Equal(expectedCounters.Duplicates, actualCounters.Duplicates);
        Assert.Equal(expectedCounters.PeriodsClosed, actualCounters.PeriodsClosed);
        Assert.Equal(expectedCounters.Restated, actualCounters.Restated);
        Assert.Equal(expectedCounters.Late, actualCounters.Late);
        Assert.Equal(expectedCounters.AlertsRaised, actualCounters.AlertsRaised);

        // Every series' stored state is bit-identical to the engine's.
        Serializer serializer = _cluster.Client.ServiceProvider.GetRequiredService<Serializer>();
        Dictionary<string, byte[]> expectedStates = ClusterScenario.StatesOfSnapshot(expectedSnapshot, options);
        Dictionary<string, byte[]> actualStates = ClusterScenario.StatesOfStore(DatabasePath, serializer, options);
        Assert.Equal(expectedStates.Keys.Order(StringComparer.Ordinal), actualStates.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, byte[] bytes) in expectedStates)
        {
            Assert.True(bytes.AsSpan().SequenceEqual(actualStates[key]), $"series {key} differs from the single-process engine");
        }

        // Every forecast update and every alert transition reached the subscriber once, in per-key order, equal to the
        // engine's: the output of the last call each bucket stored before the kill is sent again by its new activation
        // and the repeat is dropped by number.
        Assert.Equal(0, client.MissedOutputs);
        await WaitUntilAsync(() => actual.Count >= expected.Count);
        Assert.Equal(expected.ForecastsByKey.Keys.Order(StringComparer.Ordinal), actual.ForecastsByKey.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<ForecastUpdate<string>> updates) in expected.ForecastsByKey)
        {
            Assert.Equal(updates, actual.ForecastsByKey[key]);
        }

        Assert.NotEmpty(expected.AlertsByKey);
        Assert.Equal(expected.AlertsByKey.Keys.Order(StringComparer.Ordinal), actual.AlertsByKey.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<DriftAlert<string>> alerts) in expected.AlertsByKey)
        {
            Assert.Equal(alerts, actual.AlertsByKey[key]);
        }
    }

    private static async Task WaitUntilAsync(Func<bool> condition)
    {
        // Output is sent one-way after each acknowledgement, so the last of it may still be on the wire.
        for (int i = 0; i < 200 && !condition(); i++)
        {
            await Task.Delay(25);
        }
    }

    [Fact]
    public async Task IForecastEngine_SameDriverOnEngineAndCluster_SameForecastsAndAlerts()
    {
        // One driver written against IForecastEngine<TKey>: single posts, batches, an explicit watermark, an
        // acknowledgement of a drifting series, and the final flush. Only the host behind the interface changes.
        List<Observation<string>> input = ClusterScenario.Stream(keys: 30, hours: 24, seed: 99);
        var expected = new Recorder();
        IForecastEngine<string> engine = new ForecastEngine<string>(ClusterScenario.EngineOptions());
        using (engine.Forecasts.Subscribe(expected.Forecasts))
        using (engine.Alerts.Subscribe(expected.Alerts))
        {
            await DriveAsync(engine, input);
            await engine.DisposeAsync(); // completes after every subscriber has been handed everything
        }

        var actual = new Recorder();
        IForecastEngine<string> cluster = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        using (cluster.Forecasts.Subscribe(actual.Forecasts))
        using (cluster.Alerts.Subscribe(actual.Alerts))
        {
            await DriveAsync(cluster, input);
            await WaitUntilAsync(() => actual.Count >= expected.Count);
            await cluster.DisposeAsync();
        }

        Assert.Contains(expected.AlertsByKey.Values.SelectMany(a => a), a => a.Transition.Reason == StreamForecast.Alerts.DriftCloseReason.Rebaselined);
        Assert.Equal(expected.ForecastsByKey.Keys.Order(StringComparer.Ordinal), actual.ForecastsByKey.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<ForecastUpdate<string>> updates) in expected.ForecastsByKey)
        {
            Assert.Equal(updates, actual.ForecastsByKey[key]);
        }

        Assert.Equal(expected.AlertsByKey.Keys.Order(StringComparer.Ordinal), actual.AlertsByKey.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<DriftAlert<string>> alerts) in expected.AlertsByKey)
        {
            Assert.Equal(alerts, actual.AlertsByKey[key]);
        }
    }

    private static async Task DriveAsync(IForecastEngine<string> host, List<Observation<string>> input)
    {
        int cut = input.FindIndex(o => o.Timestamp >= ClusterScenario.Start.AddHours(16));
        for (int i = 0; i < 40; i++)
        {
            await host.PostAsync(input[i]);
        }

        await host.PostBatchAsync(input.GetRange(40, cut - 40).ToArray());
        await host.AdvanceAsync(ClusterScenario.Start.AddHours(15));

        // A person looked at the sensors whose level shifted (every fifth, from hour 13 on; see ClusterScenario).
        for (int k = 0; k < 30; k += 5)
        {
            await host.AcknowledgeAsync($"site-{k % 7}/sensor-{k}");
        }

        await host.PostBatchAsync(input.GetRange(cut, input.Count - cut).ToArray());
        await host.FlushAsync();
    }

    [Fact]
    public async Task PostAsync_SameCallIdSentTwice_AppliedOnceAndSecondReceiptIsRepeat()
    {
        ForecastEngineOptions<string> options = ClusterScenario.EngineOptions();
        List<Observation<string>> input = ClusterScenario.Stream(keys: 8, hours: 6, seed: 7);
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        int bucket = client.BucketOf("site-3/sensor-3");
        Observation<string>[] batch = input.Where(o => client.BucketOf(o.Key) == bucket).ToArray();
        ISeriesBucketGrain<string> grain = client.Bucket(bucket);
        Guid id = Guid.NewGuid();

        CallReceipt first = await grain.PostAsync(id, batch);
        BucketStatus afterFirst = await grain.GetStatusAsync();
        CallReceipt retry = await grain.PostAsync(id, batch);
        BucketStatus afterRetry = await grain.GetStatusAsync();

        Assert.False(first.Repeat);
        Assert.True(first.Observations > 0);
        Assert.True(retry.Repeat);
        Assert.Equal(first.Sequence, retry.Sequence);
        Assert.Equal(0, retry.Observations);
        Assert.Equal(afterFirst.Counters, afterRetry.Counters);
        Assert.Equal(afterFirst.Sequence, afterRetry.Sequence);
        Assert.Equal(afterFirst.Repeats + 1, afterRetry.Repeats);

        // And the state equals an engine that saw the batch once.
        await using var engine = new ForecastEngine<string>(options);
        await engine.PostBatchAsync(batch);
        using var buffer = new MemoryStream();
        await engine.SnapshotAsync(buffer, SnapshotKeyCodecs.Utf8String, 0);
        await engine.FlushAsync();
        Assert.Equal(engine.GetCounters().Observations, afterRetry.Counters.Observations);
        Serializer serializer = _cluster.Client.ServiceProvider.GetRequiredService<Serializer>();
        Dictionary<string, byte[]> expected = ClusterScenario.StatesOfSnapshot(buffer.ToArray(), options);
        Dictionary<string, byte[]> actual = ClusterScenario.StatesOfStore(DatabasePath, serializer, options);
        foreach ((string key, byte[] bytes) in expected)
        {
            Assert.True(bytes.AsSpan().SequenceEqual(actual[key]), $"series {key} differs");
        }
    }

    [Fact]
    public async Task PostAsync_KeyOfAnotherBucket_ThrowsAndAppliesNothing()
    {
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        int home = client.BucketOf("site-1/sensor-1");
        ISeriesBucketGrain<string> wrong = client.Bucket((home + 1) % Cluster.BucketCount);
        BucketStatus before = await wrong.GetStatusAsync();

        var batch = new[] { new Observation<string>("site-1/sensor-1", ClusterScenario.Start, 5) };
        ArgumentException error = await Assert.ThrowsAnyAsync<ArgumentException>(() => wrong.PostAsync(Guid.NewGuid(), batch));

        Assert.Contains("BucketCount", error.Message, StringComparison.Ordinal);
        BucketStatus after = await wrong.GetStatusAsync();
        Assert.Equal(before.Sequence, after.Sequence);
        Assert.Equal(before.Counters, after.Counters);
    }

    [Fact]
    public async Task PostBatchAsync_NonFiniteQuantity_ThrowsBeforeSendingAnything()
    {
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var batch = new[]
        {
            new Observation<string>("site-2/sensor-2", ClusterScenario.Start, 5),
            new Observation<string>("site-4/sensor-4", ClusterScenario.Start, double.NaN),
        };

        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => client.PostBatchAsync(batch).AsTask());

        EngineCounters counters = await client.GetCountersAsync();
        Assert.Equal(0, counters.Observations);
        Assert.Equal(0, counters.ActiveSeries);
    }

    [Fact]
    public async Task PostBatchAsync_EventTooFarAheadWithEngineOptions_ThrowsBeforeSendingAnything()
    {
        ForecastEngineOptions<string> options = ClusterScenario.EngineOptions();
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String, options);
        var batch = new[]
        {
            new Observation<string>("site-2/sensor-2", ClusterScenario.Start, 5),
            new Observation<string>("site-4/sensor-4", DateTimeOffset.UtcNow + options.MaxEventTimeAhead + TimeSpan.FromHours(1), 5),
        };

        ArgumentOutOfRangeException error = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => client.PostBatchAsync(batch).AsTask());

        Assert.Contains("MaxEventTimeAhead", error.Message, StringComparison.Ordinal);
        EngineCounters counters = await client.GetCountersAsync();
        Assert.Equal(0, counters.Observations);
    }

    [Fact]
    public async Task PostAsync_EventTooFarAheadWithoutEngineOptions_BucketRefusesIt()
    {
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var observation = new Observation<string>("site-4/sensor-4", DateTimeOffset.UtcNow + TimeSpan.FromDays(3), 5);

        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => client.PostAsync(observation).AsTask());

        BucketStatus status = await client.Bucket(client.BucketOf(observation.Key)).GetStatusAsync();
        Assert.Equal(0, status.Series);
        Assert.Equal(0, status.Sequence);
    }

    [Fact]
    public async Task DeclareEventAsync_GroupEventWithoutGroupFunction_ThrowsAndNoBucketAppliesIt()
    {
        // The silos' engine options give no EventCalendar, so no bucket can tell which series are in a group.
        await using ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(_cluster.Client, Cluster, SnapshotKeyCodecs.Utf8String);
        var closure = KnownEvent.ForGroup<string>("site-1", EventKind.Closure, ClusterScenario.Start, ClusterScenario.Start.AddHours(2));
        long[] before = await Task.WhenAll(Enumerable.Range(0, Cluster.BucketCount).Select(async b => (await client.Bucket(b).GetStatusAsync()).Sequence));

        ArgumentException error = await Assert.ThrowsAnyAsync<ArgumentException>(() => client.DeclareEventAsync(closure));

        Assert.Contains("group function", error.Message, StringComparison.Ordinal);
        long[] after = await Task.WhenAll(Enumerable.Range(0, Cluster.BucketCount).Select(async b => (await client.Bucket(b).GetStatusAsync()).Sequence));
        Assert.Equal(before, after);
        Assert.Equal(0, client.Retries);
    }

    private void SqliteCleanup()
    {
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(_directory, recursive: true);
        }
        catch (IOException)
        {
        }
    }

    /// <summary>Records every forecast update and alert transition by key, in arrival order.</summary>
    private sealed class Recorder
    {
        private int _count;

        public Recorder()
        {
            Forecasts = new Sink<ForecastUpdate<string>>(this, u => u.Key, ForecastsByKey);
            Alerts = new Sink<DriftAlert<string>>(this, a => a.Key, AlertsByKey);
        }

        public Dictionary<string, List<ForecastUpdate<string>>> ForecastsByKey { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, List<DriftAlert<string>>> AlertsByKey { get; } = new(StringComparer.Ordinal);

        public IObserver<ForecastUpdate<string>> Forecasts { get; }

        public IObserver<DriftAlert<string>> Alerts { get; }

        public int Count => Volatile.Read(ref _count);

        private sealed class Sink<T>(Recorder owner, Func<T, string> keyOf, Dictionary<string, List<T>> byKey) : IObserver<T>
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
                    string key = keyOf(value);
                    if (!byKey.TryGetValue(key, out List<T>? list))
                    {
                        byKey[key] = list = [];
                    }

                    list.Add(value);
                    owner._count++;
                }
            }
        }
    }
}
