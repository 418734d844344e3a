using System.Diagnostics;
using System.Runtime.CompilerServices;
using StreamForecast.Alerts;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>Where a series sends what it produces, and the counters it bumps. Implemented by the owner (a partition).</summary>
internal interface ISeriesOutput<TKey>
{
    SeriesCounters Counters { get; }

    void Forecast(in ForecastUpdate<TKey> update);

    void Alert(in DriftAlert<TKey> alert);

    void Fault(in SeriesFault<TKey> fault);
}

/// <summary>Counters bumped by one owner; read by others with relaxed reads (metrics, <c>GetCounters</c>).</summary>
internal sealed class SeriesCounters
{
    public long Observations;
    public long Late;
    public long Restated;
    public long Duplicates;
    public long PeriodsClosed;
    public long GapPeriods;
    public long RejectedActuals;
    public long SkippedPeriods;
    public long AlertsRaised;
    public long AlertsEscalated;
    public long AlertsCleared;
    public long Evictions;
}

/// <summary>
/// The whole engine-side state of one series: event-time bucketing into periods, lateness and restatement, gaps,
/// duplicate suppression, the forecaster with its error tracker, and the drift rules. One owner at a time.
/// The same object serves the keyed engine, replays and tests, so the period rules exist once.
/// </summary>
/// <remarks>
/// <para><b>Layout.</b> The keyed engine holds one of these per key, up to millions, so the state is kept in as few heap
/// objects as it can be: everything shared by the series of one <see cref="SeriesOptions"/> (calendar, lateness, the
/// rules' settings) is read from the options rather than copied; the open periods of the common case (no lateness:
/// at most two open at once) are held inline, the restatement state exists only when restatement is on, and a single
/// drift rule is held without an array. Memory and keyed speed are measured in <c>benchmarks/</c>.</para>
/// </remarks>
internal sealed class SeriesState<TKey>
{
    private const byte SlotEmpty = 0;
    private const byte SlotHasData = 1;

    /// <summary>The most open periods held inline, without an array: enough for a series with no lateness.</summary>
    internal const int InlineOpenPeriods = 2;

    private readonly TKey _key;
    private readonly SeriesOptions _options;
    private readonly TrackedForecaster _model;

    // Drift rules: none (both null), one (held directly), or several (the array, in the options' order).
    private readonly DriftRule? _singleRule;
    private readonly DriftRule[]? _ruleArray;

    // Open periods [_nextToClose, _nextToClose + capacity): a ring indexed by period mod capacity, held inline while
    // the capacity is at most InlineOpenPeriods, else in _openSpill.
    private OpenPeriods _openInline;
    private readonly OpenPeriod[]? _openSpill;
    private bool _started;
    private long _nextToClose;
    private long _nextCloseEndTicks;
    private long _maxEventTicks;

    private double _lastActual;
    private bool _hasLastActual;
    private long _quietPeriods;
    private long _lastArrival;

    // Restatement (null when the options allow none): the lagged model and the retained closed periods.
    private readonly Restatement? _restatement;

    private EventIdWindow? _ids;

    public SeriesState(TKey key, SeriesOptions options, long arrivalTimestamp)
    {
        _key = key;
        _options = options;
        _model = new TrackedForecaster(options.Method, options.Tracking);
        int rules = options.Rules.Length;
        if (rules == 1)
        {
            _singleRule = options.Rules[0].CreateRule();
        }
        else if (rules > 1)
        {
            _ruleArray = new DriftRule[rules];
            for (int i = 0; i < rules; i++)
            {
                _ruleArray[i] = options.Rules[i].CreateRule();
            }
        }

        int capacity = OpenCapacity(options.Calendar, options.Lateness.AllowedLateness);
        if (capacity > InlineOpenPeriods)
        {
            _openSpill = new OpenPeriod[capacity];
        }

        int restatable = options.Lateness.RestatementPeriods;
        if (restatable > 0)
        {
            _restatement = new Restatement(restatable, options, _model.StateLength);
        }

        _lastArrival = arrivalTimestamp;
    }

    public TKey Key => _key;

    public SeriesOptions Options => _options;

    public TrackedForecaster Model => _model;

    public bool IsStarted => _started;

    /// <summary>The first period that has not closed yet.</summary>
    public long NextToClose => _nextToClose;

