using System.Collections.Immutable;
using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Selection;

/// <summary>
/// Rolling-origin backtests of candidate forecasting methods over a series' history, running the engine's own per-period
/// step (<see cref="SeriesStep{TKey}"/>: gap policy, method, error tracking, intervals): the forecasts scored are the ones
/// the engine would have published for the same period totals.
/// </summary>
/// <remarks>
/// <para><b>Method.</b> For each candidate one step runs through the history once, exactly as the engine: after period t
/// its model is the one "fed y₁ … y_t" (as the gap policy resolved them), and for every origin t ≥
/// <see cref="BacktestOptions.FirstOrigin"/> its forecasts for h = 1 … H (<see cref="SeriesStep{TKey}.GetForecast"/>: the
/// engine's <see cref="ForecastUpdate{TKey}.Next"/> for h = 1 and <see cref="ForecastUpdate{TKey}.AtHorizon"/> for h = H)
/// are held until the actual they were made for arrives, which is then scored by the horizon's <see cref="ErrorTracker"/>
/// (a forecast is always scored against the period it was made for). Nothing is re-fitted per origin: a method's
/// parameters are fixed by its options and its state only ever moves forward, which is what re-feeding a fresh
/// forecaster at each origin would give, at O(n·H) instead of O(n²·H).</para>
/// <para><b>Gaps.</b> NaN in a history marks a period with no observation, resolved by <see cref="BacktestOptions.Gaps"/>
/// as the engine resolves it: a zero that is scored, a period skipped (neither an origin nor a target; horizons count
/// the periods the step published), or the last actual carried into the model without being scored (an origin, not a
/// target).</para>
/// <para><b>Intervals and signals.</b> Each held forecast keeps the interval the engine publishes with it (normal from the
/// one-step tracker's σ, or empirical from the horizon's window of errors, as <see cref="BacktestOptions"/> says);
/// <see cref="HorizonAccuracy.Coverage"/> is the fraction of scored actuals inside their interval, each interval fixed at
/// its origin. As in the engine, the one-step error tracker scores every period from the first one the method is warm
/// for, the warm-up before the first origin included, so σ, the empirical windows and the tracking signals of
/// <see cref="CandidateEvaluation.Signals"/> carry those in-sample errors too; the per-horizon accuracy counts only the
/// forecasts made at origins.</para>
/// <para><b>Cost.</b> The step's cost per period (the method's update plus O(1)) and O(H) per origin, with O(H²) numbers
/// held; empirical intervals add O(n·H·w) for windows of w errors and 16·H·w bytes; one more step over the history
/// computes the MASE scale. <see cref="RunMany{TKey}"/> runs keys in parallel on up to
/// <see cref="BacktestOptions.MaxDegreeOfParallelism"/> workers; candidates of one key run in order on one worker.</para>
/// <para><b>Bad input.</b> A history with an infinite value or one outside <see cref="NumericDomain"/> is rejected with
/// <see cref="ArgumentOutOfRangeException"/> before anything runs. An actual that a candidate's method rejects (for
/// example a negative demand for Croston's method; the engine reports it as a <see cref="SeriesFaultKind.ActualRejected"/>
/// fault) ends that candidate's run: it is reported with <see cref="CandidateEvaluation.Failure"/> and ranked last, and the
/// other candidates are unaffected.</para>
/// <para><b>Thread safety.</b> All members are static and thread-safe; inputs are only read.</para>
/// </remarks>
public static class Backtester
{
    /// <summary>Backtests one candidate on one history.</summary>
    /// <param name="series">
    /// The history y₁ … yₙ, oldest first; NaN marks a period with no observation (a gap, see <see cref="BacktestOptions.Gaps"/>),
    /// every other value inside <see cref="NumericDomain"/>.
    /// </param>
    /// <param name="candidate">The method to evaluate.</param>
    /// <param name="options">The backtest settings.</param>
    /// <returns>The evaluation (its <see cref="CandidateEvaluation.CandidateIndex"/> is 0).</returns>
    /// <exception cref="ArgumentNullException"><paramref name="candidate"/> or <paramref name="options"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value of <paramref name="series"/> is infinite or outside <see cref="NumericDomain"/>; nothing was run.</exception>
    public static CandidateEvaluation Evaluate(ReadOnlySpan<double> series, ForecasterOptions candidate, BacktestOptions options)
    {
        ArgumentNullException.ThrowIfNull(candidate);
        ArgumentNullException.ThrowIfNull(options);
        CheckTotals(series, nameof(series), "value");
        return CandidateRun.Evaluate(series, 0, candidate, options, NaiveScaleOf(series, options));
    }

