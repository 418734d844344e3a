using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// The engine's promises under hostile traffic: a refused or dropped observation changes nothing, a late event does not
/// consume its id, one event closes a bounded number of periods, and every snapshot restores.
/// </summary>
public sealed class EngineTrustTests
{
    private static readonly DateTimeOffset s_clock = new(2027, 6, 1, 0, 0, 0, TimeSpan.Zero);
    private static readonly DateTimeOffset s_start = new(2027, 1, 1, 0, 0, 0, TimeSpan.Zero);

    private static SeriesOptions Minutes(int maxCatchUp = SeriesOptions.DefaultMaxCatchUpPeriods, LatenessPolicy lateness = default) =>
        new(new MovingAverageOptions(3), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), lateness,
            rules: [new TrackingSignalRuleOptions(warmUpPeriods: 3)], maxCatchUpPeriods: maxCatchUp);

    private static ForecastEngineOptions<string> Options(SeriesOptions series, int partitions = 2) =>
        new(series, partitions: partitions, timeProvider: new FakeTimeProvider(s_clock), maxEventTimeAhead: Timeout.InfiniteTimeSpan,
            publishing: new PublishingOptions(1_000_000, 1_000_000));

    [Fact]
    public async Task Post_LateEventDropped_DoesNotConsumeItsEventId()
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes()));
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("oven-1", s_start.AddMinutes(10), 5, "e-1"));
        await engine.PostAsync(new("oven-1", s_start.AddMinutes(1), 7, "e-2"));  // too late: dropped, id not kept
        await engine.PostAsync(new("oven-1", s_start.AddMinutes(10).AddSeconds(30), 7, "e-2")); // in time, same id: taken
        await engine.FlushAsync();
        EngineCounters c = engine.GetCounters();
        await engine.DisposeAsync();

        Assert.Equal(1, c.Late);
        Assert.Equal(0, c.Duplicates);
        Assert.Equal(12.0, Assert.Single(recorder.Forecasts).Actual);
    }

    [Fact]
    public async Task Post_EventYearsAheadOfTheSeries_ClosesAtMostTheCapAndCountsTheSkippedPeriods()
    {
        const int cap = 100;
        await using var engine = new ForecastEngine<string>(Options(Minutes(cap), partitions: 1));
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("till-9", DateTimeOffset.MinValue, 1, "stray"));
        await engine.PostAsync(new("till-9", s_start, 4, "current"));
        await engine.PostAsync(new("till-9", s_start.AddMinutes(1), 6, "next"));
        await engine.FlushAsync();
        EngineCounters c = engine.GetCounters();
        await engine.DisposeAsync();

        long minutesBetween = (long)(s_start - DateTimeOffset.MinValue).TotalMinutes;
        Assert.Equal(cap + 2, c.PeriodsClosed); // the cap, then the two current minutes
        Assert.Equal(minutesBetween - cap, c.SkippedPeriods);
        SeriesFault<string> fault = Assert.Single(recorder.Faults, f => f.Kind == SeriesFaultKind.PeriodsSkipped);
        Assert.Contains("MaxCatchUpPeriods", fault.Message, StringComparison.Ordinal);
        Assert.Equal([4.0, 6.0], recorder.Forecasts.TakeLast(2).Select(f => f.Actual));
    }

    [Fact]
    public async Task Flush_SeriesAtTheCalendarsLastPeriod_ClosesItWithoutAFault()
    {
        var series = new SeriesOptions(new NaiveOptions(), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)));
        await using var engine = new ForecastEngine<string>(Options(series, partitions: 1));
        var recorder = EngineRecorder<string>.Attach(engine);
        DateTimeOffset last = series.Calendar.StartOf(series.Calendar.MaxPeriod);
        await engine.PostAsync(new("probe", last.AddMinutes(-1), 1));
        await engine.PostAsync(new("probe", last, 2));
        await engine.FlushAsync();
        await engine.PostAsync(new("probe", last.AddSeconds(30), 3)); // the last period already closed: late
        await engine.FlushAsync();
        EngineCounters c = engine.GetCounters();
        using var snapshot = new MemoryStream();
        await engine.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, 3);
        await engine.DisposeAsync();
        snapshot.Position = 0;
        var (restored, _) = await ForecastEngine.RestoreAsync(snapshot, Options(series, partitions: 1), SnapshotKeyCodecs.Utf8String);
        await restored.DisposeAsync();

        Assert.Empty(recorder.Faults);
        Assert.Equal([1.0, 2.0], recorder.Forecasts.Select(f => f.Actual));
        Assert.Equal(1, c.Late);
    }

    [Theory]
    [InlineData(1e308)]
    [InlineData(-1.0000001e15)]
    [InlineData(double.NaN)]
    [InlineData(double.NegativeInfinity)]
    public async Task Post_QuantityOutsideTheDomain_IsRefusedAtTheDoor(double quantity)
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes()));
        var ex = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(async () => await engine.PostAsync(new("oven-1", s_start, quantity)));
        Assert.Contains(double.IsFinite(quantity) ? "1e15" : "finite", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Post_PeriodTotalBeyondTheDomain_IsRefusedCountedAndTheSnapshotRestores()
    {
        var options = Options(Minutes());
        await using var engine = new ForecastEngine<string>(options);
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("silo-3", s_start, 1e15, "a"));
        await engine.PostAsync(new("silo-3", s_start.AddSeconds(5), 1e15, "b"));   // 2e15 in one minute: refused
        await engine.PostAsync(new("silo-3", s_start.AddSeconds(10), -5, "b"));    // the refused id is free
        using var snapshot = new MemoryStream();
        await engine.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, 3);
        EngineCounters c = engine.GetCounters();
        await engine.DisposeAsync(); // completes the subscribers, so every fault has been delivered

        Assert.Equal(1, c.Rejected);
        Assert.Contains(recorder.Faults, f => f.Kind == SeriesFaultKind.ObservationRejected && f.Message.Contains("NumericDomain", StringComparison.Ordinal));
        snapshot.Position = 0;
        var (restored, position) = await ForecastEngine.RestoreAsync(snapshot, options, SnapshotKeyCodecs.Utf8String);
        var restoredRecorder = EngineRecorder<string>.Attach(restored);
        await restored.PostAsync(new("silo-3", s_start.AddMinutes(1), 2));
        await restored.FlushAsync();
        await restored.DisposeAsync(); // completes the subscribers, so every output has been delivered
        Assert.Equal(3, position);
        Assert.Equal(1e15 - 5, restoredRecorder.Forecasts[0].Actual);
    }

    /// <summary>
    /// 100,000 observations: normal traffic on 20 keys mixed with refused quantities, far-past events and repeated ids on
    /// those keys, and four keys that get anything (times from year 1 to 9999, extreme totals). Normal keys must publish
    /// exactly what a twin engine fed only their normal traffic publishes; every snapshot taken on the way restores; the
    /// hostile keys close no more periods than the catch-up cap allows.
    /// </summary>
    [Fact]
    public async Task Post_HundredThousandMixedObservations_NormalKeysMatchTwinAndSnapshotsRestore()
    {
        const int posts = 100_000, normalKeys = 20, hostileKeys = 4, cap = 500;
        var series = Minutes(cap, new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 3));
        var options = Options(series);
        await using var engine = new ForecastEngine<string>(options);
        await using var twin = new ForecastEngine<string>(options);
        var recorder = EngineRecorder<string>.Attach(engine);
        var twinRecorder = EngineRecorder<string>.Attach(twin);
        var rng = new Random(20261203);
        var clocks = new DateTimeOffset[normalKeys];
        var sent = new List<Observation<string>>[normalKeys];
        for (int k = 0; k < normalKeys; k++)
        {
            clocks[k] = s_start.AddSeconds(k);
            sent[k] = [];
        }

        DateTimeOffset[] wildTimes = [DateTimeOffset.MinValue, DateTimeOffset.MaxValue, new(1, 1, 1, 0, 0, 0, TimeSpan.Zero), new(9999, 12, 31, 23, 59, 0, TimeSpan.Zero)];
        double[] refusedQuantities = [double.NaN, double.PositiveInfinity, double.NegativeInfinity, 1e308, -2e15, 1.0000001e15];
        int refusedAtDoor = 0, hostileTaken = 0, snapshots = 0;
        for (int i = 0; i < posts; i++)
        {
            int roll = rng.Next(100);
            if (roll < 85)
            {
                int k = rng.Next(normalKeys);
                clocks[k] = clocks[k].AddSeconds(rng.Next(0, 90));
                var o = new Observation<string>($"n{k}", clocks[k], Math.Round(rng.NextDouble() * 50, 2), $"n{k}-{i}");
                sent[k].Add(o);
                await engine.PostAsync(o);
                await twin.PostAsync(o);
            }
            else if (roll < 90)
            {
                int k = rng.Next(normalKeys);
                var o = new Observation<string>($"n{k}", clocks[k], refusedQuantities[rng.Next(refusedQuantities.Length)], $"bad-{i}");
                await Assert.ThrowsAsync<ArgumentOutOfRangeException>(async () => await engine.PostAsync(o));
                refusedAtDoor++;
            }
            else if (roll < 95)
            {
                int k = rng.Next(normalKeys);
                if (sent[k].Count == 0)
                {
                    continue;
                }

                // Far in the past (dropped as late) or a repeat of an id already sent (ignored): neither may change anything.
                await engine.PostAsync(rng.Next(2) == 0
                    ? new Observation<string>($"n{k}", clocks[k].AddDays(-rng.Next(1, 4000)), 7, $"old-{i}")
                    : sent[k][rng.Next(Math.Max(0, sent[k].Count - 5), sent[k].Count)]);
            }
            else
            {
                DateTimeOffset time = rng.Next(3) == 0 ? wildTimes[rng.Next(wildTimes.Length)] : s_start.AddMinutes(rng.Next(-2_000_000, 2_000_000));
                double quantity = rng.Next(4) == 0 ? NumericDomain.MaxMagnitude * (rng.Next(2) == 0 ? 1 : -1) : rng.Next(0, 1000);
                await engine.PostAsync(new Observation<string>($"h{rng.Next(hostileKeys)}", time, quantity, $"h-{rng.Next(50)}"));
                hostileTaken++;
            }

            if (i % 10_000 == 9_999)
            {
                using var snapshot = new MemoryStream();
                await engine.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, i);
                snapshot.Position = 0;
                var (restored, position) = await ForecastEngine.RestoreAsync(snapshot, options, SnapshotKeyCodecs.Utf8String);
                Assert.Equal(i, position);
                await restored.DisposeAsync();
                snapshots++;
            }
        }

        await engine.FlushAsync();
        await twin.FlushAsync();
        EngineCounters counters = engine.GetCounters();
        EngineCounters twinCounters = twin.GetCounters();
        await engine.DisposeAsync();
        await twin.DisposeAsync();

        Assert.Equal(10, snapshots);
        Assert.True(refusedAtDoor > 4_000, $"{refusedAtDoor} refused at the door");
        var byKey = recorder.ForecastsByKey();
        var twinByKey = twinRecorder.ForecastsByKey();
        for (int k = 0; k < normalKeys; k++)
        {
            Assert.Equal(twinByKey[$"n{k}"], byKey[$"n{k}"]);
        }

        for (int k = 0; k < normalKeys; k++)
        {
            // Partitions interleave keys in any order; within a key the order is fixed.
            string key = $"n{k}";
            Assert.Equal(twinRecorder.Alerts.Where(a => a.Key == key).ToList(), recorder.Alerts.Where(a => a.Key == key).ToList());
        }

        // Each hostile event or flush closes at most the cap plus the open-period ring (5 minutes here) for its series.
        long hostileClosed = counters.PeriodsClosed - twinCounters.PeriodsClosed;
        int ring = 5;
        Assert.True(hostileClosed <= (long)(hostileTaken + hostileKeys) * (cap + ring), $"hostile keys closed {hostileClosed} periods for {hostileTaken} events");
        Assert.True(counters.SkippedPeriods > 0);
        Assert.True(counters.Late > 0 && counters.Duplicates > 0 && counters.Rejected > 0, counters.ToString());
    }
}

