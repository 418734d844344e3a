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
/// <para><b>Reference model.</b> With <see cref="SeriesOptions.ReferenceMethod"/> set, a second tracked forecaster takes
/// the same actuals in the same step (scored when it is warm, unscored when the gap policy filled the actual in); its
/// forecasts are never published, and its errors feed only the rules that watch it (<see cref="DriftRuleOptions.Watches"/>).
/// It costs one more method update and an export of its state (a backup for the all-or-nothing rule below) per period.</para>
/// <para><b>Known events.</b> A period marked by a known event (<see cref="KnownEvent{TKey}"/>) is published with
/// <see cref="ForecastUpdate{TKey}.Event"/> set and is not scored: the error statistics and the drift rules do not see it.
/// Its actual and the forecast made for it are added to its kind's <see cref="EventLift"/>; when the event keeps it out of
/// the model, the method learns that forecast instead of the actual. A series without events pays one null check.</para>
/// <para><b>Bad input.</b> An actual the method refuses (outside its domain) is reported to the sink as a
/// <see cref="SeriesFaultKind.ActualRejected"/> fault and the step is left exactly as it was; with a reference model, an
/// actual either model refuses is refused for both.</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner closes the periods of a series, in order.</para>
/// </remarks>
public sealed partial class SeriesStep<TKey>
{
    private readonly TKey _key;
    private readonly SeriesOptions _options;
    private readonly TrackedForecaster _model;

    // Drift rules: none, one (held directly), or several (in the extras, in the options' order). Their number is the
    // options' unless the step runs without rules (the extras say so), so it is not held per series.
    private readonly DriftRule? _singleRule;

    // What most series never use (null for a series with none of it): the reference model and its backup, several
    // rules, the known-event marks and lift sums. One reference instead of five per series (memory per series).
    private SeriesStepExtras? _extras;

    /// <summary>Creates the step of a new series.</summary>
    /// <param name="key">The series key carried on every output.</param>
    /// <param name="options">The series options (method, gap policy, tracking, rules, horizon, interval).</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public SeriesStep(TKey key, SeriesOptions options)
        : this(key, options, withRules: true)
    {
    }

    /// <summary>Creates the step of a new series whose periods may be marked by known events.</summary>
    /// <param name="key">The series key carried on every output.</param>
    /// <param name="options">The series options.</param>
    /// <param name="events">
    /// The known events (see <see cref="KnownEvent{TKey}"/>); those that apply to <paramref name="key"/> (keys compared with
    /// <see cref="EqualityComparer{T}.Default"/>) mark the periods of the options' calendar they overlap. Null: none.
    /// </param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    /// <remarks>Resolving the events costs O(e²) for the e events that apply to the key, once (see <see cref="EventCalendar{TKey}"/>).</remarks>
    public SeriesStep(TKey key, SeriesOptions options, EventCalendar<TKey>? events)
        : this(key, options, withRules: true)
    {
        if (events is not null)
        {
            SetMarks(EventCalendar<TKey>.MarksFor(key, options.Calendar, events, [], EqualityComparer<TKey>.Default));
        }
    }

    internal SeriesStep(TKey key, SeriesOptions options, bool withRules)
    {
        ArgumentNullException.ThrowIfNull(options);
        _key = key;
        _options = options;
        _model = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
        if (options.ReferenceMethod is { } referenceMethod)
        {
            var reference = new TrackedForecaster(referenceMethod, options.Tracking);
            _extras = new SeriesStepExtras { Reference = reference, ReferenceBackup = new double[reference.StateLength] };
        }
        int ruleCount = withRules ? options.Rules.Length : 0;
        if (!withRules && options.Rules.Length > 0)
        {
            (_extras ??= new SeriesStepExtras()).WithoutRules = true;
        }

        if (ruleCount == 1)
        {
            _singleRule = options.Rules[0].CreateRule();
        }
        else if (ruleCount > 1)
        {
            var rules = new DriftRule[ruleCount];
            for (int i = 0; i < ruleCount; i++)
            {
                rules[i] = options.Rules[i].CreateRule();
            }

            (_extras ??= new SeriesStepExtras()).Rules = rules;
        }
    }

    /// <summary>The series key.</summary>
    public TKey Key => _key;

    /// <summary>The series options.</summary>
    public SeriesOptions Options => _options;

    /// <summary>The method and its error statistics (read them freely; change them only through this step).</summary>
    public TrackedForecaster Model => _model;

    /// <summary>
    /// The reference model and its error statistics, or null without <see cref="SeriesOptions.ReferenceMethod"/> (read
    /// them freely; change them only through this step). Its forecasts are never published.
    /// </summary>
    public TrackedForecaster? Reference => _extras?.Reference;