    /// <summary>Backtests a list of candidates on one history and ranks them.</summary>
    /// <param name="series">
    /// The history y₁ … yₙ, oldest first; NaN marks a period with no observation (a gap, see <see cref="BacktestOptions.Gaps"/>),
    /// every other value inside <see cref="NumericDomain"/>.
    /// </param>
    /// <param name="candidates">The methods to evaluate, at least one; the order breaks ties in the ranking.</param>
    /// <param name="options">The backtest settings.</param>
    /// <returns>The report with every evaluation and the ranking.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="candidates"/>, one of them, or <paramref name="options"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="candidates"/> is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value of <paramref name="series"/> is infinite or outside <see cref="NumericDomain"/>; nothing was run.</exception>
    public static BacktestReport Run(ReadOnlySpan<double> series, IReadOnlyList<ForecasterOptions> candidates, BacktestOptions options)
    {
        CheckCandidates(candidates);
        ArgumentNullException.ThrowIfNull(options);
        CheckTotals(series, nameof(series), "value");
        return RunChecked(series, candidates, options);
    }

    /// <summary>
    /// Backtests the same candidates on many histories, in parallel across keys, and returns one report per key in the
    /// order the keys were given.
    /// </summary>
    /// <typeparam name="TKey">The series key.</typeparam>
    /// <param name="histories">The histories by key; each history oldest first, NaN for a gap, every other value inside <see cref="NumericDomain"/>.</param>
    /// <param name="candidates">The methods to evaluate, at least one.</param>
    /// <param name="options">The backtest settings, including the degree of parallelism.</param>
    /// <param name="cancellationToken">Stops the run between keys.</param>
    /// <returns>One report per key, in input order; identical whatever the degree of parallelism or scheduling.</returns>
    /// <exception cref="ArgumentNullException">An argument, a history or a candidate is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="candidates"/> is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A history has an infinite value or one outside <see cref="NumericDomain"/> (the message names its position); nothing is run.</exception>
    /// <exception cref="OperationCanceledException"><paramref name="cancellationToken"/> was cancelled.</exception>
    public static ImmutableArray<KeyValuePair<TKey, BacktestReport>> RunMany<TKey>(
        IReadOnlyList<KeyValuePair<TKey, double[]>> histories,
        IReadOnlyList<ForecasterOptions> candidates,
        BacktestOptions options,
        CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(histories);
        CheckCandidates(candidates);
        ArgumentNullException.ThrowIfNull(options);
        CheckHistories(histories, nameof(histories), gapsAllowed: true);
        var frozen = candidates.ToImmutableArray();
        int degree = SelectionThrowHelper.ResolveParallelism(options.MaxDegreeOfParallelism, nameof(options));
        BacktestReport[] reports = KeyedParallel.Run(histories, pair => RunChecked(pair.Value, frozen, options), degree, cancellationToken);
        var builder = ImmutableArray.CreateBuilder<KeyValuePair<TKey, BacktestReport>>(reports.Length);
        for (int i = 0; i < reports.Length; i++)
        {
            builder.Add(new KeyValuePair<TKey, BacktestReport>(histories[i].Key, reports[i]));
        }

        return builder.MoveToImmutable();
    }

