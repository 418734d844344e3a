using System.Collections.Immutable;
using StreamForecast.Classification;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;

namespace StreamForecast.Selection;

/// <summary>
/// Chooses a forecasting method per series from its history: fits the parameters of each family on the first part of
/// the history, backtests every candidate on the rest with <see cref="Backtester"/>, and picks the best.
/// </summary>
/// <remarks>
/// <para><b>Candidates</b>, in this order (the order breaks ties):</para>
/// <list type="number">
/// <item><description><see cref="TuningOptions.DefaultMethod"/>; because it is a candidate and wins ties, the chosen method is
/// never worse than the default in the backtest when the default forecast at every origin.</description></item>
/// <item><description>The naive forecast, and the seasonal naive forecast when the season length m ≥ 2.</description></item>
/// <item><description>Every moving-average length from <see cref="TuningOptions.MinMovingAverageLength"/> to
/// <see cref="TuningOptions.MaxMovingAverageLength"/> that fits in the fitting window.</description></item>
/// <item><description>A weighted moving average of <see cref="TuningOptions.WeightedLength"/> periods with fitted weights
/// (<see cref="MethodFitter.FitWeightedMovingAverage"/>).</description></item>
/// <item><description>Single exponential smoothing with fitted α; with <see cref="TuningOptions.IncludeTrend"/>, Holt's method
/// fitted undamped and damped.</description></item>
/// <item><description>With m ≥ 2, Holt-Winters fitted additive, and multiplicative when every actual of the fitting window is
/// above zero; with <see cref="TuningOptions.IncludeTrend"/> each also with a damped trend. With
/// <see cref="TuningOptions.FitStartValues"/>, beside each fixed-start fit: the same weights with the start level, trend and
/// indices fitted by least squares; and for the variant with the lowest fixed-start error on the fitting window (the leading
/// one) one round of block-coordinate descent from there: its weights searched again with that fitted start held, then the
/// start solved again for the new weights. A fitted start is kept only where it is no worse in sample than the fixed start,
/// but it can forecast worse out of sample (it lets the seasonal weight fall towards 0), so the backtest decides.</description></item>
/// <item><description>When <see cref="TuningOptions.PeriodLength"/> divides a day into m₁ ≥ 2 periods, Holt-Winters with two
/// seasonal cycles (the day m₁ and the week 7·m₁), fitted additive, and multiplicative under the same condition.</description></item>
/// <item><description>When the fitting window is non-negative and its demand class (<see cref="DemandClassifier"/>) is
/// intermittent or lumpy: Croston, SBA and TSB with each weight of <see cref="TuningOptions.IntermittentWeights"/> (every
/// pair for TSB). For the other classes, the intermittent-demand methods that
/// <see cref="DemandClassifier.SuggestMethods"/> names (Croston for smooth, SBA for erratic demand).</description></item>
/// </list>
/// <para>A family whose fit is impossible (a window too short, a method that rejects the data) is left out; duplicates of an
/// earlier candidate are dropped.</para>
/// <para><b>Split.</b> Parameters are fitted on the first <see cref="TuningOptions.FirstOriginFor"/> actuals only; the backtest
/// forecasts from that origin on, so its numbers are out of sample for every fitted parameter. The chosen options are exactly
/// the backtested ones.</para>
/// <para><b>Thread safety.</b> All members are static and thread-safe. <see cref="TuneMany{TKey}"/> tunes keys in parallel;
/// every key's result depends only on its own history, so results are identical whatever the scheduling.</para>
/// </remarks>
public static class SeriesTuner
{
    private const SuggestedMethods IntermittentFamilies = SuggestedMethods.Croston | SuggestedMethods.SyntetosBoylan | SuggestedMethods.Tsb;

    /// <summary>
    /// With <see cref="TuningOptions.FitStartValues"/>, how many Holt-Winters variants get their weights refined with their
    /// fitted start (see <see cref="AddHoltWinters"/>): the leading one only. Measured on invented daily series
    /// (benchmarks/README.md, issue 15 target 5): the joint fit of start and weights for every variant cost 5.4 times the CPU
    /// of tuning without fitted starts, for the leader alone 2.6 times (5.0 times against the later, faster fixed-start
    /// fits); the one-round refinement that replaced it costs about as much as one fixed-start fit.
    /// </summary>
    private const int LeadingStartFits = 1;

    /// <summary>Tunes one series.</summary>
    /// <param name="series">The history, oldest first; every value finite.</param>
    /// <param name="options">The tuning settings; <see cref="TuningOptions.Default"/> when null.</param>
    /// <returns>The chosen method with the ranking of every candidate.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A value of <paramref name="series"/> is NaN or infinite.</exception>
    /// <remarks>
    /// A history no longer than the fitting window leaves nothing to backtest: every candidate is incomplete and the default
    /// method is chosen.
    /// </remarks>
    public static TuningResult Tune(ReadOnlySpan<double> series, TuningOptions? options = null)
    {
        SelectionThrowHelper.CheckFinite(series, nameof(series));
        return TuneChecked(series, options ?? TuningOptions.Default);
    }

