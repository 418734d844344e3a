using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class SeriesStateTests
{
    private sealed class CountingOutput : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public double Sink;

        public void Alert(in DriftAlert<string> alert) => Sink += 1;

        public void Fault(in SeriesFault<string> fault)
        {
        }

        public void Forecast(in ForecastUpdate<string> update) => Sink += double.IsFinite(update.Next.Value) ? update.Next.Value : 0;
    }

    private sealed class ListOutput : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public void Alert(in DriftAlert<string> alert)
        {
        }

        public void Fault(in SeriesFault<string> fault)
        {
        }

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);
    }

    private static readonly DateTimeOffset s_start = new(2027, 1, 1, 0, 0, 0, TimeSpan.Zero);

    [Fact]
    public void Observe_ManyUniqueEventIds_RemembersOnlyThoseOfOpenOrRestatablePeriods()
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        var options = new SeriesOptions(new NaiveOptions(), calendar, new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 1), duplicateWindow: 100_000);
        var state = new SeriesState<string>("sensor", options, 0);
        var output = new ListOutput();
        for (int i = 0; i < 10_000; i++)
        {
            DateTimeOffset t = s_start.AddSeconds(20 * i); // three events a minute
            state.Observe(t, calendar.PeriodOf(t), 1, $"msg-{i}", 0, output);
        }

        // Open: up to 4 minutes (2 minutes of lateness, the current one, one partly passed); restatable: 1 more.
        Assert.InRange(state.RememberedIds, 1, 3 * 6);

        // A repeat of a recent event is still recognised; a repeat of an old one is simply late.
        DateTimeOffset recent = s_start.AddSeconds(20 * 9_999);
        state.Observe(recent, calendar.PeriodOf(recent), 1, "msg-9999", 0, output);
        Assert.Equal(1, output.Counters.Duplicates);
        state.Observe(s_start, calendar.PeriodOf(s_start), 1, "msg-0", 0, output);
        Assert.Equal(1, output.Counters.Late);
    }

    [Fact]
    public void OpenCapacity_DailyCalendarWithDaylightSaving_CoversTheLatenessWindow()
    {
        // A 23-hour day is shorter than nominal: the ring must still hold every open period.
        var berlin = PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin"));
        Assert.True(SeriesState<string>.OpenCapacity(berlin, TimeSpan.FromDays(3)) >= 5);
        Assert.Equal(2, SeriesState<string>.OpenCapacity(PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), TimeSpan.Zero));
    }

    [Fact]
    public void Observe_SteadyStateWithRulesAndZonedDays_DoesNotAllocate()
    {
        // The engine's per-observation work on the owner loop: bucketing, closing periods, the full forecast step,
        // drift rules, building the published update. (Publishing itself is measured in PublisherTests.)
        var calendar = PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin"));
        var options = new SeriesOptions(
            new MovingAverageOptions(12), calendar, new LatenessPolicy(TimeSpan.FromHours(6), restatementPeriods: 2),
            rules: [new TrackingSignalRuleOptions(), new CusumRuleOptions()], horizon: 7);
        var state = new SeriesState<string>("harbour/rye", options, 0);
        var output = new CountingOutput();
        var rng = new Random(3);
        DateTimeOffset t = s_start;
        void Run(int events)
        {
            for (int i = 0; i < events; i++)
            {
                t = t.AddHours(4);
                state.Observe(t, calendar.PeriodOf(t), 10 + rng.Next(5), null, 0, output);
            }
        }

        Run(2_000);
        Infrastructure.Allocations.AssertNone(() =>
        {
            Run(6_000);
            return output.Sink;
        });
        Assert.True(output.Counters.PeriodsClosed > 1_000);
    }

    [Fact]
    public void Constructor_NoLateness_HoldsTheOpenPeriodsInline()
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        var state = new SeriesState<string>("a", new SeriesOptions(new NaiveOptions(), calendar), 0);

        Assert.False(state.OpenPeriodsSpilled);
        Assert.Equal(SeriesState<string>.InlineOpenPeriods, state.OpenPeriodCapacity);
    }

    [Fact]
    public void Constructor_LatenessOfSeveralPeriods_HoldsTheOpenPeriodsInAnArray()
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        var state = new SeriesState<string>("a", new SeriesOptions(new NaiveOptions(), calendar, new LatenessPolicy(TimeSpan.FromMinutes(3))), 0);

        Assert.True(state.OpenPeriodsSpilled);
        Assert.Equal(SeriesState<string>.OpenCapacity(calendar, TimeSpan.FromMinutes(3)), state.OpenPeriodCapacity);
    }

    // Inline ring (no lateness, events in time order) and array ring (3 minutes of lateness, events up to 3 minutes out
    // of order): both must close every period with the plain sum of its events, computed here by a separate batch pass.
    [Theory]
    [InlineData(0, 0)]
    [InlineData(3, 170)]
    public void CloseAll_EventsInsideTheLateness_ClosesEveryPeriodWithTheBatchSumOfItsEvents(int latenessMinutes, int maxJitterSeconds)
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        var options = new SeriesOptions(new NaiveOptions(), calendar, new LatenessPolicy(TimeSpan.FromMinutes(latenessMinutes)), gaps: GapPolicy.Zero);
        var state = new SeriesState<string>("a", options, 0);
        var output = new ListOutput();
        var rng = new Random(17);
        var events = new List<(DateTimeOffset Time, double Quantity)>();
        for (int i = 0; i < 600; i++)
        {
            // Arrival i happens at 25 s · i; its event time is up to maxJitterSeconds earlier (never before the start).
            DateTimeOffset arrival = s_start.AddSeconds(25 * i);
            DateTimeOffset t = arrival.AddSeconds(-rng.Next(0, maxJitterSeconds + 1));
            events.Add((t < s_start ? s_start : t, Math.Round(rng.NextDouble() * 10, 2)));
        }

        // The events arrive in arrival order but their times are out of order by less than the lateness, so none is late.
        foreach ((DateTimeOffset time, double quantity) in events)
        {
            state.Observe(time, calendar.PeriodOf(time), quantity, null, 0, output);
        }

        state.CloseAll(output);

        // Plain batch bucketing per period (added in generation order, so rounding may differ in the last places).
        var batch = new SortedDictionary<long, double>();
        foreach ((DateTimeOffset time, double quantity) in events)
        {
            long period = calendar.PeriodOf(time);
            batch[period] = batch.TryGetValue(period, out double sum) ? sum + quantity : quantity;
        }

        Assert.Equal(0, output.Counters.Late);
        long first = batch.Keys.First();
        long last = batch.Keys.Last();
        Assert.Equal(last - first + 1, output.Forecasts.Count);
        foreach (ForecastUpdate<string> update in output.Forecasts)
        {
            double expected = batch.TryGetValue(update.Period, out double sum) ? sum : 0; // an empty period is a zero (GapPolicy.Zero)
            Assert.Equal(expected, update.Actual, 9);
        }
    }

    [Fact]
    public void Observe_LateEventAfterARefusedActualLeftTheRestatementWindow_RestatesLikeTheSameEventOnTime()
    {
        // Croston refuses negative demand. Minute 1 sums to −5 (refused); minute 2 is empty and carries the last accepted
        // actual (2) forward. Once minute 1 has left the restatement window, a late event restates minute 3: the rollback
        // replays minute 2 from the lagged state, which must carry 2 forward again, exactly as the live run did. The
        // result must equal a run in which the same event arrived on time.
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        var options = new SeriesOptions(new CrostonOptions(), calendar, new LatenessPolicy(TimeSpan.Zero, restatementPeriods: 3), GapPolicy.CarryForward);
        (int Minute, double Quantity)[] events = [(0, 2), (1, -5), (3, 4), (4, 1), (5, 3), (6, 2)];
        (int Minute, double Quantity) late = (3, 6);

        ListOutput Run(bool lateEventOnTime)
        {
            var state = new SeriesState<string>("cake", options, 0);
            var output = new ListOutput();
            foreach ((int minute, double quantity) in events)
            {
                if (lateEventOnTime && minute == 4)
                {
                    Post(state, late.Minute, late.Quantity, output);
                }

                Post(state, minute, quantity, output);
            }

            if (!lateEventOnTime)
            {
                Post(state, late.Minute, late.Quantity, output);
            }

            state.CloseAll(output);
            return output;
        }

        void Post(SeriesState<string> state, int minute, double quantity, ListOutput output)
        {
            DateTimeOffset t = s_start.AddMinutes(minute);
            state.Observe(t, calendar.PeriodOf(t), quantity, null, 0, output);
        }

        ListOutput onTime = Run(lateEventOnTime: true);
        ListOutput restated = Run(lateEventOnTime: false);
        Assert.Equal(1, restated.Counters.Restated);
        Assert.Equal(1, restated.Counters.RejectedActuals);
        ForecastUpdate<string> expected = onTime.Forecasts[^1];
        ForecastUpdate<string> actual = restated.Forecasts[^1];
        Assert.Equal(expected.Period, actual.Period);
        Assert.Equal(expected.Next, actual.Next);
        Assert.Equal(expected.Errors, actual.Errors);
    }

    // Snapshot + restore + continue equals an uninterrupted run, taken while periods are open, for the inline ring
    // (no lateness), the array ring (lateness of several periods) and with restatement and several rules.
    [Theory]
    [InlineData(0, 0, 0)]
    [InlineData(0, 0, 1)]
    [InlineData(150, 0, 2)]
    [InlineData(150, 2, 1)]
    public void Read_AfterWriteWithOpenPeriods_ContinuesExactlyLikeTheOriginal(int latenessSeconds, int restatementPeriods, int ruleCount)
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        DriftRuleOptions[] rules = [new TrackingSignalRuleOptions(), new TriggSignalRuleOptions()];
        var options = new SeriesOptions(
            new MovingAverageOptions(3), calendar, new LatenessPolicy(TimeSpan.FromSeconds(latenessSeconds), restatementPeriods),
            rules: [.. rules.Take(ruleCount)]);
        var original = new SeriesState<string>("a", options, 0);
        var originalOut = new ListOutput();
        var rng = new Random(23);
        var events = new List<(DateTimeOffset Time, double Quantity)>();
        for (int i = 0; i < 400; i++)
        {
            events.Add((s_start.AddSeconds((20 * i) - rng.Next(0, 300)), Math.Round(rng.NextDouble() * 50, 1)));
        }

        for (int i = 0; i < 200; i++)
        {
            original.Observe(events[i].Time, calendar.PeriodOf(events[i].Time), events[i].Quantity, null, 0, originalOut);
        }

        var writer = new SnapshotPayloadWriter();
        original.Write(writer);
        var restored = new SeriesState<string>("a", options, 0);
        restored.Read(new SnapshotPayloadReader(writer.WrittenMemory));
        var restoredOut = new ListOutput();
        int before = originalOut.Forecasts.Count;
        for (int i = 200; i < events.Count; i++)
        {
            original.Observe(events[i].Time, calendar.PeriodOf(events[i].Time), events[i].Quantity, null, 0, originalOut);
            restored.Observe(events[i].Time, calendar.PeriodOf(events[i].Time), events[i].Quantity, null, 0, restoredOut);
        }

        original.CloseAll(originalOut);
        restored.CloseAll(restoredOut);

        Assert.Equal(originalOut.Forecasts.Skip(before), restoredOut.Forecasts);
        Assert.True(restoredOut.Forecasts.Count > 50);
        if (restatementPeriods > 0)
        {
            Assert.True(restoredOut.Counters.Restated > 0); // the restatement path ran after the restore
        }

        var a = new SnapshotPayloadWriter();
        var b = new SnapshotPayloadWriter();
        original.Write(a);
        restored.Write(b);
        Assert.Equal(a.WrittenMemory.ToArray(), b.WrittenMemory.ToArray());
    }
}
