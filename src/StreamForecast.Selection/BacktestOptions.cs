using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection.Internal;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Selection;

/// <summary>
/// The settings of a rolling-origin backtest (<see cref="Backtester"/>): where forecasting starts, how far ahead each
/// origin forecasts, the MASE season length, the ranking statistic and the parallelism over keys.
/// </summary>
/// <remarks>
/// <para><b>Origins.</b> With a history y₁ … yₙ, the forecaster is fed y₁ … y_t for each origin t from
/// <see cref="FirstOrigin"/> to n − 1, and at each origin forecasts y(t+h) for h = 1 … <see cref="Horizon"/> (as far as
/// the history reaches). Horizon h is therefore scored over the n − <see cref="FirstOrigin"/> − h + 1 origins that have an
/// actual h periods later.</para>
/// <para><b>Gaps.</b> A NaN in a history marks a period with no observation; <see cref="Gaps"/> decides what it means,
/// exactly as <see cref="SeriesOptions.Gaps"/> does for the engine (every candidate runs the engine's own per-period step,
/// <see cref="SeriesStep{TKey}"/>). Origins and horizons then count the periods the step published a forecast for: a
/// period skipped as <see cref="GapPolicy.Missing"/> is neither an origin nor a target.</para>
/// <para>Immutable and safe to share across threads. Validated at construction.</para>
/// </remarks>
public sealed record BacktestOptions
{
    /// <summary>The largest horizon accepted.</summary>
    public const int MaxHorizon = 1_000;

