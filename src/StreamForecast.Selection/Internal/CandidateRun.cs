using System.Collections.Immutable;
using StreamForecast.Forecasting;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// One candidate's rolling-origin backtest. The engine's per-period step (<see cref="SeriesStep{TKey}"/>, gap policy
/// included) runs the history; this type is its sink, and after every period that published a forecast it holds the
/// step's forecasts for h = 1 … H (<see cref="SeriesStep{TKey}.GetForecast"/>, intervals as published) until the actual of
/// the period each was made for arrives, which the horizon's <see cref="ErrorTracker"/> then scores.
/// </summary>
/// <remarks>
/// <para><b>Steps, not periods.</b> Origins and targets are the periods the step published an update for: a period the
/// gap policy skips (<see cref="GapPolicy.Missing"/>) moves no model, so a forecast "h ahead" is scored against the h-th
/// next published period, as the engine's own error tracker scores its one-step forecasts. A period filled in without
/// being scored (<see cref="GapPolicy.CarryForward"/>) is an origin but no target.</para>
/// <para><b>Cost.</b> The step's cost per period plus O(H) to hold and score; O(H²) numbers held. Single use, one thread.</para>
/// </remarks>
internal sealed class CandidateRun : ISeriesSink<int>
{
    private readonly BacktestOptions _options;
    private readonly int _horizon;
    private readonly ErrorTracker[] _trackers;

    // Ring of the last H published periods (slot = step number mod H): whether the period was an origin, and at
    // [slot·H + h − 1] the forecast it made for h steps ahead (NaN: not warm) with its interval (NaN bounds: no σ yet).
    private readonly bool[] _isOrigin;
    private readonly double[] _pending;
    private readonly double[] _lowers;
    private readonly double[] _uppers;
    private readonly bool[] _empiricalAt;
    private readonly long[] _unscored;
    private readonly long[] _withInterval;
    private readonly long[] _inside;
    private readonly long[] _empiricalCount;

    // What the step sent for the period just closed.
    private bool _published;
    private double _actual;
    private bool _imputed;
    private double _error;
    private string? _failure;

    private CandidateRun(BacktestOptions options)
    {
        _options = options;
        _horizon = options.Horizon;
        int h = _horizon;
        _trackers = new ErrorTracker[h];
        for (int i = 0; i < h; i++)
        {
            _trackers[i] = ErrorTrackerOptions.Default.CreateTracker();
        }

        _isOrigin = new bool[h];
        _pending = new double[h * h];
        _lowers = new double[h * h];
        _uppers = new double[h * h];
        _empiricalAt = new bool[h * h];
        _unscored = new long[h];
        _withInterval = new long[h];
        _inside = new long[h];
        _empiricalCount = new long[h];
    }

    /// <summary>Backtests one candidate on a checked history (NaN: a gap; every other value inside <see cref="NumericDomain"/>).</summary>
    public static CandidateEvaluation Evaluate(ReadOnlySpan<double> series, int index, ForecasterOptions candidate, BacktestOptions options, double naiveScale)
    {
        var run = new CandidateRun(options);
        var step = new SeriesStep<int>(index, options.SeriesFor(candidate));
        OneStepSignals signals = run.Run(series, step);
        var horizons = ImmutableArray.CreateBuilder<HorizonAccuracy>(run._horizon);
        double scoreSum = 0;
        for (int h = 0; h < run._horizon; h++)
        {
            ErrorTracker t = run._trackers[h];
            double mase = t.Count > 0 && naiveScale > 0 ? t.Mad / naiveScale : double.NaN;
            double coverage = run._withInterval[h] > 0 ? (double)run._inside[h] / run._withInterval[h] : double.NaN;
            horizons.Add(new HorizonAccuracy(h + 1, t.Count, run._unscored[h], t.Mad, t.Rmse, t.Bias, t.Mape, t.ZeroActualCount, t.Wape, mase,
                run._withInterval[h], coverage, run._empiricalCount[h]));
            scoreSum += options.Metric == RankingMetric.Mad ? t.Mad : t.Rmse;
        }

        double score = run._failure is null ? scoreSum / run._horizon : double.NaN;
        return new CandidateEvaluation(index, candidate, horizons.MoveToImmutable(), signals, score, run._failure);
    }

