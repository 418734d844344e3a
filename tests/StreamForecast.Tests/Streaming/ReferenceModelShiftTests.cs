using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using Xunit.Abstractions;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// A lasting shift under a fast-adapting tuned method (issue 14): the rule watching a slower reference model reports it once,
/// while the same rule on the published model's errors sees the forecast catch up before its evidence builds.
/// </summary>
public sealed class ReferenceModelShiftTests(ITestOutputHelper output)
{
    private const int ShiftPeriod = 150;
    private static readonly PeriodCalendar s_days = PeriodCalendar.Daily(TimeZoneInfo.Utc);

    private sealed class ListSink : ISeriesSink<string>
    {
        public List<DriftAlert<string>> Alerts { get; } = [];

        public int Forecasts { get; private set; }

        public void Forecast(in ForecastUpdate<string> update) => Forecasts++;

        public void Alert(in DriftAlert<string> alert) => Alerts.Add(alert);

        public void Fault(in SeriesFault<string> fault) => throw new InvalidOperationException(fault.Message);
    }

    /// <summary>
    /// Invented: a village bakery's daily rye loaves, about 40 a day, with demand that runs hot or cold for a few days at a
    /// time (a first-order autoregression around the level, coefficient 0.6, shocks of 8 loaves), which favours a
    /// fast-adapting forecast; from day 150 on a new estate opens nearby and the level rises by 60% for good.
    /// </summary>
    private static double[] RyeLoaves(int seed, int days)
    {
        var random = new Random(seed);
        double Normal() => Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
        var y = new double[days];
        double deviation = 0;
        for (int t = 0; t < days; t++)
        {
            deviation = (0.6 * deviation) + (8 * Normal());
            double level = t >= ShiftPeriod ? 40 * 1.6 : 40;
            y[t] = Math.Max(0, Math.Round(level + deviation));
        }

        return y;
    }

    [Fact]
    public void Replay_PlantedLastingShiftUnderFastTunedMethod_ReferenceRuleReportsItOnce()
    {
        double[] y = RyeLoaves(seed: 1, days: ShiftPeriod + 60);

        // The tuner sees only the history before the shift and picks a fast-adapting method.
        TuningResult tuned = SeriesTuner.Tune(y.AsSpan(0, ShiftPeriod));
        var chosen = Assert.IsType<ExponentialSmoothingOptions>(tuned.Method);
        Assert.True(chosen.Alpha >= 0.5, $"the tuner chose {chosen.MethodName}, not a fast-adapting method");
        ForecasterOptions reference = ReferenceMethods.Slower(chosen);

        // The same CUSUM on both models' errors. k = 1σ: half the shift to detect, here about 2σ of the daily error
        // (Montgomery, Introduction to Statistical Quality Control, the reference value k is half the shift; from memory).
        var cusum = new CusumRuleOptions(decisionInterval: 5, referenceValue: 1);
        var options = new SeriesOptions(chosen, s_days, rules: [cusum, cusum with { Watches = WatchedModel.Reference }], referenceMethod: reference);
        var sink = new ListSink();
        Backtester.Replay("village/rye", y, 0, options, sink);

        List<DriftAlert<string>> onReference = [.. sink.Alerts.Where(a => a.Watched == WatchedModel.Reference)];
        List<DriftAlert<string>> onPublished = [.. sink.Alerts.Where(a => a.Watched == WatchedModel.Published)];
        foreach (DriftAlert<string> a in sink.Alerts)
        {
            output.WriteLine($"{a.Period} {a.Watched} {a.RuleName} {a.Transition.Kind} episode {a.Transition.EpisodeId} {a.Transition.Direction} {a.Transition.Signal:F2}");
        }

        // The reference rule: one episode, raised (under-forecast) a few days after the shift, never before it.
        DriftAlert<string> raised = Assert.Single(onReference, a => a.Transition.Kind == DriftTransitionKind.Raised);
        Assert.All(onReference, a => Assert.Equal(raised.Transition.EpisodeId, a.Transition.EpisodeId));
        Assert.All(onReference, a => Assert.Equal(1, a.RuleIndex));
        Assert.Equal(DriftDirection.UnderForecast, raised.Transition.Direction);
        long delay = raised.Period - ShiftPeriod;
        Assert.InRange(delay, 0, 7);

        // The published model follows the new level before its CUSUM builds up: no alert at all on this series.
        Assert.Empty(onPublished);
        output.WriteLine($"{chosen.MethodName} with reference {reference.MethodName}: reference raised {delay} periods after the shift; published raised {onPublished.Count} alerts");
    }
}