    /// <summary>Creates backtest options.</summary>
    /// <param name="firstOrigin">
    /// The number of actuals the forecaster has seen at the first origin, 1 or more: the first forecasts are for period
    /// <paramref name="firstOrigin"/> + 1 onwards. Everything before it is warm-up (and, for the tuner, the fitting window).
    /// </param>
    /// <param name="horizon">The furthest horizon H scored at each origin, 1 (the default) to <see cref="MaxHorizon"/>.</param>
    /// <param name="seasonLength">
    /// The season length m of the MASE scale, 1 (the default, the plain naive forecast) to 100,000: MASE divides each
    /// horizon's MAD by the in-sample mean absolute error of the forecast "same as m periods ago" over the whole history.
    /// </param>
    /// <param name="metric">The statistic candidates are ranked by; default <see cref="RankingMetric.Rmse"/>.</param>
    /// <param name="tracking">
    /// The error-tracker settings of the one-step tracking (Trigg's β, the σ rule) whose tracking-signal behaviour is
    /// reported; default <see cref="ErrorTrackerOptions.Default"/>.
    /// </param>
    /// <param name="signalWarmUpPeriods">
    /// The scored one-step periods left out of the reported maximum |tracking signal| and |Trigg signal|, 0 to 1,000,000:
    /// both signals are ±1 or ±n after a few same-signed errors, as a drift rule's warm-up knows. Default 8, the drift
    /// rules' default warm-up (<see cref="DriftRuleOptions.DefaultWarmUpPeriods"/>).
    /// </param>
    /// <param name="maxDegreeOfParallelism">
    /// The most keys evaluated at once by <see cref="Backtester.RunMany{TKey}"/>, 1 to 4,096; null (the default) means one
    /// worker per core. Results do not depend on it.
    /// </param>
    /// <param name="intervalMultiplier">
    /// The normal multiplier z of the intervals whose coverage is reported (default 1.2816, 80%; above 0, at most 10), as
    /// <see cref="Streaming.SeriesOptions.IntervalMultiplier"/>.
    /// </param>
    /// <param name="empiricalIntervals">
    /// Empirical intervals instead of normal ones, as <see cref="Streaming.SeriesOptions.EmpiricalIntervals"/> (default
    /// null): each horizon keeps a window of its own scored errors; while it holds too few, the normal interval of the same
    /// coverage is scored, as live.
    /// </param>
    /// <param name="nonNegative">
    /// Whether forecasts and interval bounds are clipped at zero before scoring, as
    /// <see cref="Streaming.SeriesOptions.NonNegative"/> (default false).
    /// </param>
    /// <param name="gaps">
    /// What a NaN (a period with no observation) in a history means, as <see cref="SeriesOptions.Gaps"/>; default
    /// <see cref="GapPolicy.Zero"/>, the engine's default. Irrelevant for histories without NaN.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A number is outside its stated range.</exception>
    public BacktestOptions(
        int firstOrigin,
        int horizon = 1,
        int seasonLength = 1,
        RankingMetric metric = RankingMetric.Rmse,
        ErrorTrackerOptions? tracking = null,
        int signalWarmUpPeriods = DriftRuleOptions.DefaultWarmUpPeriods,
        int? maxDegreeOfParallelism = null,
        double intervalMultiplier = NormalMultiplier.Coverage80,
        EmpiricalIntervalOptions? empiricalIntervals = null,
        bool nonNegative = false,
        GapPolicy gaps = GapPolicy.Zero)
    {
        if (firstOrigin < 1)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(firstOrigin), firstOrigin, "the first origin counts the actuals seen before the first forecast and must be 1 or more");
        }

        if (horizon is < 1 or > MaxHorizon)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(horizon), horizon, "the horizon must be between 1 and 1,000 periods");
        }

        if (seasonLength is < 1 or > ErrorTrackerOptions.MaxSeasonLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the MASE season length must be between 1 and 100,000 periods");
        }

        if (metric is not (RankingMetric.Rmse or RankingMetric.Mad))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(metric), metric, "the ranking metric must be Rmse or Mad");
        }

        if (signalWarmUpPeriods is < 0 or > DriftRuleOptions.MaxWarmUpPeriods)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(signalWarmUpPeriods), signalWarmUpPeriods, "the signal warm-up must be between 0 and 1,000,000 periods");
        }

        if (!(intervalMultiplier > 0 && intervalMultiplier <= 10))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(intervalMultiplier), intervalMultiplier, "the interval multiplier z must be above 0 and at most 10 (1.2816 for 80%, 1.96 for 95%)");
        }

        if (gaps is not (GapPolicy.Zero or GapPolicy.Missing or GapPolicy.CarryForward))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(gaps), gaps, "the gap policy must be Zero, Missing or CarryForward");
        }

        SelectionThrowHelper.ResolveParallelism(maxDegreeOfParallelism, nameof(maxDegreeOfParallelism));
        FirstOrigin = firstOrigin;
        Horizon = horizon;
        SeasonLength = seasonLength;
        Metric = metric;
        Tracking = tracking ?? ErrorTrackerOptions.Default;
        SignalWarmUpPeriods = signalWarmUpPeriods;
        MaxDegreeOfParallelism = maxDegreeOfParallelism;
        IntervalMultiplier = intervalMultiplier;
        EmpiricalIntervals = empiricalIntervals;
        NonNegative = nonNegative;
        Gaps = gaps;
        IntervalCoverage = SeriesFor(new NaiveOptions()).IntervalCoverage;

        // The MASE scale runs the same step (so gaps are resolved as for the candidates) with a tracker of season m.
        NaiveScaleSeries = new SeriesOptions(new NaiveOptions(), s_periods, gaps: gaps, tracking: new ErrorTrackerOptions(seasonLength: seasonLength));
    }

    /// <summary>The calendar the backtest's steps number their periods in (1, 2, … for the history's values).</summary>
    private static readonly PeriodCalendar s_periods = PeriodCalendar.FixedInterval(TimeSpan.FromDays(1));

    /// <summary>The normal multiplier z of the scored intervals (unused with empirical intervals but for their warm-up).</summary>
    public double IntervalMultiplier { get; }

    /// <summary>The empirical-interval settings; null for normal intervals.</summary>
    public EmpiricalIntervalOptions? EmpiricalIntervals { get; }

    /// <summary>Whether forecasts and interval bounds are clipped at zero before scoring.</summary>
    public bool NonNegative { get; }

    /// <summary>The nominal coverage of the scored intervals (see <see cref="Streaming.SeriesOptions.IntervalCoverage"/>).</summary>
    public double IntervalCoverage { get; }

    /// <summary>What a NaN (a period with no observation) in a history means.</summary>
    public GapPolicy Gaps { get; }

    /// <summary>The series options of the step that computes the MASE scale of a history.</summary>
    internal SeriesOptions NaiveScaleSeries { get; }

    /// <summary>The number of actuals seen at the first origin.</summary>
    public int FirstOrigin { get; }

    /// <summary>The furthest horizon H scored at each origin.</summary>
    public int Horizon { get; }

    /// <summary>The season length m of the MASE scale.</summary>
    public int SeasonLength { get; }

    /// <summary>The statistic candidates are ranked by.</summary>
    public RankingMetric Metric { get; }

    /// <summary>The settings of the one-step error tracker.</summary>
    public ErrorTrackerOptions Tracking { get; }

    /// <summary>The scored one-step periods left out of the reported signal maxima.</summary>
    public int SignalWarmUpPeriods { get; }

    /// <summary>The most keys evaluated at once; null for one worker per core.</summary>
    public int? MaxDegreeOfParallelism { get; }

    /// <summary>The series options the engine would run <paramref name="method"/> with under these settings (no drift rules).</summary>
    /// <param name="method">The candidate method.</param>
    /// <returns>Fresh options; O(1).</returns>
    internal SeriesOptions SeriesFor(ForecasterOptions method) =>
        new(method, s_periods, gaps: Gaps, tracking: Tracking, horizon: Horizon, intervalMultiplier: IntervalMultiplier,
            empiricalIntervals: EmpiricalIntervals, nonNegative: NonNegative);
}
