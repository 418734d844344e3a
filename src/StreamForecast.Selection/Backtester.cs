using System.Collections.Immutable;
using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Selection;

/// <summary>
/// Rolling-origin backtests of candidate forecasting methods over a series' history, running the library's own
/// operators (<see cref="TrackedForecaster"/>, <see cref="Forecaster"/>, <see cref="ErrorTracker"/>): the numbers are
/// the ones the same methods would have produced live.
/// </summary>
/// <remarks>
/// <para><b>Method.</b> For each candidate one forecaster is stepped through the history once, exactly as live: after
/// actual t it is the forecaster "fed y₁ … y_t", and for every origin t ≥ <see cref="BacktestOptions.FirstOrigin"/> its
/// forecasts for h = 1 … H are read and held until the actual of period t + h arrives, which is then scored by the
/// horizon's <see cref="ErrorTracker"/> (a forecast is always scored against the period it was made for). The one-step
/// forecasts also pass through a <see cref="TrackedForecaster"/> so that the tracking-signal behaviour is the live one.
/// Nothing is re-fitted per origin: a method's parameters are fixed by its options and its state only ever moves
/// forward, which is what re-feeding a fresh forecaster at each origin would give, at O(n·H) instead of O(n²·H).</para>
/// <para><b>Intervals.</b> Each held forecast keeps the interval the live step would publish with it (normal from the
/// one-step tracker's σ, or empirical from the horizon's own window of scored errors, as <see cref="BacktestOptions"/>
/// says); <see cref="HorizonAccuracy.Coverage"/> is the fraction of scored actuals inside their interval: out of sample,
/// since every interval is fixed at its origin.</para>
/// <para><b>Cost.</b> O(n·H) per candidate (plus the forecaster's own update cost), with O(H²) numbers held; empirical
/// intervals add O(n·H·w) for windows of w errors and 16·H·w bytes.
/// <see cref="RunMany{TKey}"/> runs keys in parallel on up to <see cref="BacktestOptions.MaxDegreeOfParallelism"/>
/// workers; candidates of one key run in order on one worker.</para>
/// <para><b>Bad input.</b> A history with a NaN or infinite value is rejected with
/// <see cref="ArgumentOutOfRangeException"/>. An actual that a candidate's method rejects (for example a negative
/// demand for Croston's method) ends that candidate's run: it is reported with <see cref="CandidateEvaluation.Failure"/>
/// and ranked last, and the other candidates are unaffected.</para>
/// <para><b>Thread safety.</b> All members are static and thread-safe; inputs are only read.</para>
/// </remarks>
public static class Backtester
{
    /// <summary>Backtests one candidate on one history.</summary>
    /// <param name="series">The history y₁ … yₙ, oldest first; every value finite.</param>
    /// <param name="candidate">The method to evaluate.</param>
    /// <param name="options">The backtest settings.</param>
    /// <returns>The evaluation (its <see cref="CandidateEvaluation.CandidateIndex"/> is 0).</returns>
    /// <exception cref="ArgumentNullException"><paramref name="candidate"/> or <paramref name="options"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value of <paramref name="series"/> is NaN or infinite.</exception>
    public static CandidateEvaluation Evaluate(ReadOnlySpan<double> series, ForecasterOptions candidate, BacktestOptions options)
    {
        ArgumentNullException.ThrowIfNull(candidate);
        ArgumentNullException.ThrowIfNull(options);
        SelectionThrowHelper.CheckFinite(series, nameof(series));
        return EvaluateChecked(series, 0, candidate, options, NaiveScaleOf(series, options.SeasonLength));
    }

    /// <summary>Backtests a list of candidates on one history and ranks them.</summary>
    /// <param name="series">The history y₁ … yₙ, oldest first; every value finite.</param>
    /// <param name="candidates">The methods to evaluate, at least one; the order breaks ties in the ranking.</param>
    /// <param name="options">The backtest settings.</param>
    /// <returns>The report with every evaluation and the ranking.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="candidates"/>, one of them, or <paramref name="options"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="candidates"/> is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value of <paramref name="series"/> is NaN or infinite.</exception>
    public static BacktestReport Run(ReadOnlySpan<double> series, IReadOnlyList<ForecasterOptions> candidates, BacktestOptions options)
    {
        CheckCandidates(candidates);
        ArgumentNullException.ThrowIfNull(options);
        SelectionThrowHelper.CheckFinite(series, nameof(series));
        return RunChecked(series, candidates, options);
    }