    /// <summary>
    /// Runs the engine's own per-period step (<see cref="SeriesStep{TKey}"/>) over a history of period totals and sends
    /// every output to <paramref name="sink"/>: the forecast updates, drift-alert transitions and faults the keyed
    /// engine would publish for the same periods, gaps handled by the options' gap policy.
    /// </summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="key">The key carried on the outputs.</param>
    /// <param name="periodTotals">
    /// One total per period in order, starting at <paramref name="firstPeriod"/>; NaN marks a period with no observation
    /// (a gap). Other values must lie inside <see cref="NumericDomain"/>.
    /// </param>
    /// <param name="firstPeriod">The number, in the options' calendar, of the first period.</param>
    /// <param name="options">The series options the engine would run (method, gap policy, tracking, rules, horizon).</param>
    /// <param name="sink">Receives the outputs in period order.</param>
    /// <returns>The step after the last period (its model, statistics and rules), for example to compare final states.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> or <paramref name="sink"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A total is infinite or outside <see cref="NumericDomain"/>; nothing was sent.</exception>
    /// <remarks>
    /// <para>For a history the engine saw as events in period order (no late events), the outputs are identical to the
    /// engine's, field by field (tested). O(1) per period plus the method's update; allocation per output is the sink's.</para>
    /// <para><b>Thread safety.</b> Pure over its arguments; the sink is called from the calling thread only.</para>
    /// </remarks>
    public static SeriesStep<TKey> Replay<TKey>(TKey key, ReadOnlySpan<double> periodTotals, long firstPeriod, SeriesOptions options, ISeriesSink<TKey> sink) =>
        Replay(key, periodTotals, firstPeriod, options, null, sink);

    /// <summary>
    /// Runs the engine's own per-period step over a history of period totals, as <see cref="Replay{TKey}(TKey, ReadOnlySpan{double}, long, SeriesOptions, ISeriesSink{TKey})"/>,
    /// with known events marking periods exactly as an engine given the same <see cref="EventCalendar{TKey}"/> marks them:
    /// marked periods are published with <see cref="ForecastUpdate{TKey}.Event"/>, kept out of the error statistics and
    /// drift rules, and their lift is summed per kind (read it with <see cref="SeriesStep{TKey}.GetEventLift"/> on the result).
    /// </summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="key">The key carried on the outputs (and matched against series and group events; keys compared with <see cref="EqualityComparer{T}.Default"/>).</param>
    /// <param name="periodTotals">One total per period in order; NaN marks a gap. Other values must lie inside <see cref="NumericDomain"/>.</param>
    /// <param name="firstPeriod">The number, in the options' calendar, of the first period.</param>
    /// <param name="options">The series options the engine would run.</param>
    /// <param name="events">The known events (null: none).</param>
    /// <param name="sink">Receives the outputs in period order.</param>
    /// <returns>The step after the last period, with its event lift.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> or <paramref name="sink"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A total is infinite or outside <see cref="NumericDomain"/>; nothing was sent.</exception>
    /// <remarks>Outputs identical to the engine's for events declared before the run (tested). Thread safety: as the overload without events.</remarks>
    public static SeriesStep<TKey> Replay<TKey>(TKey key, ReadOnlySpan<double> periodTotals, long firstPeriod, SeriesOptions options, EventCalendar<TKey>? events, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(sink);
        CheckTotals(periodTotals, nameof(periodTotals), "total");

        var step = new SeriesStep<TKey>(key, options, events);
        for (int t = 0; t < periodTotals.Length; t++)
        {
            double total = periodTotals[t];
            bool has = !double.IsNaN(total);
            step.Close(firstPeriod + t, has, has ? total : 0, sink);
        }

        return step;
    }

