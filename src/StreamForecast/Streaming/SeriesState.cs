using System.Diagnostics;
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
internal sealed class SeriesState<TKey>
{
    private const byte SlotEmpty = 0;
    private const byte SlotHasData = 1;

    private readonly TKey _key;
    private readonly SeriesOptions _options;
    private readonly PeriodCalendar _calendar;
    private readonly long _latenessTicks;
    private readonly TrackedForecaster _model;
    private readonly DriftRule[] _rules;

    // Open periods [_nextToClose, _nextToClose + capacity): sums in a ring indexed by period mod capacity.
    private readonly double[] _openSums;
    private readonly byte[] _openHas;
    private bool _started;
    private long _nextToClose;
    private long _nextCloseEndTicks;
    private long _maxEventTicks;

    private double _lastActual;
    private bool _hasLastActual;
    private long _quietPeriods;
    private long _lastArrival;

    // Restatement: the model as it was before the oldest retained closed period, and those periods' raw inputs.
    private readonly int _restatable;
    private readonly TrackedForecaster? _lagModel;
    private readonly double[]? _closedSums;
    private readonly byte[]? _closedHas;
    private readonly double[]? _scratch;
    private int _closedCount;
    private double _lagLastActual;
    private bool _lagHasLastActual;

    private EventIdWindow? _ids;