    /// <summary>Tunes many series in parallel and returns one result per key, in the order the keys were given.</summary>
    /// <typeparam name="TKey">The series key.</typeparam>
    /// <param name="histories">The histories by key; each oldest first, every value finite.</param>
    /// <param name="options">The tuning settings, including the degree of parallelism; <see cref="TuningOptions.Default"/> when null.</param>
    /// <param name="cancellationToken">Stops the run between keys.</param>
    /// <returns>One result per key, in input order; identical whatever the degree of parallelism.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="histories"/> is null.</exception>
    /// <exception cref="ArgumentException">A history is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A history has a NaN or infinite value (the message names the key and position); nothing is run.</exception>
    /// <exception cref="OperationCanceledException"><paramref name="cancellationToken"/> was cancelled.</exception>
    public static ImmutableArray<KeyValuePair<TKey, TuningResult>> TuneMany<TKey>(
        IReadOnlyList<KeyValuePair<TKey, double[]>> histories,
        TuningOptions? options = null,
        CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(histories);
        Backtester.CheckHistories(histories, nameof(histories));
        TuningOptions settings = options ?? TuningOptions.Default;
        int degree = SelectionThrowHelper.ResolveParallelism(settings.MaxDegreeOfParallelism, nameof(options));
        TuningResult[] results = KeyedParallel.Run(histories, pair => TuneChecked(pair.Value, settings), degree, cancellationToken);
        var builder = ImmutableArray.CreateBuilder<KeyValuePair<TKey, TuningResult>>(results.Length);
        for (int i = 0; i < results.Length; i++)
        {
            builder.Add(new KeyValuePair<TKey, TuningResult>(histories[i].Key, results[i]));
        }

        return builder.MoveToImmutable();
    }

    /// <summary>The candidate list for a checked history (exposed to tests).</summary>
    internal static List<ForecasterOptions> Candidates(ReadOnlySpan<double> series, TuningOptions options, int firstOrigin, out DemandClassification demand)
    {
        ReadOnlySpan<double> window = series[..Math.Min(firstOrigin, series.Length)];
        var list = new List<ForecasterOptions>();
        var seen = new HashSet<ForecasterOptions>();
        void Add(ForecasterOptions candidate)
        {
            if (seen.Add(candidate))
            {
                list.Add(candidate);
            }
        }

        Add(options.DefaultMethod);
        Add(new NaiveOptions());
        int m = options.SeasonLength;
        if (m >= 2 && m <= NaiveOptions.MaxSeasonLength)
        {
            Add(new NaiveOptions(m));
        }

        for (int length = options.MinMovingAverageLength; length <= options.MaxMovingAverageLength && length <= firstOrigin; length++)
        {
            Add(new MovingAverageOptions(length));
        }

        double[] training = window.ToArray();
        if (options.WeightedLength >= 1)
        {
            TryAdd(Add, () => MethodFitter.FitWeightedMovingAverage(training, options.WeightedLength));
        }

        TryAdd(Add, () => MethodFitter.FitExponentialSmoothing(training));
        if (options.IncludeTrend)
        {
            TryAdd(Add, () => MethodFitter.FitHolt(training));
            TryAdd(Add, () => MethodFitter.FitHolt(training, damped: true));
        }

        bool nonNegative = AllAtLeast(series, 0, inclusive: true);
        if (m >= 2)
        {
            AddHoltWinters(Add, training, m, options, positive: nonNegative && AllAtLeast(window, 0, inclusive: false));
        }

        if (options.TryDayAndWeek(out int day, out int week))
        {
            TryAdd(Add, () => MethodFitter.FitTwoSeasonHoltWinters(training, day, week, Seasonality.Additive));
            if (nonNegative && AllAtLeast(window, 0, inclusive: false))
            {
                TryAdd(Add, () => MethodFitter.FitTwoSeasonHoltWinters(training, day, week, Seasonality.Multiplicative));
            }
        }

        demand = nonNegative ? DemandClassifier.Classify(window, options.Classifier) : default;
        SuggestedMethods families = demand.Class is DemandClass.Intermittent or DemandClass.Lumpy
            ? IntermittentFamilies
            : DemandClassifier.SuggestMethods(demand.Class) & IntermittentFamilies;
        if (nonNegative && families != SuggestedMethods.None)
        {
            foreach (double w in options.IntermittentWeights)
            {
                if ((families & SuggestedMethods.Croston) != 0)
                {
                    Add(new CrostonOptions(w));
                }

                if ((families & SuggestedMethods.SyntetosBoylan) != 0)
                {
                    Add(new CrostonOptions(w, variant: CrostonVariant.SyntetosBoylan));
                }
            }

            if ((families & SuggestedMethods.Tsb) != 0)
            {
                foreach (double probability in options.IntermittentWeights)
                {
                    foreach (double size in options.IntermittentWeights)
                    {
                        Add(new TsbOptions(probability, size));
                    }
                }
            }
        }

        return list;
    }