    /// <summary>How many event ids the series remembers now.</summary>
    public int RememberedIds => _ids?.Count ?? 0;

    /// <summary>Consecutive closed periods without any observation.</summary>
    public long QuietPeriods => _quietPeriods;

    /// <summary>How many periods can be open at once (see <see cref="OpenCapacity"/>).</summary>
    internal int OpenPeriodCapacity => _openSpill?.Length ?? InlineOpenPeriods;

    /// <summary>Whether the open periods live in an array of their own rather than inline.</summary>
    internal bool OpenPeriodsSpilled => _openSpill is not null;

    private int RuleCount => _options.Rules.Length;

    private int ClosedCount => _restatement?.ClosedCount ?? 0;

    /// <summary>The open-period ring: the inline pair, or the array when the lateness needs more.</summary>
    private Span<OpenPeriod> Open => _openSpill is null ? _openInline : _openSpill;

    /// <summary>How many periods can be open at once: the lateness spans at most this many periods plus the current one.</summary>
    internal static int OpenCapacity(PeriodCalendar calendar, TimeSpan lateness)
    {
        // The shortest real period is at least 3/4 of the nominal length (a 23-hour day, a 30-minute DST shift).
        double shortest = calendar.NominalLength.Ticks * 0.75;
        double spans = Math.Ceiling(lateness.Ticks / shortest);
        return (int)Math.Min(1_000_000, spans + 2);
    }

    /// <summary>
    /// Takes one observation that the engine already validated (finite quantity inside <see cref="NumericDomain"/>, time
    /// inside the calendar, its period looked up).
    /// </summary>
    /// <returns>
    /// <see langword="null"/> when the observation was taken, counted as late, or ignored as a duplicate; otherwise why it
    /// was refused (its period's total would leave <see cref="NumericDomain"/>), in which case nothing changed and the
    /// caller counts the refusal.
    /// </returns>
    public string? Observe(DateTimeOffset timestamp, long period, double quantity, string? eventId, long arrivalTimestamp, ISeriesOutput<TKey> output)
    {
        // Too late for any restatement: decided before the id window sees the id, so a dropped event does not consume
        // it. An event that moves the watermark is never too late (its own period ends after the watermark it sets).
        if (_started && period < _nextToClose - ClosedCount)
        {
            _lastArrival = arrivalTimestamp;
            output.Counters.Observations++;
            output.Counters.Late++;
            return null;
        }

        if (!NumericDomain.Contains(HeldSum(period) + quantity))
        {
            return "The period's total would exceed the accepted magnitude (NumericDomain.MaxMagnitude = 1e15); the observation was refused and the period keeps its total.";
        }

        if (eventId is not null && _options.DuplicateWindow > 0)
        {
            _ids ??= new EventIdWindow(_options.DuplicateWindow);
            if (!_ids.TryAdd(eventId, period))
            {
                output.Counters.Duplicates++;
                return null;
            }
        }

        _lastArrival = arrivalTimestamp;
        long ticks = timestamp.UtcTicks;
        output.Counters.Observations++;
        if (!_started)
        {
            _started = true;
            _nextToClose = period;
            _nextCloseEndTicks = _options.Calendar.EndOf(period).UtcTicks;
            _maxEventTicks = ticks;
        }

        if (ticks > _maxEventTicks)
        {
            _maxEventTicks = ticks;
            CloseThrough(ticks - _options.Lateness.AllowedLateness.Ticks, output);
        }

        if (period < _nextToClose)
        {
            Late(period, quantity, output);
            return null;
        }

        // The lateness bound keeps every open period inside the ring; a calendar whose periods are shorter than
        // its nominal estimate could still overrun it, so close the oldest rather than overwrite.
        int capacity = OpenPeriodCapacity;
        while (period - _nextToClose >= capacity)
        {
            CloseNext(output);
        }

        ref OpenPeriod open = ref Open[Slot(period, capacity)];
        open.Sum += quantity;
        open.Has = true;
        return null;
    }

    /// <summary>The total an observation for <paramref name="period"/> would be added to: an open period's, a retained closed period's, or 0.</summary>
    private double HeldSum(long period)
    {
        if (!_started)
        {
            return 0;
        }

        if (period >= _nextToClose)
        {
            int capacity = OpenPeriodCapacity;
            return period - _nextToClose < capacity ? Open[Slot(period, capacity)].Sum : 0;
        }

        Restatement r = _restatement!; // the caller has already counted periods beyond the restatement horizon as late
        return r.ClosedSums[(int)(r.ClosedCount - (_nextToClose - period))];
    }

