using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using Xunit.Abstractions;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Behaviour on an invented intraday scenario: a fleet gateway counting sensor messages per hour for 60 days, with a daily
/// and a weekly cycle (weekends quieter and without the morning peak). Ordinary Holt-Winters with a 24-hour season against
/// Holt-Winters with two cycles (24 and 168 hours), both fitted on the first 28 days and replayed over all 60 through the
/// engine's own per-period step with the command-line tool's default drift rule (CUSUM, h = 5).
/// </summary>
public sealed class TwoSeasonScenarioTests(ITestOutputHelper output)
{
    private const int Days = 60;
    private const int FitDays = 28;
    private static readonly PeriodCalendar s_hours = PeriodCalendar.FixedInterval(TimeSpan.FromHours(1));

    private sealed class CountingSink : ISeriesSink<string>
    {
        public int Raised { get; private set; }

        public int Scored { get; private set; }

        public double AbsoluteErrors { get; private set; }

        public int FirstScoredPeriodIndex { get; init; }

        public long FirstPeriod { get; init; }

        public void Forecast(in ForecastUpdate<string> update)
        {
            if (update.Period - FirstPeriod >= FirstScoredPeriodIndex && !double.IsNaN(update.Error))
            {
                Scored++;
                AbsoluteErrors += Math.Abs(update.Error);
            }
        }

        public void Alert(in DriftAlert<string> alert)
        {
            if (alert.Transition.Kind == DriftTransitionKind.Raised)
            {
                Raised++;
            }
        }

        public void Fault(in SeriesFault<string> fault) => throw new InvalidOperationException(fault.ToString());
    }

    /// <summary>Invented hourly message counts: daily profile × weekday/weekend factor, Poisson-like noise, seed 14.</summary>
    internal static double[] GatewayHours()
    {
        var rng = new Random(14);
        var y = new double[Days * 24];
        for (int t = 0; t < y.Length; t++)
        {
            int hour = t % 24, day = t / 24 % 7; // day 5 and 6 are the weekend
            bool weekend = day >= 5;
            double daily = 0.4 + (0.6 * Math.Exp(-Math.Pow(hour - 18, 2) / 8)) + (weekend ? 0.1 : 0.9 * Math.Exp(-Math.Pow(hour - 9, 2) / 4));
            double mean = 120 * daily * (weekend ? 0.6 : 1.0) * (day == 0 ? 1.15 : 1.0);
            // Normal approximation to Poisson counts: mean + sqrt(mean)·z, rounded, never below zero.
            double z = Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
            y[t] = Math.Max(0, Math.Round(mean + (Math.Sqrt(mean) * z)));
        }

        return y;
    }

    private static ForecasterOptions BetterOf(FittedMethod first, FittedMethod second) =>
        first.SumOfSquaredErrors <= second.SumOfSquaredErrors ? first.Method : second.Method;

    private static (double Mae, int Alerts) Replay(double[] hours, ForecasterOptions method, DriftRuleOptions rule)
    {
        long first = s_hours.PeriodOf(new DateTimeOffset(2026, 9, 7, 0, 0, 0, TimeSpan.Zero));
        var sink = new CountingSink { FirstPeriod = first, FirstScoredPeriodIndex = FitDays * 24 };
        var options = new SeriesOptions(method, s_hours, rules: [rule]);
        Backtester.Replay("gateway/north", hours, first, options, sink);
        return (sink.AbsoluteErrors / sink.Scored, sink.Raised);
    }