    /// <summary>
    /// Backtests the same candidates on many histories, in parallel across keys, and returns one report per key in the
    /// order the keys were given.
    /// </summary>
    /// <typeparam name="TKey">The series key.</typeparam>
    /// <param name="histories">The histories by key; each history oldest first, every value finite.</param>
    /// <param name="candidates">The methods to evaluate, at least one.</param>
    /// <param name="options">The backtest settings, including the degree of parallelism.</param>
    /// <param name="cancellationToken">Stops the run between keys.</param>
    /// <returns>One report per key, in input order; identical whatever the degree of parallelism or scheduling.</returns>
    /// <exception cref="ArgumentNullException">An argument, a history or a candidate is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="candidates"/> is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A history has a NaN or infinite value (the message names its position); nothing is run.</exception>
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
        CheckHistories(histories, nameof(histories));
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

    /// <summary>Checks every history of a keyed list: not null, every value finite.</summary>
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
        for (int t = 0; t < periodTotals.Length; t++)
        {
            double total = periodTotals[t];
            if (!double.IsNaN(total) && !NumericDomain.Contains(total))
            {
                SelectionThrowHelper.ThrowOutOfRange(nameof(periodTotals), total, string.Create(CultureInfo.InvariantCulture,
                    $"total {t} (counting from 0) must be NaN for a gap or a finite number of magnitude at most 1e15 (NumericDomain.MaxMagnitude)"));
            }
        }

        var step = new SeriesStep<TKey>(key, options, events);
        for (int t = 0; t < periodTotals.Length; t++)
        {
            double total = periodTotals[t];
            bool has = !double.IsNaN(total);
            step.Close(firstPeriod + t, has, has ? total : 0, sink);
        }

