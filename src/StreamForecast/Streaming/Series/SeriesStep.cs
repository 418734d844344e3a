using System.Diagnostics;
using System.Runtime.CompilerServices;
using StreamForecast.Alerts;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>How a period is being applied.</summary>
internal enum StepMode
{
    /// <summary>A period closing for the first time: publish, score, evaluate rules, count.</summary>
    Live,

    /// <summary>Replaying an unchanged period to rebuild state after a rollback: publish nothing.</summary>
    Silent,

    /// <summary>Replaying a period whose actual (or whose history) changed: publish it marked as a restatement.</summary>
    Restated,
}

/// <summary>
/// The per-period step of one series, the one place the library turns a closed period into outputs: the gap policy
/// decides the actual, the method scores and updates (<see cref="TrackedForecaster"/>), the drift rules read the error
/// statistics, and the forecast update and any alert transitions go to an <see cref="ISeriesSink{TKey}"/>. The keyed
/// engine, the Orleans bucket grain and the backtester's replay all run this type, so they publish the same outputs for
/// the same period totals.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Cost.</b> O(1) per period plus the method's update (an arbitrary-weight moving average is O(n)); no
/// allocation after creation when the sink allocates nothing.</para>
/// <para><b>Warm-up.</b> Until the method is warm, periods are taken unscored and updates carry NaN forecasts; drift rules
/// see only scored periods.</para>
/// <para><b>Bad input.</b> An actual the method refuses (outside its domain) is reported to the sink as a
/// <see cref="SeriesFaultKind.ActualRejected"/> fault and the step is left exactly as it was.</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner closes the periods of a series, in order.</para>
/// </remarks>
public sealed class SeriesStep<TKey>
{
    private readonly TKey _key;
    private readonly SeriesOptions _options;
    private readonly TrackedForecaster _model;

    // Drift rules: none (both null), one (held directly), or several (the array, in the options' order).
    private readonly DriftRule? _singleRule;
    private readonly DriftRule[]? _ruleArray;
    private readonly int _ruleCount;

    /// <summary>Creates the step of a new series.</summary>
    /// <param name="key">The series key carried on every output.</param>
    /// <param name="options">The series options (method, gap policy, tracking, rules, horizon, interval).</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public SeriesStep(TKey key, SeriesOptions options)
        : this(key, options, withRules: true)
    {
    }

    internal SeriesStep(TKey key, SeriesOptions options, bool withRules)
    {
        ArgumentNullException.ThrowIfNull(options);
        _key = key;
        _options = options;
        _model = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
        _ruleCount = withRules ? options.Rules.Length : 0;
        if (_ruleCount == 1)
        {
            _singleRule = options.Rules[0].CreateRule();
        }
        else if (_ruleCount > 1)
        {
            _ruleArray = new DriftRule[_ruleCount];
            for (int i = 0; i < _ruleCount; i++)
            {
                _ruleArray[i] = options.Rules[i].CreateRule();
            }
        }
    }

    /// <summary>The series key.</summary>
    public TKey Key => _key;

    /// <summary>The series options.</summary>
    public SeriesOptions Options => _options;

    /// <summary>The method and its error statistics (read them freely; change them only through this step).</summary>
    public TrackedForecaster Model => _model;

    /// <summary>The number of drift rules (the options' rules, in order).</summary>
    public int RuleCount => _ruleCount;

    /// <summary>The last actual fed to the model, for a gap policy that carries it forward; meaningful when <see cref="HasLastActual"/>.</summary>
    public double LastActual { get; internal set; }

    /// <summary>Whether any actual has been fed to the model yet.</summary>
    public bool HasLastActual { get; internal set; }