    [Fact]
    public void Replay_HourlyCountsWithDailyAndWeeklyCycles_TwoCyclesBeatOneOnErrorAndAlerts()
    {
        double[] hours = GatewayHours();
        double[] fit = hours[..(FitDays * 24)];
        ForecasterOptions oneCycle = BetterOf(
            MethodFitter.FitHoltWinters(fit, 24, Seasonality.Additive), MethodFitter.FitHoltWinters(fit, 24, Seasonality.Multiplicative));
        ForecasterOptions twoCycles = BetterOf(
            MethodFitter.FitTwoSeasonHoltWinters(fit, 24, 168, Seasonality.Additive), MethodFitter.FitTwoSeasonHoltWinters(fit, 24, 168, Seasonality.Multiplicative));

        var cusum = new CusumRuleOptions(decisionInterval: 5);
        (double oneMae, int oneAlerts) = Replay(hours, oneCycle, cusum);
        (double twoMae, int twoAlerts) = Replay(hours, twoCycles, cusum);
        output.WriteLine($"{oneCycle.MethodName}: one-step MAE {oneMae:F3} on days {FitDays + 1}-{Days}, {oneAlerts} CUSUM alerts raised over {Days} days");
        output.WriteLine($"{twoCycles.MethodName}: one-step MAE {twoMae:F3} on days {FitDays + 1}-{Days}, {twoAlerts} CUSUM alerts raised over {Days} days");
        var signal = new TrackingSignalRuleOptions(limit: 4);
        output.WriteLine($"Tracking signal ±4: one cycle {Replay(hours, oneCycle, signal).Alerts}, two cycles {Replay(hours, twoCycles, signal).Alerts} alerts raised");
        output.WriteLine($"Two cycles, error adjustment {((TwoSeasonHoltWintersOptions)twoCycles).ErrorAdjustment}");

        Assert.True(twoMae < oneMae, $"two cycles MAE {twoMae} vs one cycle {oneMae}");
        Assert.True(twoAlerts < oneAlerts, $"two cycles {twoAlerts} alerts vs one cycle {oneAlerts}");
    }

    [Fact]
    public void Candidates_HourlyPeriodLength_AddsTwoCycleCandidates()
    {
        double[] hours = GatewayHours();
        var options = new TuningOptions(seasonLength: 24) { PeriodLength = TimeSpan.FromHours(1) };
        var candidates = SeriesTuner.Candidates(hours, options, options.FirstOriginFor(hours.Length), out _);
        var twoCycle = candidates.OfType<TwoSeasonHoltWintersOptions>().ToList();
        Assert.Equal(2, twoCycle.Count);
        Assert.All(twoCycle, c => Assert.True(c.ShortCycle == 24 && c.LongCycle == 168));
        Assert.Contains(twoCycle, c => c.Seasonality == Seasonality.Multiplicative);
    }

    [Theory]
    [InlineData(24)] // a daily period: no shorter cycle inside it
    [InlineData(7 * 24)] // weekly
    [InlineData(7)] // 7 hours does not divide the day
    public void Candidates_PeriodNotDividingTheDay_AreExactlyThoseWithoutPeriodLength(int hoursPerPeriod)
    {
        double[] hours = GatewayHours()[..400];
        var plain = new TuningOptions(seasonLength: 7);
        var withLength = plain with { PeriodLength = TimeSpan.FromHours(hoursPerPeriod) };
        var expected = SeriesTuner.Candidates(hours, plain, plain.FirstOriginFor(hours.Length), out _);
        var actual = SeriesTuner.Candidates(hours, withLength, withLength.FirstOriginFor(hours.Length), out _);
        Assert.Equal(expected, actual);
        Assert.DoesNotContain(actual, c => c is TwoSeasonHoltWintersOptions);
    }

    [Fact]
    public void FitTwoSeasonHoltWinters_ShortHistoryOrBadCycles_Throws()
    {
        double[] hours = GatewayHours();
        Assert.Throws<ArgumentException>(() => MethodFitter.FitTwoSeasonHoltWinters(hours.AsSpan(0, (2 * 168) + 5), 24, 168));
        Assert.Throws<ArgumentOutOfRangeException>(() => MethodFitter.FitTwoSeasonHoltWinters(hours, 24, 24));
        Assert.Throws<ArgumentOutOfRangeException>(() => MethodFitter.FitTwoSeasonHoltWinters(hours, 1, 24));
        FittedMethod fitted = MethodFitter.FitTwoSeasonHoltWinters(hours.AsSpan(0, (2 * 168) + 6), 24, 168);
        var options = Assert.IsType<TwoSeasonHoltWintersOptions>(fitted.Method);
        Assert.Null(options.TrendWeight);
        Assert.InRange(options.ErrorAdjustment, 0, MethodFitter.MaxErrorAdjustment);
        Assert.Equal(MethodFitter.Score(hours.AsSpan(0, (2 * 168) + 6), options).SumOfSquaredErrors, fitted.SumOfSquaredErrors);
    }

    [Fact]
    public void PeriodLength_ZeroOrNegative_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions() { PeriodLength = TimeSpan.Zero });
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions() { PeriodLength = TimeSpan.FromHours(-1) });
    }
}