        return step;
    }

    internal static void CheckHistories<TKey>(IReadOnlyList<KeyValuePair<TKey, double[]>> histories, string paramName)
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
                if (!double.IsFinite(history[t]))
                {
                    SelectionThrowHelper.ThrowOutOfRange(paramName, history[t], string.Create(CultureInfo.InvariantCulture,
                        $"value {t} of the history of key {i} (counting from 0), {histories[i].Key}, is not finite; every actual must be a finite number"));
                }
            }
        }
    }

    /// <summary>Runs a checked history through checked candidates.</summary>
    internal static BacktestReport RunChecked(ReadOnlySpan<double> series, IReadOnlyList<ForecasterOptions> candidates, BacktestOptions options)
    {
        double scale = NaiveScaleOf(series, options.SeasonLength);
        var evaluations = ImmutableArray.CreateBuilder<CandidateEvaluation>(candidates.Count);
        for (int i = 0; i < candidates.Count; i++)
        {
            evaluations.Add(EvaluateChecked(series, i, candidates[i], options, scale));
        }

        return new BacktestReport(options, series.Length, scale, evaluations.MoveToImmutable());
    }

    /// <summary>The in-sample seasonal-naive MAE over the whole history, computed by the library's error tracker.</summary>
    internal static double NaiveScaleOf(ReadOnlySpan<double> series, int seasonLength)
    {
        ErrorTracker naive = new ErrorTrackerOptions(seasonLength: seasonLength).CreateTracker();
        foreach (double y in series)
        {
            naive.RecordUnscored(y);
        }

        return naive.NaiveScale;
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

    private static CandidateEvaluation EvaluateChecked(ReadOnlySpan<double> series, int index, ForecasterOptions candidate, BacktestOptions options, double naiveScale)
    {
        int n = series.Length;
        int horizon = options.Horizon;
        int firstOrigin = options.FirstOrigin;
        IntervalSettings intervals = options.Intervals;
        EmpiricalIntervalOptions? empirical = intervals.Empirical;
        var model = new TrackedForecaster(candidate, options.Tracking, new IntervalSettings(intervals.Multiplier, null, 1, intervals.NonNegative));
        var trackers = new ErrorTracker[horizon];
        var windows = empirical is null ? null : new ErrorQuantileWindow[horizon];
        for (int h = 0; h < horizon; h++)
        {
            trackers[h] = ErrorTrackerOptions.Default.CreateTracker();
            if (windows is not null)
            {
                windows[h] = new ErrorQuantileWindow(empirical!.Window);
            }
        }

        // pending[(origin mod H)·H + h − 1] holds the forecast made at the origin for h periods ahead (NaN: not warm), and
        // lowers/uppers its interval as it would have been published (NaN bounds: no σ yet), empiricalAt whether it was empirical.
        var pending = new double[horizon * horizon];
        var lowers = new double[horizon * horizon];
        var uppers = new double[horizon * horizon];
        var empiricalAt = new bool[horizon * horizon];
        var unscored = new long[horizon];
        var withInterval = new long[horizon];
        var inside = new long[horizon];
        var empiricalCount = new long[horizon];
        long signalPeriods = 0;
        double maxTracking = double.NaN;
        double maxTrigg = double.NaN;
        string? failure = null;
        try
        {
            for (int s = 1; s <= n; s++)
            {
                double actual = series[s - 1];

                // Score every held forecast made for period s, at origins s − h ≥ firstOrigin.
                for (int h = 1; h <= horizon && s - h >= firstOrigin; h++)
                {
                    int at = (((s - h) % horizon) * horizon) + h - 1;
                    double forecast = pending[at];
                    if (double.IsNaN(forecast))
                    {
                        unscored[h - 1]++;
                        continue;
                    }

                    trackers[h - 1].Record(actual, forecast);
                    windows?[h - 1].Add(trackers[h - 1].LastError);
                    if (!double.IsNaN(lowers[at]))
                    {
                        withInterval[h - 1]++;
                        inside[h - 1] += actual >= lowers[at] && actual <= uppers[at] ? 1 : 0;
                        empiricalCount[h - 1] += empiricalAt[at] ? 1 : 0;
                    }
                }

                // Step the live pair: periods up to the first origin are warm-up only and are not scored.
                PeriodScore step = s <= firstOrigin ? model.UpdateUnscored(actual) : model.Update(actual);
                if (step.IsScored)
                {
                    signalPeriods++;
                    if (signalPeriods > options.SignalWarmUpPeriods)
                    {
                        maxTracking = MaxOf(maxTracking, Math.Abs(model.Tracker.TrackingSignal));
                        maxTrigg = MaxOf(maxTrigg, Math.Abs(model.Tracker.TriggSignal));
                    }
                }

                // Origin s: hold the forecasts for s + 1 … s + H that the history can score, with their intervals.
                if (s >= firstOrigin && s < n)
                {
                    int slot = (s % horizon) * horizon;
                    int reach = Math.Min(horizon, n - s);
                    for (int h = 1; h <= reach; h++)
                    {
                        Hold(model, h, intervals, windows?[h - 1], slot + h - 1, pending, lowers, uppers, empiricalAt);
                    }
                }
            }
        }
        catch (ArgumentOutOfRangeException ex)
        {
            failure = ex.Message;
        }

        var horizons = ImmutableArray.CreateBuilder<HorizonAccuracy>(horizon);
        double scoreSum = 0;
        for (int h = 0; h < horizon; h++)
        {
            ErrorTracker t = trackers[h];
            double mase = t.Count > 0 && naiveScale > 0 ? t.Mad / naiveScale : double.NaN;
            double coverage = withInterval[h] > 0 ? (double)inside[h] / withInterval[h] : double.NaN;
            horizons.Add(new HorizonAccuracy(h + 1, t.Count, unscored[h], t.Mad, t.Rmse, t.Bias, t.Mape, t.ZeroActualCount, t.Wape, mase,
                withInterval[h], coverage, empiricalCount[h]));
            scoreSum += options.Metric == RankingMetric.Mad ? t.Mad : t.Rmse;
        }

        double score = failure is null ? scoreSum / horizon : double.NaN;
        var signals = new OneStepSignals(model.Tracker.Count, model.Tracker.TrackingSignal, maxTracking, maxTrigg);
        return new CandidateEvaluation(index, candidate, horizons.MoveToImmutable(), signals, score, failure);
    }

    /// <summary>
    /// Holds the forecast made now for <paramref name="h"/> periods ahead with the interval the live step would publish:
    /// the normal one from the one-step tracker, or the empirical one once the horizon's window holds enough errors.
    /// </summary>
    private static void Hold(TrackedForecaster model, int h, IntervalSettings intervals, ErrorQuantileWindow? window, int at, double[] pending, double[] lowers, double[] uppers, bool[] empiricalAt)
    {
        if (!model.TryForecast(h, intervals.Multiplier, out double forecast, out PredictionInterval interval))
        {
            pending[at] = double.NaN;
            return;
        }

        bool isEmpirical = window is not null && window.Count >= intervals.Empirical!.MinimumErrors;
        if (isEmpirical)
        {
            interval = window!.IntervalAround(forecast, intervals.Empirical!);
            if (intervals.NonNegative)
            {
                interval = new PredictionInterval(Math.Max(0, interval.Lower), Math.Max(0, interval.Upper));
            }
        }

        pending[at] = forecast;
        lowers[at] = interval.Lower;
        uppers[at] = interval.Upper;
        empiricalAt[at] = isEmpirical;
    }

    private static double MaxOf(double current, double value) => double.IsNaN(current) || value > current ? value : current;
}
