using System.Collections.Immutable;
using StreamForecast.Classification;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;
using StreamForecast.Tracking;

namespace StreamForecast.Selection;

/// <summary>
/// The settings of per-series tuning (<see cref="SeriesTuner"/>): the default method, which families are searched, how the
/// history splits into a fitting window and a backtest, and how candidates are ranked.
/// </summary>
/// <remarks>Immutable and safe to share across threads. Validated at construction; every parameter has a documented default.</remarks>
public sealed record TuningOptions
{
    /// <summary>The default method's smoothing weight: 0.2 (common practice: α between 0.1 and 0.3).</summary>
    public const double DefaultMethodAlpha = 0.2;

    private readonly ImmutableArray<double> _intermittentWeights;
    private readonly TimeSpan? _periodLength;

    /// <summary>Creates tuning options.</summary>
    /// <param name="defaultMethod">
    /// The method a series gets without tuning; it is always a candidate, listed first so that it wins ties, which makes the
    /// chosen method never worse than it in the backtest. Default: single exponential smoothing with α = 0.2
    /// (<see cref="DefaultMethodAlpha"/>).
    /// </param>
    /// <param name="horizon">The furthest horizon H backtested, 1 (the default) to 1,000; candidates are ranked on horizons 1 … H.</param>
    /// <param name="seasonLength">
    /// The season length m, 1 (the default: no seasonal methods) to 100,000. With m ≥ 2 the seasonal naive forecast and
    /// Holt-Winters (additive, and multiplicative when every actual is above zero) are candidates, and MASE uses the seasonal
    /// naive scale.
    /// </param>
    /// <param name="trainingFraction">
    /// The share of the history, above 0 and below 1, used to fit parameters; the backtest scores the rest (origins from there
    /// on), so the reported accuracy is out of sample for every fitted parameter. Default 0.5. Ignored when
    /// <paramref name="firstOrigin"/> is given.
    /// </param>
    /// <param name="firstOrigin">The number of actuals in the fitting window and the first backtest origin, 1 or more; null (the default) uses <paramref name="trainingFraction"/>.</param>
    /// <param name="minMovingAverageLength">The shortest moving average searched, 1 to 1,000,000; default 2.</param>
    /// <param name="maxMovingAverageLength">
    /// The longest moving average searched, at least <paramref name="minMovingAverageLength"/>; default 12. Every length is a
    /// backtest candidate; lengths longer than the fitting window are skipped.
    /// </param>
    /// <param name="weightedLength">The window of the fitted weighted moving average, 0 (none) to 200; default 3.</param>
    /// <param name="includeTrend">Whether Holt's method, undamped and damped, is fitted, and Holt-Winters also damped; default true.</param>
    /// <param name="intermittentWeights">
    /// The smoothing weights tried for Croston, SBA and TSB (every pair for TSB), each in (0, 1]; default 0.05, 0.1, 0.2
    /// (common practice: Croston-family weights of 0.05–0.2).
    /// </param>
    /// <param name="metric">The ranking statistic; default <see cref="RankingMetric.Rmse"/>.</param>
    /// <param name="tracking">
    /// The error-tracker settings of the one-step tracking signals reported by the backtest and written to the series options;
    /// default <see cref="ErrorTrackerOptions.Default"/> with its MASE season length set to <paramref name="seasonLength"/>.
    /// </param>
    /// <param name="classifier">The demand-class cut-offs; default <see cref="DemandClassifierOptions.Default"/>.</param>
    /// <param name="maxDegreeOfParallelism">The most series tuned at once by <see cref="SeriesTuner.TuneMany{TKey}"/>, 1 to 4,096; null (the default) means one per core.</param>
    /// <param name="fitStartValues">
    /// Whether Holt-Winters candidates are also fitted with their start level, trend and seasonal indices estimated: for every
    /// variant with its fixed-start weights kept (one least-squares solve), and for the variant with the lowest fixed-start
    /// error also with its weights refined once with that start held and the start then solved again for the new weights
    /// (one round of block-coordinate descent on the one-step squared error); default false. It lowers the in-sample error;
    /// on invented two-year daily series with a weekly season it costs about 1.2–1.3 times the CPU of tuning without it and
    /// lowers the average backtest error (benchmarks/README.md, issue 15 target 5), and the backtest keeps the fixed-start fit
    /// where that forecasts better out of sample. <see cref="MethodFitter.FitHoltWinters"/> with fitStartValues is the full
    /// joint fit (a start solved for every trial of weights), several times costlier.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A number is outside its stated range.</exception>
    public TuningOptions(
        ForecasterOptions? defaultMethod = null,
        int horizon = 1,
        int seasonLength = 1,
        double trainingFraction = 0.5,
        int? firstOrigin = null,
        int minMovingAverageLength = 2,
        int maxMovingAverageLength = 12,
        int weightedLength = 3,
        bool includeTrend = true,
        ImmutableArray<double> intermittentWeights = default,
        RankingMetric metric = RankingMetric.Rmse,
        ErrorTrackerOptions? tracking = null,
        DemandClassifierOptions? classifier = null,
        int? maxDegreeOfParallelism = null,
        bool fitStartValues = false)
    {
        if (horizon is < 1 or > BacktestOptions.MaxHorizon)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(horizon), horizon, "the horizon must be between 1 and 1,000 periods");
        }

        if (seasonLength is < 1 or > ErrorTrackerOptions.MaxSeasonLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the season length must be between 1 and 100,000 periods");
        }

        if (!(trainingFraction > 0 && trainingFraction < 1))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(trainingFraction), trainingFraction, "the training fraction must be above 0 and below 1");
        }

        if (firstOrigin is int origin && origin < 1)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(firstOrigin), origin, "the first origin must be 1 or more, or null to use the training fraction");
        }

        if (minMovingAverageLength is < 1 or > MovingAverageOptions.MaxLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(minMovingAverageLength), minMovingAverageLength, "the shortest moving average must be between 1 and 1,000,000 periods");
        }

        if (maxMovingAverageLength < minMovingAverageLength || maxMovingAverageLength > MovingAverageOptions.MaxLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(maxMovingAverageLength), maxMovingAverageLength, "the longest moving average must be at least the shortest and at most 1,000,000 periods");
        }

        if (weightedLength is < 0 or > MethodFitter.MaxWeightedLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(weightedLength), weightedLength, "the weighted window must be between 0 (none) and 200 periods");
        }

        ImmutableArray<double> weights = intermittentWeights.IsDefault ? [0.05, 0.1, 0.2] : intermittentWeights;
        foreach (double w in weights)
        {
            if (!(w > 0 && w <= 1))
            {
                SelectionThrowHelper.ThrowOutOfRange(nameof(intermittentWeights), w, "every intermittent-demand smoothing weight must be greater than 0 and at most 1");
            }
        }

        if (metric is not (RankingMetric.Rmse or RankingMetric.Mad))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(metric), metric, "the ranking metric must be Rmse or Mad");
        }

        SelectionThrowHelper.ResolveParallelism(maxDegreeOfParallelism, nameof(maxDegreeOfParallelism));
        DefaultMethod = defaultMethod ?? new ExponentialSmoothingOptions(DefaultMethodAlpha);
        Horizon = horizon;
        SeasonLength = seasonLength;
        TrainingFraction = trainingFraction;
        FirstOrigin = firstOrigin;
        MinMovingAverageLength = minMovingAverageLength;
        MaxMovingAverageLength = maxMovingAverageLength;
        WeightedLength = weightedLength;
        IncludeTrend = includeTrend;
        _intermittentWeights = weights;
        Metric = metric;
        Tracking = tracking ?? new ErrorTrackerOptions(seasonLength: seasonLength);
        Classifier = classifier ?? DemandClassifierOptions.Default;
        MaxDegreeOfParallelism = maxDegreeOfParallelism;
        FitStartValues = fitStartValues;
    }

    /// <summary>The options with every default.</summary>
    public static TuningOptions Default { get; } = new();

    /// <summary>The method a series gets without tuning; always the first candidate.</summary>
    public ForecasterOptions DefaultMethod { get; }

    /// <summary>The furthest horizon backtested.</summary>
    public int Horizon { get; }

    /// <summary>The season length m (1: no seasonal methods).</summary>
    public int SeasonLength { get; }

    /// <summary>The share of the history used to fit parameters when <see cref="FirstOrigin"/> is null.</summary>
    public double TrainingFraction { get; }

    /// <summary>The fitting window and first backtest origin; null to use <see cref="TrainingFraction"/>.</summary>
    public int? FirstOrigin { get; }

    /// <summary>The shortest moving average searched.</summary>
    public int MinMovingAverageLength { get; }

    /// <summary>The longest moving average searched.</summary>
    public int MaxMovingAverageLength { get; }

    /// <summary>The window of the fitted weighted moving average; 0 for none.</summary>
    public int WeightedLength { get; }

    /// <summary>Whether Holt's method (undamped and damped) is fitted.</summary>
    public bool IncludeTrend { get; }

    /// <summary>The smoothing weights tried for the intermittent-demand methods.</summary>
    public ImmutableArray<double> IntermittentWeights => _intermittentWeights;

    /// <summary>The ranking statistic.</summary>
    public RankingMetric Metric { get; }

    /// <summary>The error-tracker settings for the backtest's one-step signals and the written series options.</summary>
    public ErrorTrackerOptions Tracking { get; }

    /// <summary>The demand-class cut-offs.</summary>
    public DemandClassifierOptions Classifier { get; }

    /// <summary>The most series tuned at once; null for one per core.</summary>
    public int? MaxDegreeOfParallelism { get; }

    /// <summary>Whether Holt-Winters candidates are also fitted with estimated start values.</summary>
    public bool FitStartValues { get; }

    /// <summary>
    /// The length of one period when every period has the same length (a fixed-interval calendar's
    /// <see cref="Periods.PeriodCalendar.NominalLength"/>); null (the default) when unknown or not fixed. When it is shorter than a
    /// day and divides the day into 2 or more whole periods, the tuner adds Holt-Winters with two seasonal cycles, the day
    /// (m₁ periods) and the week (7·m₁, at most 100,000), as candidates (<see cref="MethodFitter.FitTwoSeasonHoltWinters"/>).
    /// Daily and weekly periods never get them.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">The value is zero or negative.</exception>
    public TimeSpan? PeriodLength
    {
        get => _periodLength;
        init
        {
            if (value is TimeSpan length && length <= TimeSpan.Zero)
            {
                SelectionThrowHelper.ThrowOutOfRange(nameof(PeriodLength), length, "the period length must be positive, or null when unknown");
            }

            _periodLength = value;
        }
    }

    /// <summary>
    /// The day and week in periods from <see cref="PeriodLength"/>: true when a period is shorter than a day, a day holds a
    /// whole number m₁ ≥ 2 of periods, and a week (7·m₁) is at most <see cref="HoltWintersOptions.MaxSeasonLength"/>.
    /// </summary>
    internal bool TryDayAndWeek(out int day, out int week)
    {
        day = week = 0;
        if (_periodLength is not TimeSpan length || length >= TimeSpan.FromDays(1) || TimeSpan.TicksPerDay % length.Ticks != 0)
        {
            return false;
        }

        long perDay = TimeSpan.TicksPerDay / length.Ticks;
        if (perDay < 2 || 7 * perDay > HoltWintersOptions.MaxSeasonLength)
        {
            return false;
        }

        day = (int)perDay;
        week = 7 * day;
        return true;
    }

    /// <summary>The first backtest origin (and size of the fitting window) for a history of <paramref name="length"/> actuals.</summary>
    /// <param name="length">The number of actuals.</param>
    /// <returns><see cref="FirstOrigin"/> if given, else ⌊<see cref="TrainingFraction"/>·length⌋, at least 1.</returns>
    public int FirstOriginFor(int length) => FirstOrigin ?? Math.Max(1, (int)Math.Floor(TrainingFraction * length));

    /// <summary>Equal when every setting is equal (the intermittent weights element by element).</summary>
    /// <param name="other">The other options.</param>
    /// <returns>Whether both describe the same tuning.</returns>
    public bool Equals(TuningOptions? other) =>
        other is not null
        && DefaultMethod.Equals(other.DefaultMethod)
        && Horizon == other.Horizon
        && SeasonLength == other.SeasonLength
        && TrainingFraction.Equals(other.TrainingFraction)
        && FirstOrigin == other.FirstOrigin
        && MinMovingAverageLength == other.MinMovingAverageLength
        && MaxMovingAverageLength == other.MaxMovingAverageLength
        && WeightedLength == other.WeightedLength
        && IncludeTrend == other.IncludeTrend
        && _intermittentWeights.AsSpan().SequenceEqual(other._intermittentWeights.AsSpan())
        && Metric == other.Metric
        && Tracking.Equals(other.Tracking)
        && Classifier.Equals(other.Classifier)
        && MaxDegreeOfParallelism == other.MaxDegreeOfParallelism
        && _periodLength == other._periodLength
        && FitStartValues == other.FitStartValues;

    /// <inheritdoc/>
    public override int GetHashCode() => HashCode.Combine(DefaultMethod, Horizon, SeasonLength, TrainingFraction, FirstOrigin, MaxMovingAverageLength, WeightedLength, Metric);
}