    /// <inheritdoc/>
    public void Forecast(in ForecastUpdate<int> update)
    {
        _published = true;
        _actual = update.Actual;
        _imputed = update.IsImputed;
        _error = update.Error;
    }

    /// <inheritdoc/>
    /// <remarks>A ranking backtest runs no drift rules: never called.</remarks>
    public void Alert(in DriftAlert<int> alert)
    {
    }

    /// <inheritdoc/>
    /// <remarks>An actual the method refuses ends the candidate's run (it is ranked last).</remarks>
    public void Fault(in SeriesFault<int> fault) => _failure ??= fault.Message;

    private OneStepSignals Run(ReadOnlySpan<double> series, SeriesStep<int> step)
    {
        int n = series.Length;
        int firstOrigin = _options.FirstOrigin;
        ErrorTracker oneStep = step.Model.Tracker;
        long steps = 0;
        long signalPeriods = 0;
        double maxTracking = double.NaN;
        double maxTrigg = double.NaN;
        for (int s = 1; s <= n && _failure is null; s++)
        {
            double total = series[s - 1];
            bool has = !double.IsNaN(total);
            _published = false;
            step.Close(s, has, has ? total : 0, this);
            if (!_published)
            {
                continue; // refused (the run ends) or skipped as missing: no model moved
            }

            steps++;

            // A period the step scores (observed, or a gap that means zero) is the target of the forecasts held for it.
            if (!_imputed || _options.Gaps == GapPolicy.Zero)
            {
                Score(steps);
            }

            if (!double.IsNaN(_error) && s > firstOrigin && ++signalPeriods > _options.SignalWarmUpPeriods)
            {
                maxTracking = MaxOf(maxTracking, Math.Abs(oneStep.TrackingSignal));
                maxTrigg = MaxOf(maxTrigg, Math.Abs(oneStep.TriggSignal));
            }

            // Origin s: hold the forecasts for the next H published periods that the history can still reach.
            int slot = (int)(steps % _horizon);
            _isOrigin[slot] = s >= firstOrigin && s < n;
            if (_isOrigin[slot])
            {
                int reach = Math.Min(_horizon, n - s);
                for (int h = 1; h <= reach; h++)
                {
                    Hold(step.GetForecast(h), (slot * _horizon) + h - 1);
                }
            }
        }

        return new OneStepSignals(signalPeriods, oneStep.TrackingSignal, maxTracking, maxTrigg);
    }

    /// <summary>Scores every held forecast made for the published period number <paramref name="steps"/>.</summary>
    private void Score(long steps)
    {
        for (int h = 1; h <= _horizon && steps - h >= 1; h++)
        {
            int slot = (int)((steps - h) % _horizon);
            if (!_isOrigin[slot])
            {
                continue;
            }

            int at = (slot * _horizon) + h - 1;
            double forecast = _pending[at];
            if (double.IsNaN(forecast))
            {
                _unscored[h - 1]++;
                continue;
            }

            _trackers[h - 1].Record(_actual, forecast);
            if (!double.IsNaN(_lowers[at]))
            {
                _withInterval[h - 1]++;
                _inside[h - 1] += _actual >= _lowers[at] && _actual <= _uppers[at] ? 1 : 0;
                _empiricalCount[h - 1] += _empiricalAt[at] ? 1 : 0;
            }
        }
    }

    private void Hold(ForecastPoint point, int at)
    {
        _pending[at] = point.Value;
        _lowers[at] = point.Lower;
        _uppers[at] = point.Upper;
        _empiricalAt[at] = point.Kind == IntervalKind.Empirical;
    }

    private static double MaxOf(double current, double value) => double.IsNaN(current) || value > current ? value : current;
}