public sealed class EngineCountersTests
{
    [Fact]
    public void Add_TwoSets_SumsEveryField()
    {
        long[] a = [.. Enumerable.Range(1, 18).Select(i => (long)i)];
        long[] b = [.. Enumerable.Range(1, 18).Select(i => (long)(100 * i))];
        EngineCounters x = Make(a), y = Make(b);
        EngineCounters sum = x + y;
        Assert.Equal(Make([.. a.Zip(b, (p, q) => p + q)]), sum);
        Assert.Equal(sum, x.Add(y));
    }

    [Fact]
    public async Task GetCountersAsync_ThroughTheInterface_MatchesGetCounters()
    {
        var series = new SeriesOptions(new NaiveOptions(), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)));
        await using var engine = new ForecastEngine<string>(new ForecastEngineOptions<string>(series, timeProvider: new FakeTimeProvider(new DateTimeOffset(2027, 1, 2, 0, 0, 0, TimeSpan.Zero))));
        IForecastEngine<string> shared = engine;
        await shared.PostAsync(new("a", new DateTimeOffset(2027, 1, 1, 0, 0, 0, TimeSpan.Zero), 1));
        await shared.PostAsync(new("a", new DateTimeOffset(2027, 1, 1, 0, 1, 0, TimeSpan.Zero), 2));
        await shared.FlushAsync();
        EngineCounters viaInterface = await shared.GetCountersAsync();
        Assert.Equal(engine.GetCounters(), viaInterface);
        Assert.Equal(2, viaInterface.PeriodsClosed);
    }

    private static EngineCounters Make(long[] v) =>
        new(v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7], v[8], v[9], v[10], v[11], v[12], v[13], v[14], v[15], v[16], v[17]);
}

