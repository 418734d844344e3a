using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// The ranking backtest (<see cref="Backtester.Evaluate"/>) scores exactly the forecasts a real engine publishes for the
/// same daily totals, gaps included: its horizon-1 accuracy is rebuilt here from the engine's <c>Next</c> points, its
/// horizon-H accuracy from the engine's <c>AtHorizon</c> points, each scored against the actual the engine published for
/// the period it was made for.
/// </summary>
public sealed class BacktestEngineEquivalenceTests
{
    private const string Key = "harbour/rye";

    private static readonly ForecasterOptions[] s_methods =
    [
        new NaiveOptions(),
        new MovingAverageOptions(3),
        new ExponentialSmoothingOptions(0.3),
        new HoltOptions(0.4, 0.2),
        new CrostonOptions(0.1),
        new WeightedMovingAverageOptions([3.0, 2, 1]),
        new HoltWintersOptions(7, Seasonality.Additive, 0.3, 0.05, 0.2),
    ];

    private static readonly GapPolicy[] s_gaps = [GapPolicy.Zero, GapPolicy.Missing, GapPolicy.CarryForward];

    /// <summary>Daily totals: mostly sales, runs of zeros, NaN for days without a sale posted; both ends carry data.</summary>
    private static Gen<double[]> History { get; } =
        from length in Gen.Choose(2, 80)
        from values in Gen.Frequency(
            (12, Gen.Choose(0, 10_000).Select(i => i / 100.0)),
            (3, Gen.Constant(0.0)),
            (4, Gen.Constant(double.NaN))).ArrayOf(length)
        select Ends(values);

    private static double[] Ends(double[] values)
    {
        // The engine starts a series at its first event and a flush closes through its last: both ends carry data.
        values[0] = double.IsNaN(values[0]) ? 12 : values[0];
        values[^1] = double.IsNaN(values[^1]) ? 9 : values[^1];
        return values;
    }

    private static Gen<BacktestOptions> Options { get; } =
        from firstOrigin in Gen.Choose(1, 20)
        from horizon in Gen.Choose(1, 4)
        from gaps in Gen.Elements(s_gaps)
        from empirical in Gen.Elements(true, false)
        from nonNegative in Gen.Elements(true, false)
        select new BacktestOptions(firstOrigin, horizon, gaps: gaps, nonNegative: nonNegative,
            empiricalIntervals: empirical ? new EmpiricalIntervalOptions(0.8, window: 12, minimumErrors: 9) : null);

    [Fact]
    public void Evaluate_RandomHistoriesWithGaps_ScoresExactlyTheForecastsTheEnginePublishes() =>
        PropertyCases.Check(
            Prop.ForAll(Gen.Choose(0, s_methods.Length - 1).ToArbitrary(), Options.ToArbitrary(), History.ToArbitrary(),
                (which, options, history) => Same(s_methods[which], options, history)),
            Math.Max(200, PropertyCases.PerFamily / 20));

    private static bool Same(ForecasterOptions method, BacktestOptions options, double[] history)
    {
        CandidateEvaluation backtest = Backtester.Evaluate(history, method, options);
        var series = new SeriesOptions(method, EngineHistory.Days, gaps: options.Gaps, horizon: options.Horizon,
            empiricalIntervals: options.EmpiricalIntervals, nonNegative: options.NonNegative);
        List<ForecastUpdate<string>> published = EngineHistory.Run(Key, series, history).Recorder.Forecasts;
        long firstPeriod = EngineHistory.Days.PeriodOf(EngineHistory.Start);

        Assert.Null(backtest.Failure);
        AssertSame(FromEngine(published, firstPeriod, options, 1), backtest.AtHorizon(1));
        AssertSame(FromEngine(published, firstPeriod, options, options.Horizon), backtest.AtHorizon(options.Horizon));

        // The one-step signals are the engine's tracker's: its final tracking signal, scored periods after the first origin.
        Assert.Equal(published.Count == 0 ? double.NaN : published[^1].Errors.TrackingSignal, backtest.Signals.FinalTrackingSignal);
        Assert.Equal(published.Count(u => !double.IsNaN(u.Error) && Position(u, firstPeriod) > options.FirstOrigin), backtest.Signals.Periods);
        return true;
    }

    /// <summary>The 1-based position in the history of the period an update closed.</summary>
    private static long Position(in ForecastUpdate<string> update, long firstPeriod) => update.Period - firstPeriod + 1;

