using System.Diagnostics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using StreamForecast.Alerts;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

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
internal sealed partial class SeriesState<TKey>
{
    private const byte SlotEmpty = 0;
    private const byte SlotHasData = 1;

    /// <summary>The most open periods held inline, without an array: enough for a series with no lateness.</summary>
    internal const int InlineOpenPeriods = 2;

    // The per-period step (gap policy, model, error statistics, drift rules, outputs): shared with every other host.
    private readonly SeriesStep<TKey> _step;

    // Open periods [_nextToClose, _nextToClose + capacity): a ring indexed by period mod capacity, held inline while
    // the capacity is at most InlineOpenPeriods, else in the extras' spill array.
    private OpenPeriods _openInline;
    private bool _started;
    private long _nextToClose;
    private long _nextCloseEndTicks;
    private long _maxEventTicks;

    private long _quietPeriods;
    private long _lastArrival;

    // What most series never use (null for a series with none of it): the open-period array of a long lateness, the
    // restatement state, the remembered event ids (see SeriesState.Extras.cs).
    private Extras? _extras;

    public SeriesState(TKey key, SeriesOptions options, long arrivalTimestamp)
    {
        _step = new SeriesStep<TKey>(key, options);

        int capacity = OpenCapacity(options.Calendar, options.Lateness.AllowedLateness);
        if (capacity > InlineOpenPeriods)
        {
            (_extras ??= new Extras()).OpenSpill = new OpenPeriod[capacity];
        }

        int restatable = options.Lateness.RestatementPeriods;
        if (restatable > 0)
        {
            (_extras ??= new Extras()).Restatement = new Restatement(restatable, key, options, _step.Model.StateLength);
        }

        _lastArrival = arrivalTimestamp;
    }

    public TKey Key => _step.Key;

    public SeriesOptions Options => _step.Options;

    public TrackedForecaster Model => _step.Model;

    public bool IsStarted => _started;

    /// <summary>The first period that has not closed yet.</summary>
    public long NextToClose => _nextToClose;

    /// <summary>How many event ids the series remembers now.</summary>
    public int RememberedIds => Ids?.Count ?? 0;

    /// <summary>Consecutive closed periods without any observation.</summary>
    public long QuietPeriods => _quietPeriods;

    /// <summary>How many periods can be open at once (see <see cref="OpenCapacity"/>).</summary>
    internal int OpenPeriodCapacity => OpenSpill?.Length ?? InlineOpenPeriods;

    /// <summary>Whether the open periods live in an array of their own rather than inline.</summary>
    internal bool OpenPeriodsSpilled => OpenSpill is not null;

    private int RuleCount => _step.RuleCount;

    private int ClosedCount => Restating?.ClosedCount ?? 0;

    /// <summary>The open-period ring: the inline pair, or the array when the lateness needs more.</summary>
    private Span<OpenPeriod> Open => OpenSpill is { } spill ? spill : _openInline;

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
        SeriesCounters counters = output.Counters; // an interface call: read once per observation
        if (_started && period < _nextToClose - ClosedCount)
        {
            _lastArrival = arrivalTimestamp;
            counters.Observations++;
            counters.Late++;
            return null;
        }

        if (!NumericDomain.Contains(HeldSum(period) + quantity))
        {
            return "The period's total would exceed the accepted magnitude (NumericDomain.MaxMagnitude = 1e15); the observation was refused and the period keeps its total.";
        }

        if (eventId is not null && Options.DuplicateWindow > 0)
        {
            Extras extras = _extras ??= new Extras();
            extras.Ids ??= new EventIdWindow(Options.DuplicateWindow);
            if (!extras.Ids.TryAdd(eventId, period))
            {
                counters.Duplicates++;
                return null;
            }
        }

        _lastArrival = arrivalTimestamp;
        long ticks = timestamp.UtcTicks;
        counters.Observations++;
        if (!_started)
        {
            _started = true;
            _nextToClose = period;
            _nextCloseEndTicks = Options.Calendar.EndOf(period).UtcTicks;
            _maxEventTicks = ticks;
        }

        if (ticks > _maxEventTicks)
        {
            _maxEventTicks = ticks;
            CloseThrough(ticks - Options.Lateness.AllowedLateness.Ticks, output);
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

        ref OpenPeriod open = ref OpenSlot(period);
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
            return period - _nextToClose < capacity ? OpenSlot(period).Sum : 0;
        }