    /// <summary>Closes every period that ends at or before <paramref name="watermarkTicks"/> (UTC ticks).</summary>
    public void CloseThrough(long watermarkTicks, ISeriesOutput<TKey> output)
    {
        if (!_started)
        {
            return;
        }

        int closed = 0;
        while (_nextCloseEndTicks <= watermarkTicks)
        {
            if (closed == _options.MaxCatchUpPeriods)
            {
                SkipTo(watermarkTicks, output);
                return;
            }

            CloseNext(output);
            closed++;
        }
    }

    /// <summary>
    /// After <see cref="SeriesOptions.MaxCatchUpPeriods"/> closes in one call: closes the remaining periods that hold data
    /// and end by the watermark, then moves past the empty stretch up to the period holding the watermark without
    /// feeding it to the model. The skipped periods are counted and reported; periods before them can no longer be restated.
    /// </summary>
    private void SkipTo(long watermarkTicks, ISeriesOutput<TKey> output)
    {
        while (_nextCloseEndTicks <= watermarkTicks && HasOpenData())
        {
            CloseNext(output);
        }

        if (_nextCloseEndTicks > watermarkTicks
            || !_options.Calendar.TryPeriodOf(new DateTimeOffset(watermarkTicks, TimeSpan.Zero), out long target)
            || target <= _nextToClose)
        {
            return;
        }

        long skipped = target - _nextToClose;
        long from = _nextToClose;
        _nextToClose = target;
        _nextCloseEndTicks = _options.Calendar.EndOf(target).UtcTicks;
        _quietPeriods += skipped;
        output.Counters.SkippedPeriods += skipped;
        if (_restatement is { } r)
        {
            _model.ExportState(r.Scratch);
            r.LagModel.ImportState(r.Scratch);
            r.LagLastActual = _lastActual;
            r.LagHasLastActual = _hasLastActual;
            r.ClosedCount = 0;
        }

        _ids?.ForgetBefore(_nextToClose);
        output.Fault(new SeriesFault<TKey>(_key, from, SeriesFaultKind.PeriodsSkipped, string.Create(System.Globalization.CultureInfo.InvariantCulture,
            $"{skipped} periods without data were skipped, from period {from}: one step may close at most {_options.MaxCatchUpPeriods} periods (SeriesOptions.MaxCatchUpPeriods). The model did not see them.")));
    }