    /// <summary>
    /// Checks every history of a keyed list: not null, and every value finite (the tuner) or, with
    /// <paramref name="gapsAllowed"/>, NaN for a gap or inside <see cref="NumericDomain"/> (the backtest).
    /// </summary>
    internal static void CheckHistories<TKey>(IReadOnlyList<KeyValuePair<TKey, double[]>> histories, string paramName, bool gapsAllowed = false)
    {
        for (int i = 0; i < histories.Count; i++)
        {
            double[]? history = histories[i].Value;
            if (history is null)
            {
                SelectionThrowHelper.ThrowArgument(paramName, string.Create(CultureInfo.InvariantCulture, $"The history of key {i} (counting from 0), {histories[i].Key}, is null."));
            }

            for (int t = 0; t < history.Length; t++)
            {
                if (gapsAllowed ? !IsTotal(history[t]) : !double.IsFinite(history[t]))
                {
                    string allowed = gapsAllowed
                        ? "must be NaN for a gap or a finite number of magnitude at most 1e15 (NumericDomain.MaxMagnitude)"
                        : "is not finite; every actual must be a finite number";
                    SelectionThrowHelper.ThrowOutOfRange(paramName, history[t], string.Create(CultureInfo.InvariantCulture,
                        $"value {t} of the history of key {i} (counting from 0), {histories[i].Key}, {allowed}"));
                }
            }
        }
    }

    /// <summary>Runs a checked history through checked candidates.</summary>
    internal static BacktestReport RunChecked(ReadOnlySpan<double> series, IReadOnlyList<ForecasterOptions> candidates, BacktestOptions options)
    {
        double scale = NaiveScaleOf(series, options);
        var evaluations = ImmutableArray.CreateBuilder<CandidateEvaluation>(candidates.Count);
        for (int i = 0; i < candidates.Count; i++)
        {
            evaluations.Add(CandidateRun.Evaluate(series, i, candidates[i], options, scale));
        }

        return new BacktestReport(options, series.Length, scale, evaluations.MoveToImmutable());
    }

    /// <summary>
    /// The in-sample seasonal-naive MAE over the whole history, computed by the error tracker of the engine's step (so a
    /// gap counts as the gap policy resolves it: a zero, nothing, or the last actual repeated).
    /// </summary>
    internal static double NaiveScaleOf(ReadOnlySpan<double> series, BacktestOptions options)
    {
        var step = new SeriesStep<int>(0, options.NaiveScaleSeries);
        for (int t = 0; t < series.Length; t++)
        {
            double total = series[t];
            bool has = !double.IsNaN(total);
            step.Close(t + 1, has, has ? total : 0, NoOutputs.Instance);
        }

        return step.Model.Tracker.NaiveScale;
    }

    /// <summary>Whether a value is a period total the step takes: NaN (a gap) or inside <see cref="NumericDomain"/>.</summary>
    private static bool IsTotal(double value) => double.IsNaN(value) || NumericDomain.Contains(value);

    /// <summary>Checks a history of period totals before anything runs; <paramref name="noun"/> names a value in the message.</summary>
    private static void CheckTotals(ReadOnlySpan<double> totals, string paramName, string noun)
    {
        for (int t = 0; t < totals.Length; t++)
        {
            if (!IsTotal(totals[t]))
            {
                SelectionThrowHelper.ThrowOutOfRange(paramName, totals[t], string.Create(CultureInfo.InvariantCulture,
                    $"{noun} {t} (counting from 0) must be NaN for a gap or a finite number of magnitude at most 1e15 (NumericDomain.MaxMagnitude)"));
            }
        }
    }

    private static void CheckCandidates(IReadOnlyList<ForecasterOptions> candidates)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        if (candidates.Count == 0)
        {
            SelectionThrowHelper.ThrowArgument(nameof(candidates), "Give at least one candidate method to backtest.");
        }

        for (int i = 0; i < candidates.Count; i++)
        {
            if (candidates[i] is null)
            {
                SelectionThrowHelper.ThrowArgument(nameof(candidates), string.Create(CultureInfo.InvariantCulture, $"Candidate {i} (counting from 0) is null."));
            }
        }
    }

    /// <summary>A sink for a step whose outputs are not needed (the MASE scale's).</summary>
    private sealed class NoOutputs : ISeriesSink<int>
    {
        public static readonly NoOutputs Instance = new();

        public void Forecast(in ForecastUpdate<int> update)
        {
        }

        public void Alert(in DriftAlert<int> alert)
        {
        }

        public void Fault(in SeriesFault<int> fault)
        {
        }
    }
}