    private static TuningResult TuneChecked(ReadOnlySpan<double> series, TuningOptions options)
    {
        int firstOrigin = options.FirstOriginFor(series.Length);
        List<ForecasterOptions> candidates = Candidates(series, options, firstOrigin, out DemandClassification demand);
        var backtest = new BacktestOptions(firstOrigin, options.Horizon, options.SeasonLength, options.Metric, options.Tracking);
        BacktestReport report = Backtester.RunChecked(series, candidates, backtest);
        return new TuningResult(options, firstOrigin, demand, report);
    }

    /// <summary>
    /// The fixed-start Holt-Winters fits (additive, multiplicative when <paramref name="positive"/>, each also damped with
    /// <see cref="TuningOptions.IncludeTrend"/>). With <see cref="TuningOptions.FitStartValues"/>, right after each fixed-start
    /// fit: its start state fitted with its weights kept (one least-squares solve), and for the <see cref="LeadingStartFits"/>
    /// variant(s) with the lowest fixed-start error on the fitting window, one round of block-coordinate descent from that
    /// start (<see cref="HoltWintersStartFit.FitAlternating"/>: the weights searched with the start held, then the start solved
    /// for the new weights; before issue 15's tuning-speed work, the joint fit of <see cref="MethodFitter.FitHoltWinters"/>
    /// with fitStartValues, which solved a start for every trial of weights and cost 3 to 10 times as much). Each fitted start
    /// is kept only where it is no worse in sample than its fixed start; the backtest then chooses.
    /// </summary>
    private static void AddHoltWinters(Action<ForecasterOptions> add, double[] training, int m, TuningOptions options, bool positive)
    {
        Span<(Seasonality Seasonality, bool Damped)> variants = stackalloc (Seasonality, bool)[4];
        int count = 0;
        foreach (bool damped in options.IncludeTrend ? (bool[])[false, true] : [false])
        {
            variants[count++] = (Seasonality.Additive, damped);
            if (positive)
            {
                variants[count++] = (Seasonality.Multiplicative, damped);
            }
        }

        var fits = new FittedMethod?[count];
        for (int i = 0; i < count; i++)
        {
            (Seasonality seasonality, bool damped) = variants[i];
            fits[i] = TryFit(() => MethodFitter.FitHoltWinters(training, m, seasonality, damped));
        }

        // Every fixed-start fit is scored on the same periods (2m + 1 … n of the window), so their errors compare.
        Span<bool> refine = stackalloc bool[count];
        for (int k = 0; k < LeadingStartFits && options.FitStartValues; k++)
        {
            int best = -1;
            for (int i = 0; i < count; i++)
            {
                if (fits[i] is { } fit && !refine[i] && (best < 0 || fit.SumOfSquaredErrors < fits[best]!.SumOfSquaredErrors))
                {
                    best = i;
                }
            }

            if (best >= 0)
            {
                refine[best] = true;
            }
        }

        for (int i = 0; i < count; i++)
        {
            if (fits[i] is { } fit)
            {
                add(fit.Method);
                FittedMethod? atFixedWeights = options.FitStartValues ? TryFit(() => HoltWintersStartFit.FitAtFixedWeights(training, fit)) : null;
                if (atFixedWeights is not null)
                {
                    add(atFixedWeights.Method);
                    if (refine[i])
                    {
                        TryAdd(add, () => HoltWintersStartFit.FitAlternating(training, fit, atFixedWeights));
                    }
                }
            }
        }
    }

    private static FittedMethod? TryFit(Func<FittedMethod> fit)
    {
        try
        {
            return fit();
        }
        catch (ArgumentException)
        {
            // Too short a window, or a method that rejects this history for every parameter: not a candidate.
            return null;
        }
    }

    private static void TryAdd(Action<ForecasterOptions> add, Func<FittedMethod> fit)
    {
        try
        {
            add(fit().Method);
        }
        catch (ArgumentException)
        {
            // Too short a window, or a method that rejects this history for every parameter: not a candidate.
        }
    }

    private static bool AllAtLeast(ReadOnlySpan<double> values, double bound, bool inclusive)
    {
        foreach (double v in values)
        {
            if (inclusive ? v < bound : v <= bound)
            {
                return false;
            }
        }

        return true;
    }
}