    private bool HasOpenData()
    {
        foreach (OpenPeriod o in Open)
        {
            if (o.Has)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Closes every open period, including the one holding the latest event (end of input).</summary>
    public void CloseAll(ISeriesOutput<TKey> output)
    {
        if (!_started)
        {
            return;
        }

        long last = _options.Calendar.PeriodOf(new DateTimeOffset(_maxEventTicks, TimeSpan.Zero));
        while (_nextToClose <= last)
        {
            CloseNext(output);
        }
    }

    /// <summary>
    /// Closes periods for a series that has been quiet for its idle timeout: event time is assumed to have moved on
    /// by the quiet time since the last arrival.
    /// </summary>
    public void Idle(long nowTimestamp, TimeProvider time, ISeriesOutput<TKey> output)
    {
        if (!_started || _options.IdleTimeout is not { } timeout)
        {
            return;
        }

        TimeSpan quiet = time.GetElapsedTime(_lastArrival, nowTimestamp);
        if (quiet >= timeout)
        {
            long estimate = _maxEventTicks > DateTimeOffset.MaxValue.UtcTicks - quiet.Ticks ? DateTimeOffset.MaxValue.UtcTicks : _maxEventTicks + quiet.Ticks;
            CloseThrough(estimate - _options.Lateness.AllowedLateness.Ticks, output);
        }
    }

    /// <summary>Closes the current episode of every rule after a person acknowledged the drift, and restarts their warm-up.</summary>
    /// <remarks>
    /// The error statistics start afresh too (a tracking signal would otherwise re-raise on the old RSFE), and the
    /// restatement window closes: periods before the acknowledgement can no longer be restated.
    /// </remarks>
    public void Acknowledge(ISeriesOutput<TKey> output)
    {
        _model.ResetErrors();
        if (_restatement is { } r)
        {
            _model.ExportState(r.Scratch);
            r.LagModel.ImportState(r.Scratch);
            r.LagLastActual = _lastActual;
            r.LagHasLastActual = _hasLastActual;
            r.ClosedCount = 0;
        }

        for (int i = 0; i < RuleCount; i++)
        {
            DriftTransition t = RuleAt(i).Rebaseline();
            Publish(i, t, _nextToClose - 1, output);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private DriftRule RuleAt(int index)
    {
        Debug.Assert(index >= 0 && index < RuleCount);
        return _ruleArray is null ? _singleRule! : _ruleArray[index];
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static int Slot(long period, int capacity)
    {
        long m = period % capacity;
        return (int)(m < 0 ? m + capacity : m);
    }

    private void CloseNext(ISeriesOutput<TKey> output)
    {
        long period = _nextToClose;
        ref OpenPeriod open = ref Open[Slot(period, OpenPeriodCapacity)];
        bool has = open.Has;
        double sum = open.Sum;
        open = default;
        _nextToClose = period + 1;
        _nextCloseEndTicks = _options.Calendar.EndOf(period + 1).UtcTicks;
        output.Counters.PeriodsClosed++;
        _quietPeriods = has ? 0 : _quietPeriods + 1;

        if (_restatement is not null)
        {
            Retain(_restatement, has, sum);
        }

        // Repeats of events in periods that can no longer change are late anyway: stop remembering their ids.
        _ids?.ForgetBefore(_nextToClose - ClosedCount);
        Apply(period, has, sum, ApplyMode.Live, output);
    }

    private void Retain(Restatement r, bool has, double sum)
    {
        int restatable = r.ClosedSums.Length;
        if (r.ClosedCount == restatable)
        {
            // The oldest retained period leaves the horizon: move the lagged model past it, then shift.
            ApplyToLag(r, r.ClosedHas[0] == SlotHasData, r.ClosedSums[0]);
            Array.Copy(r.ClosedSums, 1, r.ClosedSums, 0, restatable - 1);
            Array.Copy(r.ClosedHas, 1, r.ClosedHas, 0, restatable - 1);
            r.ClosedCount--;
        }

        r.ClosedSums[r.ClosedCount] = sum;
        r.ClosedHas[r.ClosedCount] = has ? SlotHasData : SlotEmpty;
        r.ClosedCount++;
    }

    private void Late(long period, double quantity, ISeriesOutput<TKey> output)
    {
        long age = _nextToClose - period; // 1 = the last closed period
        if (age > ClosedCount)
        {
            output.Counters.Late++;
            return;
        }

        Restatement r = _restatement!; // a closed period is retained only when restatement is on
        int index = (int)(r.ClosedCount - age);
        r.ClosedSums[index] += quantity;
        r.ClosedHas[index] = SlotHasData;
        output.Counters.Restated++;

        // Roll the model back to before the oldest retained period and replay the retained periods. Drift rules are
        // not rolled back: they keep their episodes and see the corrected statistics from the next period on.
        r.LagModel.ExportState(r.Scratch);
        _model.ImportState(r.Scratch);
        _lastActual = r.LagLastActual;
        _hasLastActual = r.LagHasLastActual;
        long first = _nextToClose - r.ClosedCount;
        for (int i = 0; i < r.ClosedCount; i++)
        {
            Apply(first + i, r.ClosedHas[i] == SlotHasData, r.ClosedSums[i], i >= index ? ApplyMode.Restated : ApplyMode.Silent, output);
        }
    }

    private void ApplyToLag(Restatement r, bool has, double sum)
    {
        if (!ResolveActual(has, sum, ref r.LagLastActual, ref r.LagHasLastActual, out double actual, out bool scored))
        {
            return;
        }

        try
        {
            if (scored)
            {
                r.LagModel.Update(actual);
            }
            else
            {
                r.LagModel.UpdateUnscored(actual);
            }
        }
        catch (ArgumentOutOfRangeException)
        {
            // Already reported when the live model rejected the same actual.
        }
    }

    /// <summary>Turns a period's raw input into the actual fed to the model under the gap policy; false when nothing is fed.</summary>
    private bool ResolveActual(bool has, double sum, ref double lastActual, ref bool hasLastActual, out double actual, out bool scored)
    {
        scored = true;
        if (has)
        {
            actual = sum;
        }
        else
        {
            switch (_options.Gaps)
            {
                case GapPolicy.Zero:
                    actual = 0;
                    break;
                case GapPolicy.CarryForward when hasLastActual:
                    actual = lastActual;
                    scored = false;
                    break;
                default:
                    actual = double.NaN;
                    return false;
            }
        }

        lastActual = actual;
        hasLastActual = true;
        return true;
    }

    private enum ApplyMode
    {
        /// <summary>A period closing for the first time: publish, score, evaluate rules.</summary>
        Live,

        /// <summary>Replaying an unchanged period to rebuild state after a rollback: publish nothing.</summary>
        Silent,

        /// <summary>Replaying a period whose actual (or whose history) changed: publish it marked as a restatement.</summary>
        Restated,
    }

    private void Apply(long period, bool has, double sum, ApplyMode mode, ISeriesOutput<TKey> output)
    {
        if (!has && mode == ApplyMode.Live)
        {
            output.Counters.GapPeriods++;
        }

        double previousLast = _lastActual;
        bool previousHasLast = _hasLastActual;
        if (!ResolveActual(has, sum, ref _lastActual, ref _hasLastActual, out double actual, out bool scored))
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
            _lastActual = previousLast;
            _hasLastActual = previousHasLast;
            if (mode == ApplyMode.Live)
            {
                output.Counters.RejectedActuals++;
                output.Fault(new SeriesFault<TKey>(_key, period, SeriesFaultKind.ActualRejected, ex.Message));
            }

            return;
        }

        if (mode == ApplyMode.Silent)
        {
            return;
        }

        bool restated = mode == ApplyMode.Restated;

        ErrorTracker tracker = _model.Tracker;
        var errors = ErrorSummary.Of(tracker);
        DateTimeOffset start = _options.Calendar.StartOf(period);
        ForecastPoint next = Point(1);
        ForecastPoint atHorizon = _options.Horizon == 1 ? next : Point(_options.Horizon); // the same point: compute it once
        output.Forecast(new ForecastUpdate<TKey>(
            _key, period, start, actual, !has, score.Forecast, score.Error,
            next, atHorizon, errors, _options.MethodLabel, restated));

        if (!restated && score.IsScored)
        {
            // The summary already holds σ and both signals of the tracker's current state: the rules read those.
            var input = new DriftInput(score.Error, errors.Sigma, errors.TrackingSignal, errors.TriggSignal);
            for (int i = 0; i < RuleCount; i++)
            {
                DriftRule rule = RuleAt(i);
                if (DriftInputFits(rule, input))
                {
                    Publish(i, rule.Evaluate(input), period, output, errors, start);
                }
            }
        }
    }

    private static bool DriftInputFits(DriftRule rule, in DriftInput input) => rule.Kind switch
    {
        DriftRuleKind.TrackingSignal => double.IsFinite(input.TrackingSignal),
        DriftRuleKind.TriggSignal => double.IsFinite(input.TriggSignal),
        _ => double.IsFinite(input.Error) && double.IsFinite(input.Sigma) && input.Sigma > 0,
    };

    private void Publish(int ruleIndex, in DriftTransition transition, long period, ISeriesOutput<TKey> output, ErrorSummary? errors = null, DateTimeOffset? start = null)
    {
        if (transition.IsNone)
        {
            return;
        }

        switch (transition.Kind)
        {
            case DriftTransitionKind.Raised:
                output.Counters.AlertsRaised++;
                break;
            case DriftTransitionKind.Escalated:
                output.Counters.AlertsEscalated++;
                break;
            case DriftTransitionKind.Cleared:
                output.Counters.AlertsCleared++;
                break;
        }

        output.Alert(new DriftAlert<TKey>(
            _key, period, start ?? (_started ? _options.Calendar.StartOf(period) : default), ruleIndex, _options.RuleLabels[ruleIndex],
            transition, errors ?? ErrorSummary.Of(_model.Tracker)));
    }

    private ForecastPoint Point(int horizon)
    {
        if (!_model.TryForecast(horizon, _options.IntervalMultiplier, out double value, out PredictionInterval interval))
        {
            return new ForecastPoint(horizon, double.NaN, double.NaN, double.NaN);
        }

        return new ForecastPoint(horizon, value, interval.Lower, interval.Upper);
    }

    /// <summary>The series as it stands now (see <see cref="SeriesStatus{TKey}"/>). Allocates the status's episode list.</summary>
    public SeriesStatus<TKey> Status()
    {
        int open = 0;
        for (int i = 0; i < RuleCount; i++)
        {
            if (RuleAt(i).IsOpen)
            {
                open++;
            }
        }

        var episodes = open == 0 ? [] : new DriftEpisodeStatus[open];
        for (int i = 0, j = 0; i < RuleCount; i++)
        {
            DriftRule rule = RuleAt(i);
            if (rule.IsOpen)
            {
                episodes[j++] = new DriftEpisodeStatus(i, _options.RuleLabels[i], rule.EpisodeId, rule.Direction, rule.Severity);
            }
        }

        ForecastPoint next = Point(1);
        return new SeriesStatus<TKey>(
            _key,
            _nextToClose,
            _started ? _options.Calendar.StartOf(_nextToClose) : default,
            _hasLastActual ? _lastActual : double.NaN,
            next,
            _options.Horizon == 1 ? next : Point(_options.Horizon),
            ErrorSummary.Of(_model.Tracker),
            _options.MethodLabel,
            episodes);
    }

    /// <summary>Writes the complete state (everything but the key and options, which the caller writes or re-resolves).</summary>
    public void Write(SnapshotPayloadWriter writer)
    {
        writer.WriteString(_options.MethodLabel);
        writer.WriteBoolean(_started);
        writer.WriteInt64(_nextToClose);
        writer.WriteInt64(_maxEventTicks);
        writer.WriteDouble(_lastActual);
        writer.WriteBoolean(_hasLastActual);
        writer.WriteInt64(_quietPeriods);

        Span<OpenPeriod> openPeriods = Open;
        int open = 0;
        foreach (OpenPeriod o in openPeriods)
        {
            open += o.Has ? 1 : 0;
        }

        writer.WriteInt32(open);
        for (long p = _nextToClose; p < _nextToClose + openPeriods.Length; p++)
        {
            OpenPeriod o = openPeriods[Slot(p, openPeriods.Length)];
            if (o.Has)
            {
                writer.WriteInt64(p);
                writer.WriteDouble(o.Sum);
            }
        }

        writer.WriteDoubles(_model.ExportState());
        writer.WriteInt32(RuleCount);
        for (int i = 0; i < RuleCount; i++)
        {
            writer.WriteDoubles(RuleAt(i).ExportState());
        }

        writer.WriteInt32(ClosedCount);
        if (_restatement is { } r)
        {
            for (int i = 0; i < r.ClosedCount; i++)
            {
                writer.WriteDouble(r.ClosedSums[i]);
                writer.WriteByte(r.ClosedHas[i]);
            }

            writer.WriteDoubles(r.LagModel.ExportState());
            writer.WriteDouble(r.LagLastActual);
            writer.WriteBoolean(r.LagHasLastActual);
        }

        int ids = _ids?.Count ?? 0;
        writer.WriteInt32(ids);
        if (_ids is not null)
        {
            foreach ((string id, long period) in _ids.Oldest())
            {
                writer.WriteString(id);
                writer.WriteInt64(period);
            }
        }
    }

    /// <summary>
    /// Reads a state written by <see cref="Write"/> into this freshly created series. Throws
    /// <see cref="InvalidDataException"/> when the data does not fit the series' options.
    /// </summary>
    public void Read(SnapshotPayloadReader reader)
    {
        string method = reader.ReadString();
        if (method != _options.MethodLabel)
        {
            throw new InvalidDataException($"The snapshot holds a {method} series but the options for this key say {_options.MethodLabel}.");
        }

        _started = reader.ReadBoolean();
        _nextToClose = reader.ReadInt64();
        _maxEventTicks = reader.ReadInt64();
        _lastActual = ReadFinite(reader);
        _hasLastActual = reader.ReadBoolean();
        _quietPeriods = reader.ReadInt64();
        if (_started)
        {
            PeriodCalendar calendar = _options.Calendar;
            if (_nextToClose < calendar.MinPeriod || _nextToClose > calendar.MaxPeriod
                || _maxEventTicks < DateTimeOffset.MinValue.UtcTicks || _maxEventTicks > DateTimeOffset.MaxValue.UtcTicks)
            {
                throw new InvalidDataException("The snapshot's period position is outside the calendar.");
            }

            _nextCloseEndTicks = calendar.EndOf(_nextToClose).UtcTicks;
        }

        int capacity = OpenPeriodCapacity;
        int open = reader.ReadInt32();
        if (open < 0 || open > capacity)
        {
            throw new InvalidDataException("The snapshot's open-period count does not fit the lateness window.");
        }

        for (int i = 0; i < open; i++)
        {
            long p = reader.ReadInt64();
            double sum = ReadFinite(reader);
            if (p < _nextToClose || p - _nextToClose >= capacity)
            {
                throw new InvalidDataException("The snapshot holds an open period outside the lateness window.");
            }

            ref OpenPeriod o = ref Open[Slot(p, capacity)];
            o.Sum = sum;
            o.Has = true;
        }

        ImportInto(reader, _model.ImportState);
        int rules = reader.ReadInt32();
        if (rules != RuleCount)
        {
            throw new InvalidDataException($"The snapshot holds {rules} drift rules but the options for this key have {RuleCount}.");
        }

        for (int i = 0; i < RuleCount; i++)
        {
            ImportInto(reader, RuleAt(i).ImportState);
        }

        int closed = reader.ReadInt32();
        if (closed < 0 || closed > (_restatement?.ClosedSums.Length ?? 0))
        {
            throw new InvalidDataException("The snapshot's restatement window does not fit the options for this key.");
        }

        if (_restatement is { } r)
        {
            r.ClosedCount = closed;
            for (int i = 0; i < closed; i++)
            {
                r.ClosedSums[i] = ReadFinite(reader);
                r.ClosedHas[i] = reader.ReadByte() == SlotHasData ? SlotHasData : SlotEmpty;
            }

            ImportInto(reader, r.LagModel.ImportState);
            r.LagLastActual = ReadFinite(reader);
            r.LagHasLastActual = reader.ReadBoolean();
        }

        int ids = reader.ReadInt32();
        if (ids < 0 || ids > _options.DuplicateWindow)
        {
            throw new InvalidDataException("The snapshot holds more event ids than the duplicate window for this key.");
        }

        if (ids > 0)
        {
            _ids = new EventIdWindow(_options.DuplicateWindow);
            for (int i = 0; i < ids; i++)
            {
                string id = reader.ReadString();
                if (!_ids.TryAdd(id, reader.ReadInt64()))
                {
                    throw new InvalidDataException("The snapshot holds the same event id twice for one series.");
                }
            }
        }
    }

    private delegate void SpanImporter(ReadOnlySpan<double> state);

    private static void ImportInto(SnapshotPayloadReader reader, SpanImporter import)
    {
        double[] values = reader.ReadDoubles();

        try
        {
            import(values);
        }
        catch (ArgumentException ex)
        {
            throw new InvalidDataException("The snapshot holds a state that does not fit the options for this key: " + ex.Message, ex);
        }
    }

    private static double ReadFinite(SnapshotPayloadReader reader)
    {
        double v = reader.ReadDouble();
        return double.IsFinite(v) ? v : throw new InvalidDataException("The snapshot holds a number that is not finite.");
    }

    /// <summary>One open period: the sum of its observations so far, and whether it has any.</summary>
    private struct OpenPeriod
    {
        public double Sum;
        public bool Has;
    }

    /// <summary>The open-period ring of a series with no lateness, held inside the series object.</summary>
    [InlineArray(InlineOpenPeriods)]
    private struct OpenPeriods
    {
        private OpenPeriod _first;
    }

    /// <summary>
    /// What restatement needs, created only when the options allow it: the model as it was before the oldest retained
    /// closed period, those periods' raw inputs, and a buffer to copy model states through.
    /// </summary>
    private sealed class Restatement
    {
        public Restatement(int periods, SeriesOptions options, int modelStateLength)
        {
            LagModel = new TrackedForecaster(options.Method, options.Tracking);
            ClosedSums = new double[periods];
            ClosedHas = new byte[periods];
            Scratch = new double[modelStateLength];
        }

        public TrackedForecaster LagModel { get; }

        public double[] ClosedSums { get; }

        public byte[] ClosedHas { get; }

        public double[] Scratch { get; }

        public int ClosedCount;

        public double LagLastActual;

        public bool LagHasLastActual;
    }
}