    public SeriesState(TKey key, SeriesOptions options, long arrivalTimestamp)
    {
        _key = key;
        _options = options;
        _calendar = options.Calendar;
        _latenessTicks = options.Lateness.AllowedLateness.Ticks;
        _model = new TrackedForecaster(options.Method, options.Tracking);
        _rules = new DriftRule[options.Rules.Length];
        for (int i = 0; i < _rules.Length; i++)
        {
            _rules[i] = options.Rules[i].CreateRule();
        }

        int capacity = OpenCapacity(_calendar, options.Lateness.AllowedLateness);
        _openSums = new double[capacity];
        _openHas = new byte[capacity];
        _restatable = options.Lateness.RestatementPeriods;
        if (_restatable > 0)
        {
            _lagModel = new TrackedForecaster(options.Method, options.Tracking);
            _closedSums = new double[_restatable];
            _closedHas = new byte[_restatable];
            _scratch = new double[_model.StateLength];
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

    /// <summary>How many periods can be open at once: the lateness spans at most this many periods plus the current one.</summary>
    internal static int OpenCapacity(PeriodCalendar calendar, TimeSpan lateness)
    {
        // The shortest real period is at least 3/4 of the nominal length (a 23-hour day, a 30-minute DST shift).
        double shortest = calendar.NominalLength.Ticks * 0.75;
        double spans = Math.Ceiling(lateness.Ticks / shortest);
        return (int)Math.Min(1_000_000, spans + 2);
    }

    /// <summary>Takes one observation that the engine already validated (finite quantity, time inside the calendar, its period looked up).</summary>
    public void Observe(DateTimeOffset timestamp, long period, double quantity, string? eventId, long arrivalTimestamp, ISeriesOutput<TKey> output)
    {
        if (eventId is not null && _options.DuplicateWindow > 0)
        {
            _ids ??= new EventIdWindow(_options.DuplicateWindow);
            if (!_ids.TryAdd(eventId, period))
            {
                output.Counters.Duplicates++;
                return;
            }
        }

        _lastArrival = arrivalTimestamp;
        long ticks = timestamp.UtcTicks;
        output.Counters.Observations++;
        if (!_started)
        {
            _started = true;
            _nextToClose = period;
            _nextCloseEndTicks = _calendar.EndOf(period).UtcTicks;
            _maxEventTicks = ticks;
        }

        if (ticks > _maxEventTicks)
        {
            _maxEventTicks = ticks;
            CloseThrough(ticks - _latenessTicks, output);
        }

        if (period < _nextToClose)
        {
            Late(period, quantity, output);
            return;
        }

        // The lateness bound keeps every open period inside the ring; a calendar whose periods are shorter than
        // its nominal estimate could still overrun it, so close the oldest rather than overwrite.
        while (period - _nextToClose >= _openSums.Length)
        {
            CloseNext(output);
        }

        int slot = Slot(period);
        _openSums[slot] += quantity;
        _openHas[slot] = SlotHasData;
    }

    /// <summary>Closes every period that ends at or before <paramref name="watermarkTicks"/> (UTC ticks).</summary>
    public void CloseThrough(long watermarkTicks, ISeriesOutput<TKey> output)
    {
        if (!_started)
        {
            return;
        }

        while (_nextCloseEndTicks <= watermarkTicks)
        {
            CloseNext(output);
        }
    }

    /// <summary>Closes every open period, including the one holding the latest event (end of input).</summary>
    public void CloseAll(ISeriesOutput<TKey> output)
    {
        if (!_started)
        {
            return;
        }

        long last = _calendar.PeriodOf(new DateTimeOffset(_maxEventTicks, TimeSpan.Zero));
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
            CloseThrough(estimate - _latenessTicks, output);
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
        if (_restatable > 0)
        {
            _model.ExportState(_scratch!);
            _lagModel!.ImportState(_scratch);
            _lagLastActual = _lastActual;
            _lagHasLastActual = _hasLastActual;
            _closedCount = 0;
        }

        for (int i = 0; i < _rules.Length; i++)
        {
            DriftTransition t = _rules[i].Rebaseline();
            Publish(i, t, _nextToClose - 1, output);
        }
    }

    private int Slot(long period)
    {
        long m = period % _openSums.Length;
        return (int)(m < 0 ? m + _openSums.Length : m);
    }

    private void CloseNext(ISeriesOutput<TKey> output)
    {
        long period = _nextToClose;
        int slot = Slot(period);
        bool has = _openHas[slot] == SlotHasData;
        double sum = _openSums[slot];
        _openSums[slot] = 0;
        _openHas[slot] = SlotEmpty;
        _nextToClose = period + 1;
        _nextCloseEndTicks = _calendar.EndOf(period + 1).UtcTicks;
        output.Counters.PeriodsClosed++;
        _quietPeriods = has ? 0 : _quietPeriods + 1;

        if (_restatable > 0)
        {
            Retain(has, sum);
        }

        // Repeats of events in periods that can no longer change are late anyway: stop remembering their ids.
        _ids?.ForgetBefore(_nextToClose - _closedCount);
        Apply(period, has, sum, ApplyMode.Live, output);
    }

    private void Retain(bool has, double sum)
    {
        Debug.Assert(_closedSums is not null && _closedHas is not null && _lagModel is not null);
        if (_closedCount == _restatable)
        {
            // The oldest retained period leaves the horizon: move the lagged model past it, then shift.
            ApplyToLag(_closedHas[0] == SlotHasData, _closedSums[0]);
            Array.Copy(_closedSums, 1, _closedSums, 0, _restatable - 1);
            Array.Copy(_closedHas, 1, _closedHas, 0, _restatable - 1);
            _closedCount--;
        }

        _closedSums[_closedCount] = sum;
        _closedHas[_closedCount] = has ? SlotHasData : SlotEmpty;
        _closedCount++;
    }

    private void Late(long period, double quantity, ISeriesOutput<TKey> output)
    {
        long age = _nextToClose - period; // 1 = the last closed period
        if (age > _closedCount)
        {
            output.Counters.Late++;
            return;
        }

        Debug.Assert(_closedSums is not null && _closedHas is not null && _lagModel is not null && _scratch is not null);
        int index = (int)(_closedCount - age);
        _closedSums[index] += quantity;
        _closedHas[index] = SlotHasData;
        output.Counters.Restated++;

        // Roll the model back to before the oldest retained period and replay the retained periods. Drift rules are
        // not rolled back: they keep their episodes and see the corrected statistics from the next period on.
        _lagModel.ExportState(_scratch);
        _model.ImportState(_scratch);
        _lastActual = _lagLastActual;
        _hasLastActual = _lagHasLastActual;
        long first = _nextToClose - _closedCount;
        for (int i = 0; i < _closedCount; i++)
        {
            Apply(first + i, _closedHas[i] == SlotHasData, _closedSums[i], i >= index ? ApplyMode.Restated : ApplyMode.Silent, output);
        }
    }

    private void ApplyToLag(bool has, double sum)
    {
        Debug.Assert(_lagModel is not null);
        if (!ResolveActual(has, sum, ref _lagLastActual, ref _lagHasLastActual, out double actual, out bool scored))
        {
            return;
        }

        try
        {
            if (scored)
            {
                _lagModel.Update(actual);
            }
            else
            {
                _lagModel.UpdateUnscored(actual);
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
        DateTimeOffset start = _calendar.StartOf(period);
        output.Forecast(new ForecastUpdate<TKey>(
            _key, period, start, actual, !has, score.Forecast, score.Error,
            Point(1), Point(_options.Horizon), errors, _options.MethodLabel, restated));

        if (!restated && score.IsScored)
        {
            var input = new DriftInput(score.Error, tracker.Sigma, tracker.TrackingSignal, tracker.TriggSignal);
            for (int i = 0; i < _rules.Length; i++)
            {
                if (DriftInputFits(_rules[i], input))
                {
                    Publish(i, _rules[i].Evaluate(input), period, output, errors, start);
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
            _key, period, start ?? (_started ? _calendar.StartOf(period) : default), ruleIndex, _options.RuleLabels[ruleIndex],
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

    /// <summary>Writes the complete state (everything but the key and options, which the caller writes or re-resolves).</summary>
    public void Write(SnapshotPayloadWriter writer)
    {
        writer.WriteString(_options.Method.MethodName);
        writer.WriteBoolean(_started);
        writer.WriteInt64(_nextToClose);
        writer.WriteInt64(_maxEventTicks);
        writer.WriteDouble(_lastActual);
        writer.WriteBoolean(_hasLastActual);
        writer.WriteInt64(_quietPeriods);

        int open = 0;
        for (int i = 0; i < _openHas.Length; i++)
        {
            open += _openHas[i];
        }

        writer.WriteInt32(open);
        for (long p = _nextToClose; p < _nextToClose + _openSums.Length; p++)
        {
            int slot = Slot(p);
            if (_openHas[slot] == SlotHasData)
            {
                writer.WriteInt64(p);
                writer.WriteDouble(_openSums[slot]);
            }
        }

        writer.WriteDoubles(_model.ExportState());
        writer.WriteInt32(_rules.Length);
        foreach (DriftRule rule in _rules)
        {
            writer.WriteDoubles(rule.ExportState());
        }

        writer.WriteInt32(_closedCount);
        if (_restatable > 0)
        {
            for (int i = 0; i < _closedCount; i++)
            {
                writer.WriteDouble(_closedSums![i]);
                writer.WriteByte(_closedHas![i]);
            }

            writer.WriteDoubles(_lagModel!.ExportState());
            writer.WriteDouble(_lagLastActual);
            writer.WriteBoolean(_lagHasLastActual);
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
        if (method != _options.Method.MethodName)
        {
            throw new InvalidDataException($"The snapshot holds a {method} series but the options for this key say {_options.Method.MethodName}.");
        }

        _started = reader.ReadBoolean();
        _nextToClose = reader.ReadInt64();
        _maxEventTicks = reader.ReadInt64();
        _lastActual = ReadFinite(reader);
        _hasLastActual = reader.ReadBoolean();
        _quietPeriods = reader.ReadInt64();
        if (_started)
        {
            if (_nextToClose < _calendar.MinPeriod || _nextToClose > _calendar.MaxPeriod
                || _maxEventTicks < DateTimeOffset.MinValue.UtcTicks || _maxEventTicks > DateTimeOffset.MaxValue.UtcTicks)
            {
                throw new InvalidDataException("The snapshot's period position is outside the calendar.");
            }

            _nextCloseEndTicks = _calendar.EndOf(_nextToClose).UtcTicks;
        }

        int open = reader.ReadInt32();
        if (open < 0 || open > _openSums.Length)
        {
            throw new InvalidDataException("The snapshot's open-period count does not fit the lateness window.");
        }

        for (int i = 0; i < open; i++)
        {
            long p = reader.ReadInt64();
            double sum = ReadFinite(reader);
            if (p < _nextToClose || p - _nextToClose >= _openSums.Length)
            {
                throw new InvalidDataException("The snapshot holds an open period outside the lateness window.");
            }

            int slot = Slot(p);
            _openSums[slot] = sum;
            _openHas[slot] = SlotHasData;
        }

        ImportInto(reader, _model.ImportState);
        int rules = reader.ReadInt32();
        if (rules != _rules.Length)
        {
            throw new InvalidDataException($"The snapshot holds {rules} drift rules but the options for this key have {_rules.Length}.");
        }

        foreach (DriftRule rule in _rules)
        {
            ImportInto(reader, rule.ImportState);
        }

        int closed = reader.ReadInt32();
        if (closed < 0 || closed > _restatable)
        {
            throw new InvalidDataException("The snapshot's restatement window does not fit the options for this key.");
        }

        _closedCount = closed;
        if (_restatable > 0)
        {
            for (int i = 0; i < closed; i++)
            {
                _closedSums![i] = ReadFinite(reader);
                _closedHas![i] = reader.ReadByte() == SlotHasData ? SlotHasData : SlotEmpty;
            }

            ImportInto(reader, _lagModel!.ImportState);
            _lagLastActual = ReadFinite(reader);
            _lagHasLastActual = reader.ReadBoolean();
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
}