    /// <summary>The drift rule at <paramref name="index"/> (0 ≤ index &lt; <see cref="RuleCount"/>).</summary>
    /// <param name="index">The rule's position in the options.</param>
    /// <returns>The rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="index"/> is out of range.</exception>
    public DriftRule GetRule(int index)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(index);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(index, _ruleCount);
        return RuleAt(index);
    }

    /// <summary>Closes one period and sends its outputs to <paramref name="sink"/>.</summary>
    /// <param name="period">The period's number in the options' calendar.</param>
    /// <param name="hasData">Whether any observation fell into the period; when not, the gap policy decides.</param>
    /// <param name="total">The period's total (ignored when <paramref name="hasData"/> is false); inside <see cref="NumericDomain"/>.</param>
    /// <param name="sink">Receives the forecast update, alert transitions and faults.</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="total"/> is outside <see cref="NumericDomain"/>.</exception>
    public void Close(long period, bool hasData, double total, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        if (hasData && !NumericDomain.Contains(total))
        {
            Internal.ThrowHelper.ThrowOutsideDomain(total, nameof(total));
        }

        Apply(period, hasData, total, StepMode.Live, sink, null);
    }

    /// <summary>
    /// Starts the error statistics afresh and closes the current episode of every rule (a person acknowledged the
    /// drift), sending the closing transitions to <paramref name="sink"/> for <paramref name="lastClosedPeriod"/>.
    /// </summary>
    /// <param name="lastClosedPeriod">The period the transitions are reported for.</param>
    /// <param name="sink">Receives the transitions.</param>
    /// <exception cref="ArgumentNullException"><paramref name="sink"/> is null.</exception>
    public void Acknowledge(long lastClosedPeriod, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        Acknowledge(lastClosedPeriod, started: true, sink, null);
    }

    internal void Acknowledge(long lastClosedPeriod, bool started, ISeriesSink<TKey> sink, SeriesCounters? counters)
    {
        _model.ResetErrors();
        for (int i = 0; i < _ruleCount; i++)
        {
            Publish(i, RuleAt(i).Rebaseline(), lastClosedPeriod, sink, counters, null, started ? null : default(DateTimeOffset));
        }
    }

    /// <summary>Makes this step's model and gap memory a copy of <paramref name="source"/>'s (rules untouched).</summary>
    internal void CopyModelFrom(SeriesStep<TKey> source, double[] scratch)
    {
        source._model.ExportState(scratch);
        _model.ImportState(scratch);
        LastActual = source.LastActual;
        HasLastActual = source.HasLastActual;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal DriftRule RuleAt(int index)
    {
        Debug.Assert(index >= 0 && index < _ruleCount);
        return _ruleArray is null ? _singleRule! : _ruleArray[index];
    }

    /// <summary>Applies one period; <paramref name="sink"/> may be null only in <see cref="StepMode.Silent"/>.</summary>
    internal void Apply(long period, bool has, double sum, StepMode mode, ISeriesSink<TKey>? sink, SeriesCounters? counters)
    {
        Debug.Assert(sink is not null || mode == StepMode.Silent);
        if (!has && mode == StepMode.Live && counters is not null)
        {
            counters.GapPeriods++;
        }

        if (!ResolveActual(has, sum, out double actual, out bool scored))
        {
            return;
        }

        PeriodScore score;
        try
        {
            score = scored ? _model.Update(actual) : _model.UpdateUnscored(actual);
        }
        catch (ArgumentOutOfRangeException ex)
        {
            if (mode == StepMode.Live)
            {
                if (counters is not null)
                {
                    counters.RejectedActuals++;
                }

                sink!.Fault(new SeriesFault<TKey>(_key, period, SeriesFaultKind.ActualRejected, ex.Message));
            }

            return;
        }

        LastActual = actual;
        HasLastActual = true;
        if (mode == StepMode.Silent)
        {
            return;
        }

        bool restated = mode == StepMode.Restated;
        var errors = ErrorSummary.Of(_model.Tracker);
        DateTimeOffset start = _options.Calendar.StartOf(period);
        ForecastPoint next = Point(1);
        ForecastPoint atHorizon = _options.Horizon == 1 ? next : Point(_options.Horizon); // the same point: compute it once
        sink!.Forecast(new ForecastUpdate<TKey>(
            _key, period, start, actual, !has, score.Forecast, score.Error,
            next, atHorizon, errors, _model.Forecaster.ActiveMethodName ?? _options.MethodLabel, restated));

        if (!restated && score.IsScored)
        {
            // The summary already holds σ and both signals of the tracker's current state: the rules read those.
            DriftInput input = errors.ToDriftInput(score.Error);
            for (int i = 0; i < _ruleCount; i++)
            {
                DriftRule rule = RuleAt(i);
                if (rule.CanRead(input))
                {
                    Publish(i, rule.Evaluate(input), period, sink, counters, errors, start);
                }
            }
        }
    }

    /// <summary>Turns a period's raw input into the actual fed to the model under the gap policy; false when nothing is fed.</summary>
    private bool ResolveActual(bool has, double sum, out double actual, out bool scored)
    {
        scored = true;
        if (has)
        {
            actual = sum;
            return true;
        }

        switch (_options.Gaps)
        {
            case GapPolicy.Zero:
                actual = 0;
                return true;
            case GapPolicy.CarryForward when HasLastActual:
                actual = LastActual;
                scored = false;
                return true;
            default:
                actual = double.NaN;
                return false;
        }
    }

    private void Publish(int ruleIndex, in DriftTransition transition, long period, ISeriesSink<TKey> sink, SeriesCounters? counters, ErrorSummary? errors, DateTimeOffset? start)
    {
        if (transition.IsNone)
        {
            return;
        }

        if (counters is not null)
        {
            switch (transition.Kind)
            {
                case DriftTransitionKind.Raised:
                    counters.AlertsRaised++;
                    break;
                case DriftTransitionKind.Escalated:
                    counters.AlertsEscalated++;
                    break;
                case DriftTransitionKind.Cleared:
                    counters.AlertsCleared++;
                    break;
            }
        }

        sink.Alert(new DriftAlert<TKey>(
            _key, period, start ?? _options.Calendar.StartOf(period), ruleIndex, _options.RuleLabels[ruleIndex],
            transition, errors ?? ErrorSummary.Of(_model.Tracker)));
    }

    /// <summary>The forecast <paramref name="horizon"/> periods ahead with its interval; NaN fields while the method is cold.</summary>
    internal ForecastPoint Point(int horizon)
    {
        IntervalSettings intervals = _options.Intervals;
        if (!_model.TryForecast(horizon, intervals, out double value, out PredictionInterval interval, out IntervalKind kind))
        {
            return new ForecastPoint(horizon, double.NaN, double.NaN, double.NaN, kind, intervals.Coverage);
        }

        return new ForecastPoint(horizon, value, interval.Lower, interval.Upper, kind, intervals.Coverage);
    }
}
