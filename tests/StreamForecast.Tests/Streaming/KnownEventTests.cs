using FsCheck;
using FsCheck.Fluent;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Streaming;

/// <summary>Known events: validation, marking, exclusion from the error statistics, late declarations, snapshots.</summary>
public sealed class KnownEventTests
{
    private static readonly PeriodCalendar s_days = PeriodCalendar.Daily(TimeZoneInfo.Utc);
    private static readonly DateTimeOffset s_start = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
    private static readonly long s_first = s_days.PeriodOf(s_start);

    private sealed class ListSink : ISeriesSink<string>
    {
        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public List<DriftAlert<string>> Alerts { get; } = [];

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);

        public void Alert(in DriftAlert<string> alert) => Alerts.Add(alert);

        public void Fault(in SeriesFault<string> fault)
        {
        }
    }

    [Fact]
    public void Named_BuiltInNames_GiveTheBuiltInKinds()
    {
        Assert.Same(EventKind.Promotion, EventKind.Named("promotion"));
        Assert.Same(EventKind.Closure, EventKind.Named("closure"));
        Assert.Equal(EventKind.Named("street fair"), EventKind.Named("street fair"));
    }

    [Theory]
    [InlineData("")]
    [InlineData(" leading")]
    [InlineData("trailing ")]
    [InlineData("comma,inside")]
    [InlineData("new\nline")]
    public void Named_InvalidName_Throws(string name) => Assert.Throws<ArgumentException>(() => EventKind.Named(name));

    [Fact]
    public void ForSeries_EndNotAfterStart_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => KnownEvent.ForSeries("k", EventKind.Promotion, s_start, s_start));
        Assert.Throws<ArgumentException>(() => KnownEvent.ForGroup<string>("", EventKind.Promotion, s_start, s_start.AddDays(1)));
    }

    [Fact]
    public void ByKeyPrefix_KeyWithSeparator_GivesThePartBeforeIt()
    {
        Func<string, string?> group = EventGroups.ByKeyPrefix('/');
        Assert.Equal("Mill Lane", group("Mill Lane/rye roll"));
        Assert.Null(group("no separator"));
        Assert.Null(group("/leading"));
    }

    [Fact]
    public void Replay_OverlappingKinds_ClosureWinsAndPeriodsAreUnscored()
    {
        var options = new SeriesOptions(new MovingAverageOptions(2), s_days);
        var events = new EventCalendar<string>(
        [
            KnownEvent.ForAllSeries<string>(EventKind.Promotion, s_start.AddDays(3), s_start.AddDays(6)),
            KnownEvent.ForGroup<string>("shop", EventKind.Closure, s_start.AddDays(4), s_start.AddDays(5)),
            KnownEvent.ForSeries("other/bread", EventKind.Closure, s_start.AddDays(1), s_start.AddDays(2)),
        ], EventGroups.ByKeyPrefix('/'));
        var sink = new ListSink();
        SeriesStep<string> step = Backtester.Replay("shop/bread", [10, 10, 10, 20, 0, 20, 10, 10], s_first, options, events, sink);

        Assert.Equal([null, null, null, EventKind.Promotion, EventKind.Closure, EventKind.Promotion, null, null], sink.Forecasts.Select(u => u.Event));
        Assert.All(sink.Forecasts.Where(u => u.Event is not null), u => Assert.True(double.IsNaN(u.Error)));
        // Scored: periods 2, 6 and 7 (period 0 and 1 warm the moving average up; 3, 4, 5 are marked).
        Assert.Equal(3, sink.Forecasts[^1].Errors.ScoredPeriods);
        EventLift[] lift = step.GetEventLift();
        // The model learnt its forecast (10) on marked days, so each marked day was forecast 10.
        Assert.Equal(new EventLift(EventKind.Promotion, 2, 40, 20), lift.Single(l => l.Kind == EventKind.Promotion));
        Assert.Equal(new EventLift(EventKind.Closure, 1, 0, 10), lift.Single(l => l.Kind == EventKind.Closure));
        Assert.Equal(2.0, lift.Single(l => l.Kind == EventKind.Promotion).Ratio);
    }

    [Fact]
    public void Replay_MarkedPeriodsSkippedByBatchRecomputation_SameErrorStatistics() =>
        PropertyCases.Check(Prop.ForAll(
            Gen.Choose(0, 100_000).Select(i => i / 10.0).ArrayOf().Where(a => a.Length is > 3 and < 120).ToArbitrary(),
            Gen.Choose(0, 119).ArrayOf().ToArbitrary(),
            Gen.Choose(1, 5).SelectMany(n => Gen.Elements(true, false).Select(keep => (n, keep))).ToArbitrary(),
            (values, markedDays, method) => SameAsBatch(values, markedDays, method.n, method.keep)));

    private static bool SameAsBatch(double[] y, int[] markedDays, int n, bool keepOut)
    {
        var marked = new bool[y.Length];
        foreach (int d in markedDays)
        {
            if (d < y.Length)
            {
                marked[d] = true;
            }
        }

        var events = new EventCalendar<string>(
            markedDays.Where(d => d < y.Length).Select(d => KnownEvent.ForSeries("k", EventKind.Named("street fair"), s_start.AddDays(d), s_start.AddDays(d + 1), keepOut)));
        var sink = new ListSink();
        Backtester.Replay("k", y, s_first, new SeriesOptions(new MovingAverageOptions(n), s_days), events, sink);

        // Batch reference: the moving average of what the model was fed (the actual, or on a marked day kept out of
        // the model its own forecast), scored only on unmarked days once n values were fed.
        var fed = new double[y.Length];
        double sum = 0, abs = 0, sq = 0;
        int count = 0;
        for (int t = 0; t < y.Length; t++)
        {
            double forecast = t >= n ? fed[(t - n)..t].Average() : double.NaN;
            fed[t] = marked[t] && keepOut && t >= n ? forecast : y[t];
            if (t >= n && !marked[t])
            {
                double e = y[t] - forecast;
                sum += e;
                abs += Math.Abs(e);
                sq += e * e;
                count++;
            }
        }

        ErrorSummary errors = sink.Forecasts[^1].Errors;
        Assert.Equal(count, errors.ScoredPeriods);
        if (count > 0)
        {
            Assert.Equal(sum, errors.Rsfe, 1e-6 * (1 + Math.Abs(sum)));
            Assert.Equal(abs / count, errors.Mad, 1e-6 * (1 + (abs / count)));
            Assert.Equal(sq / count, errors.Mse, 1e-6 * (1 + (sq / count)));
        }

        return true;
    }

    private static ForecastEngineOptions<string> EngineOptions(EventCalendar<string>? events, int restatementPeriods = 3) =>
        new(
            new SeriesOptions(new ExponentialSmoothingOptions(0.3), s_days, new LatenessPolicy(TimeSpan.FromDays(30), restatementPeriods),
                rules: [new CusumRuleOptions(decisionInterval: 4, warmUpPeriods: 3)]),
            partitions: 2,
            timeProvider: new FakeTimeProvider(s_start.AddYears(1)),
            maxEventTimeAhead: Timeout.InfiniteTimeSpan,
            publishing: new PublishingOptions(100_000, 100_000),
            events: events);

    private static async Task PostDaysAsync(ForecastEngine<string> engine, double[] values, int from = 0)
    {
        for (int t = from; t < values.Length; t++)
        {
            await engine.PostAsync(new Observation<string>("shop/bread", s_start.AddDays(t).AddHours(10), values[t]));
        }
    }

    private static readonly double[] s_twelveDays = [20, 22, 19, 21, 20, 23, 18, 21, 40, 44, 20, 21];

    [Fact]
    public async Task DeclareEventAsync_InsideTheRestatementHorizon_RestatesToTheSameStateAsDeclaredInAdvance()
    {
        // Days 8 and 9 are a promotion. Declared in advance in one engine, after the fact in another.
        KnownEvent<string> promotion = KnownEvent.ForSeries("shop/bread", EventKind.Promotion, s_start.AddDays(8), s_start.AddDays(10));
        await using var advance = new ForecastEngine<string>(EngineOptions(new EventCalendar<string>([promotion])));
        await PostDaysAsync(advance, s_twelveDays);
        await advance.AdvanceAsync(s_start.AddDays(12));

        await using var late = new ForecastEngine<string>(EngineOptions(null));
        var recorder = EngineRecorder<string>.Attach(late);
        await PostDaysAsync(late, s_twelveDays);
        await late.AdvanceAsync(s_start.AddDays(12));
        KnownEventReceipt receipt = await late.DeclareEventAsync(promotion);

        // Closed: days 0..11; the horizon holds days 9, 10, 11: day 8 is beyond it, days 9..11 are republished.
        Assert.Equal(new KnownEventReceipt(1, 3, 1), receipt);
        SeriesStatus<string> a = (await advance.GetSeriesStatusAsync()).Single();
        SeriesStatus<string> b = (await late.GetSeriesStatusAsync()).Single();
        Assert.NotEqual(a.Errors, b.Errors); // day 8 stays scored in the late engine: it lay beyond the horizon

        await late.DisposeAsync();
        List<ForecastUpdate<string>> restated = recorder.Forecasts.Where(u => u.IsRestatement).ToList();
        Assert.Equal([s_first + 9, s_first + 10, s_first + 11], restated.Select(u => u.Period));
        Assert.Equal(EventKind.Promotion, restated[0].Event);
        Assert.Null(restated[1].Event);
    }

    [Fact]
    public async Task DeclareEventAsync_WholeEventInsideTheHorizon_EqualsDeclaredInAdvance()
    {
        KnownEvent<string> promotion = KnownEvent.ForSeries("shop/bread", EventKind.Promotion, s_start.AddDays(9), s_start.AddDays(11));
        await using var advance = new ForecastEngine<string>(EngineOptions(new EventCalendar<string>([promotion])));
        await PostDaysAsync(advance, s_twelveDays);
        await advance.AdvanceAsync(s_start.AddDays(12));

        await using var late = new ForecastEngine<string>(EngineOptions(null));
        await PostDaysAsync(late, s_twelveDays);
        await late.AdvanceAsync(s_start.AddDays(12));
        Assert.Equal(new KnownEventReceipt(1, 3, 0), await late.DeclareEventAsync(promotion));

        SeriesStatus<string> a = (await advance.GetSeriesStatusAsync()).Single();
        SeriesStatus<string> b = (await late.GetSeriesStatusAsync()).Single();
        Assert.Equal(a.Errors, b.Errors);
        Assert.Equal(a.Next, b.Next);
        Assert.Equal(await advance.GetEventLiftAsync(), await late.GetEventLiftAsync());

        // Withdrawing it restates back to the run without the event.
        await using var none = new ForecastEngine<string>(EngineOptions(null));
        await PostDaysAsync(none, s_twelveDays);
        await none.AdvanceAsync(s_start.AddDays(12));
        Assert.Equal(new KnownEventReceipt(1, 3, 0), await late.WithdrawEventAsync(promotion));
        Assert.Equal((await none.GetSeriesStatusAsync()).Single().Errors, (await late.GetSeriesStatusAsync()).Single().Errors);
        Assert.Empty(await late.GetEventLiftAsync());
    }

    [Fact]
    public async Task DeclareEventAsync_BeforeTheHorizon_ReportsThePeriodsNotRestated()
    {
        await using var engine = new ForecastEngine<string>(EngineOptions(null, restatementPeriods: 0));
        await PostDaysAsync(engine, s_twelveDays);
        await engine.AdvanceAsync(s_start.AddDays(12));
        SeriesStatus<string> before = (await engine.GetSeriesStatusAsync()).Single();
        KnownEventReceipt receipt = await engine.DeclareEventAsync(KnownEvent.ForAllSeries<string>(EventKind.Closure, s_start.AddDays(2), s_start.AddDays(5)));
        Assert.Equal(new KnownEventReceipt(1, 0, 3), receipt);
        Assert.Equal(before.Errors, (await engine.GetSeriesStatusAsync()).Single().Errors);
    }

    [Fact]
    public async Task DeclareEventAsync_GroupEventWithoutGroupFunction_Throws()
    {
        await using var engine = new ForecastEngine<string>(EngineOptions(null));
        await Assert.ThrowsAsync<ArgumentException>(() => engine.DeclareEventAsync(KnownEvent.ForGroup<string>("shop", EventKind.Closure, s_start, s_start.AddDays(1))));
    }

    [Fact]
    public async Task SnapshotAsync_WithoutKnownEvents_WritesVersionTwo()
    {
        await using var engine = new ForecastEngine<string>(EngineOptions(null));
        await PostDaysAsync(engine, s_twelveDays);
        using var stream = new MemoryStream();
        await engine.SnapshotAsync(stream, SnapshotKeyCodecs.Utf8String, 12);
        Assert.Equal(SnapshotFormat.CurrentVersion, BitConverter.ToUInt16(stream.GetBuffer(), 4));
    }

    [Fact]
    public void SnapshotAsync_HostileSequencesWithDeclaredEvents_ExportImportExportIsIdentical() =>
        PropertyCases.Check(
            Prop.ForAll(HostileSeries.Accepted(60).ToArbitrary(), Gen.Choose(0, 59).ArrayOf().ToArbitrary(), (values, days) => RoundTrip(values, days)),
            Math.Max(100, PropertyCases.PerFamily / 50));

    private static bool RoundTrip(double[] values, int[] days)
    {
        Task.Run(async () =>
        {
            var options = EngineOptions(new EventCalendar<string>([KnownEvent.ForGroup<string>("shop", EventKind.Promotion, s_start.AddDays(5), s_start.AddDays(9))], EventGroups.ByKeyPrefix('/')));
            var engine = new ForecastEngine<string>(options);
            int half = values.Length / 2;
            await PostDaysAsync(engine, values[..half]);
            foreach (int d in days.Distinct().Take(4))
            {
                var known = d % 2 == 0
                    ? KnownEvent.ForSeries("shop/bread", EventKind.Closure, s_start.AddDays(d), s_start.AddDays(d + 1), keepOutOfModel: d % 3 == 0)
                    : KnownEvent.ForAllSeries<string>(EventKind.Named("street fair"), s_start.AddDays(d), s_start.AddDays(d + 2));
                await engine.DeclareEventAsync(known);
            }

            for (int t = half; t < values.Length; t++)
            {
                await engine.PostAsync(new Observation<string>("shop/bread", s_start.AddDays(t).AddHours(10), values[t]));
            }

            using var first = new MemoryStream();
            await engine.SnapshotAsync(first, SnapshotKeyCodecs.Utf8String, 7);
            await engine.DisposeAsync();

            first.Position = 0;
            var (restored, position) = await ForecastEngine.RestoreAsync(first, options, SnapshotKeyCodecs.Utf8String);
            using var second = new MemoryStream();
            await restored.SnapshotAsync(second, SnapshotKeyCodecs.Utf8String, position);
            Assert.Equal(await LiftOf(first, options), await restored.GetEventLiftAsync());
            await restored.DisposeAsync();
            Assert.Equal(first.ToArray(), second.ToArray());
        }).GetAwaiter().GetResult();
        return true;
    }

    private static async Task<IReadOnlyList<EventLift>> LiftOf(MemoryStream snapshot, ForecastEngineOptions<string> options)
    {
        snapshot.Position = 0;
        var (engine, _) = await ForecastEngine.RestoreAsync(snapshot, options, SnapshotKeyCodecs.Utf8String);
        await using (engine)
        {
            return await engine.GetEventLiftAsync();
        }
    }
}
