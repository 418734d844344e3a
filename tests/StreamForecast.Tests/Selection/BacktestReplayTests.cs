using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tests.Streaming;

namespace StreamForecast.Tests.Selection;

/// <summary>The backtester's replay runs the engine's own step: for the same period totals it publishes what the engine does.</summary>
public sealed class BacktestReplayTests
{
    private static readonly PeriodCalendar s_days = PeriodCalendar.Daily(TimeZoneInfo.Utc);

    private static readonly SeriesOptions[] s_options =
    [
        new(new MovingAverageOptions(3), s_days, gaps: GapPolicy.Zero, rules: [new TrackingSignalRuleOptions(limit: 3, warmUpPeriods: 2), new CusumRuleOptions(decisionInterval: 3)], horizon: 3),
        new(new ExponentialSmoothingOptions(0.3), s_days, gaps: GapPolicy.Missing, rules: [new TriggSignalRuleOptions(limit: 0.4, warmUpPeriods: 2)]),
        new(new HoltOptions(0.4, 0.2), s_days, gaps: GapPolicy.CarryForward, rules: [new TrackingSignalRuleOptions(limit: 2.5)], horizon: 7),
        new(new CrostonOptions(), s_days, gaps: GapPolicy.Zero, rules: [new CusumRuleOptions(decisionInterval: 2.5)]),
        new(new HoltWintersOptions(7, Seasonality.Multiplicative, 0.3, 0.05, 0.2), s_days, gaps: GapPolicy.Missing, horizon: 2),

        // With a reference model: rules on either model's errors, a reference that refuses what the method takes, gap policies.
        new(new ExponentialSmoothingOptions(0.8), s_days, gaps: GapPolicy.CarryForward,
            rules: [new CusumRuleOptions(decisionInterval: 3) with { Watches = WatchedModel.Reference }, new TrackingSignalRuleOptions(limit: 3, warmUpPeriods: 2)],
            referenceMethod: new MovingAverageOptions(10)),
        new(new HoltOptions(0.7, 0.2), s_days, gaps: GapPolicy.Zero,
            rules: [new TriggSignalRuleOptions(limit: 0.4, warmUpPeriods: 2) with { Watches = WatchedModel.Reference }], referenceMethod: new CrostonOptions(0.05)),
        new(new NaiveOptions(), s_days, gaps: GapPolicy.Missing,
            rules: [new TrackingSignalRuleOptions(limit: 2.5) with { Watches = WatchedModel.Reference }, new CusumRuleOptions(decisionInterval: 2.5)],
            referenceMethod: ReferenceMethods.Slower(new HoltOptions(0.9, 0.3)), horizon: 3),
    ];

    private sealed class ListSink : ISeriesSink<string>
    {
        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public List<DriftAlert<string>> Alerts { get; } = [];

        public List<SeriesFault<string>> Faults { get; } = [];

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);

        public void Alert(in DriftAlert<string> alert) => Alerts.Add(alert);