        Restatement r = Restating!; // the caller has already counted periods beyond the restatement horizon as late
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
            if (closed == Options.MaxCatchUpPeriods)
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
            || !Options.Calendar.TryPeriodOf(new DateTimeOffset(watermarkTicks, TimeSpan.Zero), out long target)
            || target <= _nextToClose)
        {
            return;
        }

        long skipped = target - _nextToClose;
        long from = _nextToClose;
        _nextToClose = target;
        _nextCloseEndTicks = Options.Calendar.EndOf(target).UtcTicks;
        _quietPeriods += skipped;
        output.Counters.SkippedPeriods += skipped;
        CommitRestatementWindow();

        Ids?.ForgetBefore(_nextToClose);
        output.Fault(new SeriesFault<TKey>(Key, from, SeriesFaultKind.PeriodsSkipped, string.Create(System.Globalization.CultureInfo.InvariantCulture,
            $"{skipped} periods without data were skipped, from period {from}: one step may close at most {Options.MaxCatchUpPeriods} periods (SeriesOptions.MaxCatchUpPeriods). The model did not see them.")));
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

        long last = Options.Calendar.PeriodOf(new DateTimeOffset(_maxEventTicks, TimeSpan.Zero));
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
        if (!_started || Options.IdleTimeout is not { } timeout)
        {
            return;
        }

        TimeSpan quiet = time.GetElapsedTime(_lastArrival, nowTimestamp);
        if (quiet >= timeout)
        {
            long estimate = _maxEventTicks > DateTimeOffset.MaxValue.UtcTicks - quiet.Ticks ? DateTimeOffset.MaxValue.UtcTicks : _maxEventTicks + quiet.Ticks;
            CloseThrough(estimate - Options.Lateness.AllowedLateness.Ticks, output);
        }
    }

    /// <summary>Closes the current episode of every rule after a person acknowledged the drift, and restarts their warm-up.</summary>
    /// <remarks>
    /// The error statistics start afresh too (a tracking signal would otherwise re-raise on the old RSFE), and the
    /// restatement window closes: periods before the acknowledgement can no longer be restated.
    /// </remarks>
    public void Acknowledge(ISeriesOutput<TKey> output)
    {
        _step.Acknowledge(_nextToClose - 1, _started, output, output.Counters);
        CommitRestatementWindow();
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
        ref OpenPeriod open = ref OpenSlot(period);
        bool has = open.Has;
        double sum = open.Sum;
        open = default;
        _nextToClose = period + 1;
        // After the calendar's last period nothing can close: no instant lies beyond it.
        _nextCloseEndTicks = period < Options.Calendar.MaxPeriod ? Options.Calendar.EndOf(period + 1).UtcTicks : long.MaxValue;
        SeriesCounters counters = output.Counters;
        counters.PeriodsClosed++;
        _quietPeriods = has ? 0 : _quietPeriods + 1;

        if (Restating is { } restating)
        {
            Retain(restating, has, sum);
        }

        // Repeats of events in periods that can no longer change are late anyway: stop remembering their ids.
        Ids?.ForgetBefore(_nextToClose - ClosedCount);
        _step.Apply(period, has, sum, StepMode.Live, output, counters);
    }

    /// <summary>The series as it stands now (see <see cref="SeriesStatus{TKey}"/>). Allocates the status's episode list.</summary>
    public SeriesStatus<TKey> Status()
    {
        int open = 0;
        for (int i = 0; i < RuleCount; i++)
        {
            if (_step.RuleAt(i).IsOpen)
            {
                open++;
            }
        }

        var episodes = open == 0 ? [] : new DriftEpisodeStatus[open];
        for (int i = 0, j = 0; i < RuleCount; i++)
        {
            DriftRule rule = _step.RuleAt(i);
            if (rule.IsOpen)
            {
                episodes[j++] = new DriftEpisodeStatus(i, Options.RuleLabels[i], rule.EpisodeId, rule.Direction, rule.Severity);
            }
        }

        ForecastPoint next = _step.Point(1);
        return new SeriesStatus<TKey>(
            Key,
            _nextToClose,
            _started ? Options.Calendar.StartOf(_nextToClose) : default,
            _step.HasLastActual ? _step.LastActual : double.NaN,
            next,
            Options.Horizon == 1 ? next : _step.Point(Options.Horizon),
            ErrorSummary.Of(_step.Model.Tracker),
            _step.Model.Forecaster.ActiveMethodName ?? Options.MethodLabel,
            episodes);
    }

    /// <summary>One open period: the sum of its observations so far, and whether it has any.</summary>
    /// <remarks>Packed to 9 bytes rather than 16: the inline pair held by every series takes 18 bytes (memory per series).</remarks>
    [StructLayout(LayoutKind.Sequential, Pack = 1)]
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
}