    /// <summary>The number of drift rules (the options' rules, in order).</summary>
    public int RuleCount
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)] // read on every scored period
        get => _extras is { WithoutRules: true } ? 0 : _options.Rules.Length;
    }

    /// <summary>The last actual fed to the model, for a gap policy that carries it forward; meaningful when <see cref="HasLastActual"/>.</summary>
    public double LastActual { get; internal set; }

    /// <summary>Whether any actual has been fed to the model yet.</summary>
    /// <remarks>The same as the model having taken a period (<see cref="TrackedForecaster.Count"/> above 0): the two change together.</remarks>
    public bool HasLastActual => _model.Count > 0;

    /// <summary>The drift rule at <paramref name="index"/> (0 ≤ index &lt; <see cref="RuleCount"/>).</summary>
    /// <param name="index">The rule's position in the options.</param>
    /// <returns>The rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="index"/> is out of range.</exception>
    public DriftRule GetRule(int index)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(index);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(index, RuleCount);
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
        _extras?.Reference?.ResetErrors();
        for (int i = 0, count = RuleCount; i < count; i++)
        {
            Publish(i, RuleAt(i).Rebaseline(), lastClosedPeriod, sink, counters, null, started ? null : default(DateTimeOffset));
        }
    }

    /// <summary>Makes this step's models and gap memory a copy of <paramref name="source"/>'s (rules untouched).</summary>
    internal void CopyModelFrom(SeriesStep<TKey> source, double[] scratch)
    {
        source._model.ExportState(scratch);
        _model.ImportState(scratch);
        if (_extras?.Reference is { } reference)
        {
            source._extras!.Reference!.ExportState(_extras.ReferenceBackup);
            reference.ImportState(_extras.ReferenceBackup);
        }

        LastActual = source.LastActual;
        if (source.Lift is not null || Lift is not null)
        {
            SeriesStepExtras extras = _extras ??= new SeriesStepExtras();
            (extras.Lift ??= new EventLiftSums()).CopyFrom(source.Lift);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal DriftRule RuleAt(int index)
    {
        Debug.Assert(index >= 0 && index < RuleCount);
        return _singleRule ?? _extras!.Rules![index];
    }

    /// <summary>Applies one period; <paramref name="sink"/> may be null only in <see cref="StepMode.Silent"/>.</summary>
    internal void Apply(long period, bool has, double sum, StepMode mode, ISeriesSink<TKey>? sink, SeriesCounters? counters)
    {
        Debug.Assert(sink is not null || mode == StepMode.Silent);
        if (!has && mode == StepMode.Live && counters is not null)
        {
            counters.GapPeriods++;
        }

        bool keepOut = false;
        if (!ResolveActual(has, sum, out double actual, out bool scored))
        {
            return;
        }

        // A period marked by a known event is never scored: the error statistics and the drift rules do not see it. Its
        // lift is measured against the forecast made for it, which the model learns from instead of the actual when the
        // event keeps it out of the model (the period count and seasonal position move on as in any period).
        SeriesStepExtras? extras = _extras;
        TrackedForecaster? reference = extras?.Reference;
        EventKind? marked = extras?.Marks?.KindAt(period, out keepOut);
        double fed = actual;
        double eventForecast = double.NaN;
        if (marked is not null)
        {
            scored = false;
            if (_model.Forecaster.TryForecast(1, out eventForecast) && keepOut)
            {
                fed = eventForecast;
            }
        }

        // The reference model keeps the same period out of its learning with its own forecast.
        double referenceFed = actual;
        if (marked is not null && keepOut && reference is not null && reference.Forecaster.TryForecast(1, out double referenceForecast))
        {
            referenceFed = referenceForecast;
        }

        PeriodScore score;
        var referenceScore = new PeriodScore(double.NaN, double.NaN, double.NaN);
        try
        {
            if (reference is not null)
            {
                // Both models take the actual or neither does: back the reference up, step it, and put it back if the
                // published model then refuses the actual.
                reference.ExportState(extras!.ReferenceBackup);
                referenceScore = scored ? reference.Update(referenceFed) : reference.UpdateUnscored(referenceFed);
                try
                {
                    score = scored ? _model.Update(fed) : _model.UpdateUnscored(fed);
                }
                catch (ArgumentOutOfRangeException)
                {
                    reference.ImportState(extras.ReferenceBackup);
                    throw;
                }
            }
            else
            {
                score = scored ? _model.Update(fed) : _model.UpdateUnscored(fed);
            }
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

        LastActual = fed; // the model has taken a period now, so HasLastActual is true
        if (marked is not null && !double.IsNaN(eventForecast))
        {
            extras = _extras ??= new SeriesStepExtras();
            (extras.Lift ??= new EventLiftSums()).Add(marked, actual, eventForecast);
        }

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
            _key, period, start, actual, !has, marked is null ? score.Forecast : eventForecast, score.Error,
            next, atHorizon, errors, _model.Forecaster.ActiveMethodName ?? _options.MethodLabel, restated) { Event = marked });

        if (restated)
        {
            return;
        }

        if (score.IsScored)
        {
            // The summary already holds σ and both signals of the tracker's current state: the rules read those.
            EvaluateRules(WatchedModel.Published, errors, score.Error, period, sink, counters, start);
        }

        if (reference is not null && referenceScore.IsScored)
        {
            EvaluateRules(WatchedModel.Reference, ErrorSummary.Of(reference.Tracker), referenceScore.Error, period, sink, counters, start);
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
}