    /// <summary>
    /// The accuracy of horizon <paramref name="h"/> (1 or the options' horizon, the two points the engine publishes)
    /// rebuilt from the engine's updates: the point published with update k − h, if that period was an origin, scored
    /// against the actual of update k, if the engine scores that period (observed, or a gap that means zero).
    /// </summary>
    private static HorizonAccuracy FromEngine(List<ForecastUpdate<string>> published, long firstPeriod, BacktestOptions options, int h)
    {
        ErrorTracker tracker = ErrorTrackerOptions.Default.CreateTracker();
        long unscored = 0, intervals = 0, inside = 0, empirical = 0;
        for (int k = h; k < published.Count; k++)
        {
            ForecastUpdate<string> target = published[k];
            ForecastUpdate<string> origin = published[k - h];
            if (Position(origin, firstPeriod) < options.FirstOrigin || (target.IsImputed && options.Gaps != GapPolicy.Zero))
            {
                continue;
            }

            ForecastPoint point = h == 1 ? origin.Next : origin.AtHorizon;
            if (!point.IsValid)
            {
                unscored++;
                continue;
            }

            tracker.Record(target.Actual, point.Value);
            if (!double.IsNaN(point.Lower))
            {
                intervals++;
                inside += target.Actual >= point.Lower && target.Actual <= point.Upper ? 1 : 0;
                empirical += point.Kind == IntervalKind.Empirical ? 1 : 0;
            }
        }

        return new HorizonAccuracy(h, tracker.Count, unscored, tracker.Mad, tracker.Rmse, tracker.Bias, tracker.Mape, tracker.ZeroActualCount, tracker.Wape,
            double.NaN, intervals, intervals > 0 ? (double)inside / intervals : double.NaN, empirical);
    }

    private static void AssertSame(HorizonAccuracy expected, HorizonAccuracy actual)
    {
        // Every statistic but MASE (whose scale is the history's, not the engine's): the same pairs in the same order.
        Assert.Equal(expected, actual with { Mase = double.NaN });
    }

    [Theory]
    [InlineData(GapPolicy.Zero, 4, 7.5, 1.5, 7.5)] // targets 12, 0, 14, 16: errors 2, −12, 14, 2; scale |2|+|12|+|14|+|2| over 4
    [InlineData(GapPolicy.Missing, 3, 2, 2, 2)] // the gap is skipped: targets 12, 14, 16 against 10, 12, 14
    [InlineData(GapPolicy.CarryForward, 3, 2, 2, 1.5)] // 12 is carried in unscored: targets 12, 14, 16; scale 2+0+2+2 over 4
    public void Evaluate_GapUnderEachPolicy_ScoresAsTheEnginesTrackerDoes(GapPolicy gaps, long count, double mad, double bias, double naiveScale)
    {
        // Naive forecasts "the same as the last actual the model took"; the arithmetic is in the comments above.
        double[] history = [10, 12, double.NaN, 14, 16];
        BacktestReport report = Backtester.Run(history, [new NaiveOptions()], new BacktestOptions(1, gaps: gaps));
        HorizonAccuracy h = report.Best.AtHorizon(1);
        Assert.Equal(count, h.Count);
        Assert.Equal(0, h.UnscoredCount);
        Assert.Equal(mad, h.Mad, 1e-12);
        Assert.Equal(bias, h.Bias, 1e-12);
        Assert.Equal(naiveScale, report.NaiveScale, 1e-12);
    }

    [Fact]
    public void RunMany_HistoryWithGaps_EqualsTheSingleSeriesRun()
    {
        double[] history = [5, double.NaN, 7, 6, double.NaN, double.NaN, 8, 9, 7, double.NaN, 8];
        var options = new BacktestOptions(3, horizon: 2, gaps: GapPolicy.Missing, maxDegreeOfParallelism: 2);
        ForecasterOptions[] candidates = [new ExponentialSmoothingOptions(0.5), new NaiveOptions()];
        var many = Backtester.RunMany([new KeyValuePair<string, double[]>(Key, history)], candidates, options);
        BacktestReport single = Backtester.Run(history, candidates, options);
        Assert.Equal(single.Candidates.SelectMany(c => c.Horizons), many[0].Value.Candidates.SelectMany(c => c.Horizons));
        Assert.Equal(single.NaiveScale, many[0].Value.NaiveScale);
    }
}