public sealed class MethodSelectorEngineTests
{
    [Fact]
    public async Task Forecasts_SeriesRunningASelector_NameTheCandidateThatMadeEachForecastAndSurviveARestore()
    {
        // An invented sensor: flat, then a ramp the moving average follows better than the naive forecast's noise.
        var selector = new MethodSelectorOptions([new NaiveOptions(), new MovingAverageOptions(4)], errorWeight: 0.3, margin: 0, periodsToSwitch: 1, minScoredPeriods: 2);
        var series = new SeriesOptions(selector, PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)));
        var time = new FakeTimeProvider(new DateTimeOffset(2027, 2, 1, 0, 0, 0, TimeSpan.Zero));
        var options = new ForecastEngineOptions<string>(series, partitions: 1, timeProvider: time, maxEventTimeAhead: Timeout.InfiniteTimeSpan);
        var engine = new ForecastEngine<string>(options);
        var recorder = EngineRecorder<string>.Attach(engine);
        var start = new DateTimeOffset(2027, 1, 1, 0, 0, 0, TimeSpan.Zero);
        var rng = new Random(5);
        for (int m = 0; m < 40; m++)
        {
            await engine.PostAsync(new("press-c", start.AddMinutes(m), 100 + (m % 2 == 0 ? 8 : -8) + rng.Next(3)));
        }

        using var snapshot = new MemoryStream();
        await engine.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, 40);
        await engine.DisposeAsync();
        snapshot.Position = 0;
        var (restored, _) = await ForecastEngine.RestoreAsync(snapshot, options, SnapshotKeyCodecs.Utf8String);
        var after = EngineRecorder<string>.Attach(restored);
        await restored.PostAsync(new("press-c", start.AddMinutes(40), 100));
        await restored.DisposeAsync();

        var labels = recorder.Forecasts.Select(f => f.Method).ToList();
        Assert.Equal("Naive", labels[0]); // the only candidate warm after one actual
        Assert.Contains("MA(4)", labels); // the alternating noise costs the naive forecast: the average takes over
        Assert.All(labels, l => Assert.True(l is "Naive" or "MA(4)", l));
        Assert.Equal(labels[^1], Assert.Single(after.Forecasts).Method);
    }
}