        public void Fault(in SeriesFault<string> fault) => Faults.Add(fault);
    }

    private static Gen<double[]> History { get; } =
        from length in Gen.Choose(2, 90)
        from values in Gen.Frequency(
            (14, Gen.Choose(0, 10_000).Select(i => i / 100.0)),
            (4, Gen.Constant(double.NaN)),
            (1, Gen.Choose(-500, -1).Select(i => i / 100.0))).ArrayOf(length)
        select Ends(values);

    private static double[] Ends(double[] values)
    {
        // The engine starts a series at its first event and a flush closes through its last: both ends carry data.
        values[0] = double.IsNaN(values[0]) ? 12 : values[0];
        values[^1] = double.IsNaN(values[^1]) ? 9 : values[^1];
        return values;
    }

    [Fact]
    public void Replay_RandomHistoriesWithGaps_PublishesExactlyWhatTheEngineDoes() =>
        PropertyCases.Check(
            Prop.ForAll(Gen.Choose(0, FirstWithReference - 1).ToArbitrary(), History.ToArbitrary(), (which, history) => Same(s_options[which], history)),
            Math.Max(200, PropertyCases.PerFamily / 20));

    /// <summary>Series options from this index on run a reference model.</summary>
    private const int FirstWithReference = 5;

    [Fact]
    public void Replay_WithReferenceModel_PublishesExactlyWhatTheEngineDoes() =>
        PropertyCases.Check(
            Prop.ForAll(Gen.Choose(FirstWithReference, s_options.Length - 1).ToArbitrary(), History.ToArbitrary(), (which, history) => Same(s_options[which], history)),
            Math.Max(200, PropertyCases.PerFamily / 20));

    private static bool Same(SeriesOptions series, double[] history)
    {
        long first = s_days.PeriodOf(EngineHistory.Start);
        var sink = new ListSink();
        Backtester.Replay("bakery/rye", history, first, series, sink);
        EngineRecorder<string> recorder = EngineHistory.Run("bakery/rye", series, history).Recorder;

        Assert.Equal(recorder.Forecasts, sink.Forecasts);
        Assert.Equal(recorder.Alerts, sink.Alerts);
        Assert.Equal(recorder.Faults, sink.Faults);
        Assert.Equal(history.Length, sink.Forecasts.Count + sink.Faults.Count(f => f.Kind == SeriesFaultKind.ActualRejected)
            + (series.Gaps == GapPolicy.Missing ? history.Count(double.IsNaN) : 0));
        return true;
    }

    [Fact]
    public void Replay_RandomHistoriesWithKnownEvents_PublishesExactlyWhatTheEngineDoes() =>
        PropertyCases.Check(
            Prop.ForAll(
                Gen.Choose(0, s_options.Length - 1).ToArbitrary(),
                History.ToArbitrary(),
                Gen.Choose(0, 89).SelectMany(day => Gen.Choose(1, 10).SelectMany(length => Gen.Elements(true, false).Select(keep => (day, length, keep)))).ArrayOf().ToArbitrary(),
                (which, history, spans) => Same(s_options[which], history, spans)),
            Math.Max(200, PropertyCases.PerFamily / 20));

    private static bool Same(SeriesOptions series, double[] history, (int Day, int Length, bool Keep)[] spans)
    {
        DateTimeOffset start = EngineHistory.Start;
        EventKind[] kinds = [EventKind.Promotion, EventKind.Closure, EventKind.Named("street fair")];
        var events = new EventCalendar<string>(
            spans.Select((s, i) => i % 2 == 0
                ? KnownEvent.ForSeries("bakery/rye", kinds[i % 3], start.AddDays(s.Day), start.AddDays(s.Day + s.Length), s.Keep)
                : KnownEvent.ForGroup<string>("bakery", kinds[i % 3], start.AddDays(s.Day).AddHours(5), start.AddDays(s.Day + s.Length), s.Keep)),
            EventGroups.ByKeyPrefix('/'));
        long first = s_days.PeriodOf(start);
        var sink = new ListSink();
        SeriesStep<string> step = Backtester.Replay("bakery/rye", history, first, series, events, sink);
        (EngineRecorder<string> recorder, IReadOnlyList<EventLift> lift) = EngineHistory.Run("bakery/rye", series, history, events);

        Assert.Equal(recorder.Forecasts, sink.Forecasts);
        Assert.Equal(recorder.Alerts, sink.Alerts);
        Assert.Equal(recorder.Faults, sink.Faults);
        Assert.Equal(lift, step.GetEventLift().OrderBy(l => l.Kind.Name, StringComparer.Ordinal));
        return true;
    }

    [Fact]
    public void Replay_TotalOutsideTheDomain_ThrowsBeforeSendingAnything()
    {
        var sink = new ListSink();
        Assert.Throws<ArgumentOutOfRangeException>(() => Backtester.Replay("k", [1, 2, 2e15], 0, s_options[0], sink));
        Assert.Throws<ArgumentOutOfRangeException>(() => Backtester.Replay("k", [1, double.PositiveInfinity], 0, s_options[0], sink));
        Assert.Empty(sink.Forecasts);
    }
}
