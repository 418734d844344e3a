using System.Diagnostics.Metrics;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class ForecastEngineBehaviourTests
{
    private static readonly DateTimeOffset s_now = new(2027, 1, 15, 12, 0, 0, TimeSpan.Zero);

    private static ForecastEngineOptions<string> Options(SeriesOptions series, FakeTimeProvider? time = null, int partitions = 2, int? evict = null,
        int queueCapacity = 16_384, IngestionFullMode fullMode = IngestionFullMode.Wait, Action<Observation<string>>? onDropped = null, PublishingOptions? publishing = null) =>
        new(series, partitions: partitions, timeProvider: time ?? new FakeTimeProvider(s_now), evictAfterQuietPeriods: evict,
            queueCapacity: queueCapacity, fullMode: fullMode, onDropped: onDropped,
            publishing: publishing ?? new PublishingOptions(100_000, 100_000));

    private static SeriesOptions Minutes(ForecasterOptions? method = null, GapPolicy gaps = GapPolicy.Zero, LatenessPolicy lateness = default, TimeSpan? idle = null, params DriftRuleOptions[] rules) =>
        new(method ?? new NaiveOptions(), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), lateness, gaps, rules: [.. rules], idleTimeout: idle);

    private static DateTimeOffset Minute(int m, int second = 0) => new DateTimeOffset(2027, 1, 1, 0, 0, 0, TimeSpan.Zero).AddMinutes(m).AddSeconds(second);

    [Fact]
    public async Task Forecasts_DaylightSavingDayInBerlin_SumsTheWholeTwentyThreeHourDay()
    {
        // Europe/Berlin springs forward on 2026-03-29 (EU Directive 2000/84/EC, from memory): that local day has 23 hours.
        TimeZoneInfo berlin = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");
        var series = new SeriesOptions(new NaiveOptions(), PeriodCalendar.Daily(berlin));
        await using var engine = new ForecastEngine<string>(Options(series, new FakeTimeProvider(new DateTimeOffset(2026, 4, 1, 0, 0, 0, TimeSpan.Zero))));
        var recorder = EngineRecorder<string>.Attach(engine);
        var plusOne = TimeSpan.FromHours(1);
        var plusTwo = TimeSpan.FromHours(2);
        await engine.PostAsync(new("bakery/rye", new DateTimeOffset(2026, 3, 28, 12, 0, 0, plusOne), 5));
        await engine.PostAsync(new("bakery/rye", new DateTimeOffset(2026, 3, 29, 0, 30, 0, plusOne), 1));  // before the change
        await engine.PostAsync(new("bakery/rye", new DateTimeOffset(2026, 3, 29, 23, 30, 0, plusTwo), 2)); // after it, same local day
        await engine.PostAsync(new("bakery/rye", new DateTimeOffset(2026, 3, 30, 8, 0, 0, plusTwo), 4));
        await engine.FlushAsync();
        await engine.DisposeAsync();

        var updates = recorder.Forecasts;
        Assert.Equal([5.0, 3.0, 4.0], updates.Select(u => u.Actual));
        ForecastUpdate<string> dstDay = updates[1];
        Assert.Equal(new DateTimeOffset(2026, 3, 29, 0, 0, 0, plusOne), dstDay.PeriodStart);
        Assert.Equal(TimeSpan.FromHours(23), series.Calendar.EndOf(dstDay.Period) - series.Calendar.StartOf(dstDay.Period));
        Assert.Equal(5.0, dstDay.ForecastForPeriod); // naive: yesterday's actual
    }

    [Fact]
    public async Task Forecasts_IsoWeek53Year_ClosesWeek53BetweenWeek52AndNextYearsWeek1()
    {
        // 2026 has 53 ISO weeks (ISO 8601; oracle System.Globalization.ISOWeek.GetWeeksInYear).
        Assert.Equal(53, System.Globalization.ISOWeek.GetWeeksInYear(2026));
        var series = new SeriesOptions(new MovingAverageOptions(2), PeriodCalendar.IsoWeekly(TimeZoneInfo.Utc));
        await using var engine = new ForecastEngine<string>(Options(series));
        var recorder = EngineRecorder<string>.Attach(engine);
        foreach (var (week, qty) in new[] { (52, 10.0), (53, 20.0), (1, 30.0) })
        {
            int year = week == 1 ? 2027 : 2026;
            DateTime monday = System.Globalization.ISOWeek.ToDateTime(year, week, DayOfWeek.Wednesday);
            await engine.PostAsync(new("sensor-7", new DateTimeOffset(monday, TimeSpan.Zero), qty));
        }

        await engine.FlushAsync();
        await engine.DisposeAsync();
        var labels = recorder.Forecasts.Select(u => series.Calendar.LabelOf(u.Period).ToString()).ToList();
        Assert.Equal(["2026-W52", "2026-W53", "2027-W01"], labels);
        Assert.Equal(15.0, recorder.Forecasts[2].ForecastForPeriod); // MA(2) over weeks 52 and 53
    }

    [Fact]
    public async Task IdleTimeout_QuietSeriesWithFakeClock_ClosesItsPeriods()
    {
        var time = new FakeTimeProvider(s_now);
        var series = Minutes(idle: TimeSpan.FromMinutes(5));
        await using var engine = new ForecastEngine<string>(Options(series, time));
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("device-1", Minute(0, 10), 3));
        await engine.PostAsync(new("device-1", Minute(1, 10), 4));
        await Barrier(engine);
        Assert.Equal(1, engine.GetCounters().PeriodsClosed); // minute 0 closed by minute 1's event; minute 1 still open

        time.Advance(TimeSpan.FromMinutes(4)); // not idle long enough
        await Barrier(engine);
        Assert.Equal(1, engine.GetCounters().PeriodsClosed);

        time.Advance(TimeSpan.FromMinutes(2)); // 6 minutes quiet: event time assumed to have moved on by 6 minutes
        await Barrier(engine);
        Assert.Equal(7, engine.GetCounters().PeriodsClosed); // minutes 0..6 (latest event 1:10 + 6 min quiet = 7:10)
        await engine.DisposeAsync();
        var actuals = recorder.Forecasts.Select(u => u.Actual).ToList();
        Assert.Equal(3.0, actuals[0]);
        Assert.Equal(4.0, actuals[1]);
        Assert.Equal(7, actuals.Count);
        Assert.All(actuals.Skip(2), a => Assert.Equal(0.0, a));
    }

    [Fact]
    public async Task Eviction_SeriesQuietForLimit_IsRemovedAndCounted()
    {
        var series = Minutes(gaps: GapPolicy.Missing);
        await using var engine = new ForecastEngine<string>(Options(series, evict: 3));
        await engine.PostAsync(new("device-1", Minute(0), 1));
        await engine.PostAsync(new("device-2", Minute(0), 1));
        await engine.PostAsync(new("device-2", Minute(10), 1));
        await engine.AdvanceAsync(Minute(2)); // device-1: 1 quiet period; device-2: 9 quiet periods closed by its own event
        EngineCounters counters = engine.GetCounters();
        Assert.Equal(1, counters.Evictions);
        Assert.Equal(1, engine.SeriesCount);
        await engine.AdvanceAsync(Minute(5));
        Assert.Equal(2, engine.GetCounters().Evictions);
        Assert.Equal(0, engine.SeriesCount);
    }

    [Fact]
    public async Task Alerts_SustainedShift_RaisesOnceAndClearsOnceAfterAcknowledge()
    {
        var rule = new TrackingSignalRuleOptions(limit: 4, warmUpPeriods: 3);
        var series = Minutes(new MovingAverageOptions(3), rules: rule);
        await using var engine = new ForecastEngine<string>(Options(series));
        var recorder = EngineRecorder<string>.Attach(engine);
        var rng = new Random(5);
        for (int m = 0; m < 40; m++)
        {
            double level = m < 20 ? 100 : 130; // a sudden lasting shift: the forecast runs low
            await engine.PostAsync(new("shop/bun", Minute(m), level + rng.Next(-3, 4)));
        }

        await engine.FlushAsync();
        await engine.AcknowledgeAsync("shop/bun");
        await engine.DisposeAsync();

        var transitions = recorder.Alerts.Select(a => a.Transition).ToList();
        Assert.Equal(DriftTransitionKind.Raised, transitions[0].Kind);
        Assert.Equal(DriftDirection.UnderForecast, transitions[0].Direction);
        Assert.Equal(1, transitions.Count(t => t.Kind == DriftTransitionKind.Raised));
        Assert.True(recorder.Alerts[0].Period >= series.Calendar.PeriodOf(Minute(20)));
        Assert.Equal(1, transitions.Count(t => t.Kind == DriftTransitionKind.Cleared));
        Assert.All(transitions, t => Assert.Equal(transitions[0].EpisodeId, t.EpisodeId));
    }

    [Fact]
    public async Task Forecasts_ThrowingSubscriber_DoesNotStopOtherSubscribers()
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes()));
        var thrower = new ThrowingObserver();
        engine.Forecasts.Subscribe(thrower);
        var recorder = EngineRecorder<string>.Attach(engine);
        for (int m = 0; m < 10; m++)
        {
            await engine.PostAsync(new("shop/loaf", Minute(m), m));
        }

        await engine.FlushAsync();
        await engine.DisposeAsync();
        Assert.Equal(10, recorder.Forecasts.Count);
        Assert.Equal(10, thrower.Calls);
        Assert.Equal(10, recorder.Faults.Count(f => f.Kind == SeriesFaultKind.SubscriberFailed));
        Assert.Equal(10, engine.GetCounters().SubscriberFaults);
        Assert.Equal(1, recorder.Completed > 0 ? 1 : 0);
    }

    [Fact]
    public async Task TryPost_NonFiniteQuantityOrFarFutureTime_ThrowsAndPostsNothing()
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes()));
        Assert.Throws<ArgumentOutOfRangeException>(() => engine.TryPost(new("a", Minute(0), double.NaN)));
        Assert.Throws<ArgumentOutOfRangeException>(() => engine.TryPost(new("a", Minute(0), double.PositiveInfinity)));
        Assert.Throws<ArgumentOutOfRangeException>(() => engine.TryPost(new("a", s_now.AddDays(2), 1)));
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(async () =>
            await engine.PostBatchAsync(new Observation<string>[] { new("a", Minute(0), 1), new("a", Minute(1), double.NaN) }));
        await Barrier(engine);
        Assert.Equal(0, engine.GetCounters().Observations);
        Assert.Equal(0, engine.SeriesCount);
    }

    [Fact]
    public async Task Observe_DuplicateEventIdAndTooLateEvent_AreIgnoredAndCounted()
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes(lateness: new LatenessPolicy(TimeSpan.FromMinutes(1)))));
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("a", Minute(0), 1, "e1"));
        await engine.PostAsync(new("a", Minute(0, 30), 2, "e2"));
        await engine.PostAsync(new("a", Minute(0, 30), 2, "e2")); // redelivered
        await engine.PostAsync(new("a", Minute(5), 4, "e3"));     // closes minutes 0..3
        await engine.PostAsync(new("a", Minute(1), 8, "e4"));     // minute 1 already closed, no restatement: late
        await engine.FlushAsync();
        EngineCounters c = engine.GetCounters();
        Assert.Equal(1, c.Duplicates);
        Assert.Equal(1, c.Late);
        await engine.DisposeAsync();
        Assert.Equal([3.0, 0, 0, 0, 0, 4], recorder.Forecasts.Select(u => u.Actual));
    }

    [Fact]
    public async Task Observe_LateEventInsideRestatementHorizon_RestatesAndRecomputesDeterministically()
    {
        var series = Minutes(new MovingAverageOptions(2), lateness: new LatenessPolicy(TimeSpan.Zero, restatementPeriods: 3));
        await using var engine = new ForecastEngine<string>(Options(series));
        var recorder = EngineRecorder<string>.Attach(engine);
        foreach (var (m, q) in new[] { (0, 10.0), (1, 20.0), (2, 30.0), (3, 40.0), (4, 50.0) })
        {
            await engine.PostAsync(new("a", Minute(m), q));
        }

        await engine.PostAsync(new("a", Minute(2, 30), 6)); // minute 2 closed; inside the 3-period horizon
        await engine.FlushAsync();
        await engine.DisposeAsync();

        var restated = recorder.Forecasts.Where(u => u.IsRestatement).ToList();
        Assert.Equal([2L, 3L], restated.Select(u => u.Period - series.Calendar.PeriodOf(Minute(0))));
        Assert.Equal(36.0, restated[0].Actual);
        Assert.Equal(1, engine.GetCounters().Restated);

        // The result equals feeding the corrected actuals straight into the method.
        var direct = new StreamForecast.Tracking.TrackedForecaster(series.Method, series.Tracking);
        foreach (double y in new[] { 10.0, 20.0, 36.0, 40.0, 50.0 })
        {
            direct.Update(y);
        }

        ForecastUpdate<string> last = recorder.Forecasts[^1];
        Assert.Equal(direct.Forecaster.Forecast(), last.Next.Value);
        Assert.Equal(direct.Tracker.Rsfe, last.Errors.Rsfe);
    }

    [Fact]
    public async Task Observe_NegativeDemandForCroston_PublishesFaultAndSkipsPeriod()
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes(new CrostonOptions())));
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("cake", Minute(0), 2));
        await engine.PostAsync(new("cake", Minute(1), -5)); // a return bigger than the sales: the period sums to −5
        await engine.PostAsync(new("cake", Minute(2), 1));
        await engine.FlushAsync();
        await engine.DisposeAsync();
        Assert.Equal(1, engine.GetCounters().RejectedActuals);
        Assert.Single(recorder.Faults, f => f.Kind == SeriesFaultKind.ActualRejected);
        Assert.Equal([2.0, 1.0], recorder.Forecasts.Select(u => u.Actual));
    }

    [Fact]
    public async Task RestoreAsync_CorruptedOrTruncatedSnapshot_IsRejected()
    {
        var options = Options(Minutes());
        var engine = new ForecastEngine<string>(options);
        for (int m = 0; m < 5; m++)
        {
            await engine.PostAsync(new($"k{m % 2}", Minute(m), m));
        }

        using var snapshot = new MemoryStream();
        await engine.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, inputPosition: 5);
        await engine.DisposeAsync();
        byte[] bytes = snapshot.ToArray();

        byte[] flipped = (byte[])bytes.Clone();
        flipped[bytes.Length / 2] ^= 0x10;
        await Assert.ThrowsAsync<InvalidDataException>(() => ForecastEngine.RestoreAsync(new MemoryStream(flipped), options, SnapshotKeyCodecs.Utf8String));
        await Assert.ThrowsAsync<InvalidDataException>(() => ForecastEngine.RestoreAsync(new MemoryStream(bytes[..^7]), options, SnapshotKeyCodecs.Utf8String));
        await Assert.ThrowsAsync<InvalidDataException>(() =>
            ForecastEngine.RestoreAsync(new MemoryStream(bytes), Options(Minutes(new MovingAverageOptions(4))), SnapshotKeyCodecs.Utf8String));

        var (restored, position) = await ForecastEngine.RestoreAsync(new MemoryStream(bytes), options, SnapshotKeyCodecs.Utf8String);
        Assert.Equal(5, position);
        Assert.Equal(2, restored.SeriesCount);
        await restored.DisposeAsync();
    }

    [Fact]
    public async Task TryPost_FullQueueUnderDropNewest_DropsCountsAndCallsBack()
    {
        // A pull reader that is never read blocks its partition (backpressure); the queue then fills.
        var dropped = new List<Observation<string>>();
        var options = Options(Minutes(), partitions: 1, queueCapacity: 4, fullMode: IngestionFullMode.DropNewest,
            onDropped: o => { lock (dropped) { dropped.Add(o); } }, publishing: new PublishingOptions(100, readerCapacity: 1));
        var engine = new ForecastEngine<string>(options);
        await using var reader = engine.ReadForecastsAsync().GetAsyncEnumerator();
        var started = reader.MoveNextAsync(); // attaches the reader
        int accepted = 0;
        for (int m = 0; m < 50; m++)
        {
            if (engine.TryPost(new("a", Minute(m), m)))
            {
                accepted++;
            }
        }

        Assert.True(dropped.Count > 0);
        Assert.Equal(50, accepted + dropped.Count);
        Assert.Equal(dropped.Count, engine.GetCounters().Dropped);
        Assert.True(await started);
        engine.Complete();
    }

    [Fact]
    public async Task Meter_Instruments_ReportCountersWithoutKeyTags()
    {
        using var listener = new MeterListener();
        var seen = new Dictionary<string, long>();
        var tagged = new List<string>();
        listener.InstrumentPublished = (instrument, l) =>
        {
            if (instrument.Meter.Name == ForecastEngine<string>.MeterName)
            {
                l.EnableMeasurementEvents(instrument);
            }
        };
        ForecastEngine<string>? engine = null;
        listener.SetMeasurementEventCallback<long>((instrument, value, tags, _) =>
        {
            if (!ReferenceEquals(instrument.Meter.Scope, engine))
            {
                return; // another test's engine
            }

            seen[instrument.Name] = value;
            if (tags.Length > 0)
            {
                tagged.Add(instrument.Name);
            }
        });
        listener.Start();
        engine = new ForecastEngine<string>(Options(Minutes()));
        await engine.PostAsync(new("a", Minute(0), 1));
        await engine.PostAsync(new("a", Minute(1), 1));
        await Barrier(engine);
        listener.RecordObservableInstruments();
        await engine.DisposeAsync();
        Assert.Equal(2, seen["streamforecast.observations"]);
        Assert.Equal(1, seen["streamforecast.periods_closed"]);
        Assert.Equal(1, seen["streamforecast.active_series"]);
        Assert.Empty(tagged);
    }

    [Theory]
    [InlineData(GapPolicy.Zero, new[] { 4.0, 0.0, 0.0, 7.0 }, new[] { false, true, true, false })]
    [InlineData(GapPolicy.CarryForward, new[] { 4.0, 4.0, 4.0, 7.0 }, new[] { false, true, true, false })]
    [InlineData(GapPolicy.Missing, new[] { 4.0, 7.0 }, new[] { false, false })]
    public async Task GapPolicy_EmptyPeriods_AreZeroCarriedOrSkipped(GapPolicy gaps, double[] actuals, bool[] imputed)
    {
        await using var engine = new ForecastEngine<string>(Options(Minutes(new NaiveOptions(), gaps)));
        var recorder = EngineRecorder<string>.Attach(engine);
        await engine.PostAsync(new("sensor", Minute(0), 4));
        await engine.PostAsync(new("sensor", Minute(3), 7));
        await engine.FlushAsync();
        await engine.DisposeAsync();
        Assert.Equal(actuals, recorder.Forecasts.Select(u => u.Actual));
        Assert.Equal(imputed, recorder.Forecasts.Select(u => u.IsImputed));
        Assert.Equal(2, engine.GetCounters().GapPeriods);

        // Carried-forward values move the forecaster but are never scored.
        if (gaps == GapPolicy.CarryForward)
        {
            Assert.True(double.IsNaN(recorder.Forecasts[1].Error));
            Assert.Equal(1, recorder.Forecasts[^1].Errors.ScoredPeriods);
            Assert.Equal(3.0, recorder.Forecasts[^1].Error); // 7 − the carried 4
        }
    }

    [Fact]
    public async Task MaxSeries_NewKeyBeyondLimit_IsRejectedAndCounted()
    {
        // One partition: with several, which new keys win the last slots depends on how the partitions interleave.
        var options = new ForecastEngineOptions<string>(Minutes(), partitions: 1, maxSeries: 2, timeProvider: new FakeTimeProvider(s_now));
        await using var engine = new ForecastEngine<string>(options);
        foreach (string key in new[] { "a", "b", "c", "a" })
        {
            await engine.PostAsync(new(key, Minute(0), 1));
        }

        await Barrier(engine);
        Assert.Equal(2, engine.SeriesCount);
        Assert.Equal(1, engine.GetCounters().Rejected);
        Assert.Equal(3, engine.GetCounters().Observations);
    }

    [Fact]
    public async Task PostAsync_CancelledWhileQueueFull_ThrowsAndPostsNothingMore()
    {
        var options = Options(Minutes(), partitions: 1, queueCapacity: 2, publishing: new PublishingOptions(100, readerCapacity: 1));
        var engine = new ForecastEngine<string>(options);
        await using var reader = engine.ReadForecastsAsync().GetAsyncEnumerator();
        var first = reader.MoveNextAsync(); // attaches a reader that takes one update and is never read again

        // Minutes 0..3 close three periods: one update taken by the reader, one buffered, the third blocks the
        // partition for good (backpressure) while it handles minute 3.
        for (int m = 0; m < 4; m++)
        {
            await engine.PostAsync(new("a", Minute(m), m));
        }

        Assert.True(await first);
        var guard = System.Diagnostics.Stopwatch.StartNew();
        while (engine.GetCounters().Observations < 4)
        {
            Assert.True(guard.Elapsed < TimeSpan.FromSeconds(30), "the partition never reached minute 3");
            await Task.Yield();
        }

        Assert.True(engine.TryPost(new("a", Minute(4), 4)));
        Assert.True(engine.TryPost(new("a", Minute(5), 5)));
        Assert.False(engine.TryPost(new("a", Minute(6), 6))); // the queue (2) is full

        using var cancel = new CancellationTokenSource();
        ValueTask pending = engine.PostAsync(new("a", Minute(6), 6), cancel.Token);
        Assert.False(pending.IsCompleted);
        await cancel.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(async () => await pending);
        Assert.Equal(4, engine.GetCounters().Observations);
        engine.Complete();
    }

    [Fact]
    public void Options_InvalidSettings_ThrowWithTheAllowedRange()
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesOptions(new NaiveOptions(), calendar, horizon: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesOptions(new NaiveOptions(), calendar, intervalMultiplier: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesOptions(new NaiveOptions(), calendar, idleTimeout: TimeSpan.Zero));
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesOptions(new NaiveOptions(), calendar, duplicateWindow: -1));
        Assert.Throws<ArgumentNullException>(() => new SeriesOptions(null!, calendar));
        var series = new SeriesOptions(new NaiveOptions(), calendar);
        Assert.Throws<ArgumentOutOfRangeException>(() => new ForecastEngineOptions<string>(series, partitions: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new ForecastEngineOptions<string>(series, queueCapacity: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new ForecastEngineOptions<string>(series, maxSeries: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new ForecastEngineOptions<string>(series, evictAfterQuietPeriods: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new ForecastEngineOptions<string>(series, idleCheckInterval: TimeSpan.FromHours(2)));
        Assert.Equal(Environment.ProcessorCount, new ForecastEngineOptions<string>(series).Partitions);
    }

    [Fact]
    public async Task TryPost_AfterComplete_Throws()
    {
        var engine = new ForecastEngine<string>(Options(Minutes()));
        engine.Complete();
        await engine.Completion;
        Assert.Throws<InvalidOperationException>(() => engine.TryPost(new("a", Minute(0), 1)));
        await Assert.ThrowsAsync<InvalidOperationException>(() => engine.FlushAsync());
    }

    [Fact]
    public async Task Forecasts_CompositeKeyWithComparer_GroupsByEveryPart()
    {
        // Composite keys (shop, item) work through a value-tuple and the default comparer, or any caller comparer.
        var options = new ForecastEngineOptions<(string Shop, string Item)>(Minutes(), partitions: 2, timeProvider: new FakeTimeProvider(s_now));
        await using var engine = new ForecastEngine<(string Shop, string Item)>(options);
        var seen = new List<ForecastUpdate<(string Shop, string Item)>>();
        using var sub = engine.Forecasts.Subscribe(new ListObserver<ForecastUpdate<(string Shop, string Item)>>(seen));
        await engine.PostAsync(new(("harbour", "rye"), Minute(0), 1));
        await engine.PostAsync(new(("harbour", "bun"), Minute(0), 2));
        await engine.PostAsync(new(("mill", "rye"), Minute(0), 3));
        await engine.FlushAsync();
        Assert.Equal(3, engine.SeriesCount);
        await engine.DisposeAsync();
        Assert.Equal(3, seen.Count);
    }

    /// <summary>Waits until every partition has handled everything queued before the call.</summary>
    private static Task Barrier<TKey>(ForecastEngine<TKey> engine)
        where TKey : notnull => engine.AdvanceAsync(DateTimeOffset.MinValue);

    private sealed class ThrowingObserver : IObserver<ForecastUpdate<string>>
    {
        public int Calls;

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value)
        {
            Interlocked.Increment(ref Calls);
            throw new InvalidOperationException("a subscriber with a bug");
        }
    }

    private sealed class ListObserver<T>(List<T> items) : IObserver<T>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error) => throw error;

        public void OnNext(T value)
        {
            lock (items)
            {
                items.Add(value);
            }
        }
    }
}
