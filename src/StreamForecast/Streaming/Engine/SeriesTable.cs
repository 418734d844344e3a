using System.Runtime.InteropServices;

namespace StreamForecast.Streaming;

/// <summary>
/// What an owner of a <see cref="SeriesTable{TKey}"/> provides: where output goes, how a new key's options are
/// resolved, and the shared limits and counters. Implemented by the engine's partitions and by any other host of the
/// same per-series state (a grain in a cluster), so the rules for creating, routing, closing and evicting series exist once.
/// </summary>
internal interface ISeriesHost<TKey> : ISeriesOutput<TKey>
{
    /// <summary>The series options for a key seen for the first time; may throw (reported as a rejected observation).</summary>
    SeriesOptions Resolve(TKey key);

    /// <summary>Takes one slot of the series limit; <see langword="false"/> when the limit is reached.</summary>
    bool TryReserveSeries();

    /// <summary>Gives back a slot taken by <see cref="TryReserveSeries"/> (a series was evicted).</summary>
    void ReleaseSeries();

    /// <summary>An observation was rejected inside the owner: count it and, when <paramref name="reason"/> is not null, report it.</summary>
    void Rejected(TKey key, string? reason);

    /// <summary>Evict a series after this many consecutive quiet periods; <see langword="null"/> never evicts.</summary>
    int? EvictAfterQuietPeriods { get; }

    /// <summary>The clock idle timeouts are measured on.</summary>
    TimeProvider TimeProvider { get; }

    /// <summary>The known events given before the run (null: none).</summary>
    EventCalendar<TKey>? Events => null;
}

/// <summary>
/// The series held by one single-writer owner, and the routing of observations and commands to them. Not thread-safe:
/// exactly one owner (a partition loop, a grain turn) calls it at a time.
/// </summary>
internal sealed class SeriesTable<TKey>
    where TKey : notnull
{
    private readonly Dictionary<TKey, SeriesState<TKey>> _series;
    private readonly ISeriesHost<TKey> _host;
    private readonly List<TKey> _evict = [];
    private readonly List<KnownEvent<TKey>> _declared = [];
    private int _idleSeries;
    private int _count;

    public SeriesTable(IEqualityComparer<TKey> comparer, ISeriesHost<TKey> host)
    {
        _series = new Dictionary<TKey, SeriesState<TKey>>(comparer);
        _host = host;
    }

    /// <summary>How many series are held; safe to read from other threads (a relaxed read).</summary>
    public int Count => Volatile.Read(ref _count);

    /// <summary>Whether some series has an idle timeout (so <see cref="IdleCheck"/> has work to do).</summary>
    public bool HasIdleSeries => _idleSeries > 0;

    /// <summary>The series held, in no particular order (for snapshots).</summary>
    public Dictionary<TKey, SeriesState<TKey>>.ValueCollection Series => _series.Values;

    /// <summary>Looks a series up.</summary>
    public bool TryGet(TKey key, [System.Diagnostics.CodeAnalysis.MaybeNullWhen(false)] out SeriesState<TKey> state) => _series.TryGetValue(key, out state);

    /// <summary>The known events declared at run time and not withdrawn, in declaration order.</summary>
    public IReadOnlyList<KnownEvent<TKey>> Declared => _declared;

    /// <summary>Takes over a series restored from a snapshot (its slot of the series limit is already counted by the caller).</summary>
    public void Adopt(SeriesState<TKey> state)
    {
        state.SetMarks(MarksFor(state.Key, state.Options));
        _series.Add(state.Key, state);
        _count = _series.Count;
        if (state.Options.IdleTimeout is not null)
        {
            _idleSeries++;
        }
    }

    /// <summary>Routes one validated observation (finite quantity) to its series, creating the series on first sight.</summary>
    public void Observe(in Observation<TKey> observation, long arrival)
    {
        ref SeriesState<TKey>? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(_series, observation.Key, out bool exists);
        if (!exists)
        {
            SeriesOptions options;
            try
            {
                options = _host.Resolve(observation.Key);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                _series.Remove(observation.Key);
                _host.Rejected(observation.Key, "The series options could not be resolved: " + ex.Message);
                return;
            }

            if (!_host.TryReserveSeries())
            {
                _series.Remove(observation.Key);
                _host.Rejected(observation.Key, null);
                return;
            }

            EventMarks? marks;
            try
            {
                marks = MarksFor(observation.Key, options);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                _series.Remove(observation.Key);
                _host.ReleaseSeries();
                _host.Rejected(observation.Key, "The series' known events could not be resolved (the group function threw): " + ex.Message);
                return;
            }

            slot = new SeriesState<TKey>(observation.Key, options, arrival);
            slot.SetMarks(marks);
            _count = _series.Count;
            if (options.IdleTimeout is not null)
            {
                _idleSeries++;
            }
        }

        SeriesState<TKey> state = slot!;
        if (!state.Options.Calendar.TryPeriodOf(observation.Timestamp, out long period))
        {
            _host.Rejected(observation.Key, "The event time is outside the range the series' calendar supports.");
            return;
        }

        if (state.Observe(observation.Timestamp, period, observation.Quantity, observation.EventId, arrival, _host) is { } refused)
        {
            _host.Rejected(observation.Key, refused);
        }
    }

    /// <summary>Closes, in every series, each period that ends at or before the watermark; then evicts quiet series.</summary>
    public void Advance(long watermarkTicks)
    {
        foreach (SeriesState<TKey> s in _series.Values)
        {
            s.CloseThrough(watermarkTicks, _host);
        }

        EvictQuiet();
    }

    /// <summary>Closes every open period of every series; then evicts quiet series.</summary>
    public void Flush()
    {
        foreach (SeriesState<TKey> s in _series.Values)
        {
            s.CloseAll(_host);
        }

        EvictQuiet();
    }

    /// <summary>Closes the periods of series idle past their timeout (only when some series has one); then evicts quiet series.</summary>
    public void IdleCheck(long nowTimestamp)
    {
        if (_idleSeries > 0)
        {
            foreach (SeriesState<TKey> s in _series.Values)
            {
                s.Idle(nowTimestamp, _host.TimeProvider, _host);
            }
        }

        EvictQuiet();
    }

    /// <summary>Acknowledges the drift of one series; nothing happens for an unknown key.</summary>
    public void Acknowledge(TKey key)
    {
        if (_series.TryGetValue(key, out SeriesState<TKey>? series))
        {
            series.Acknowledge(_host);
        }
    }

    /// <summary>Adds declared events restored from a snapshot, before any series is adopted.</summary>
    public void RestoreDeclared(IEnumerable<KnownEvent<TKey>> declared) => _declared.AddRange(declared);

    /// <summary>
    /// Declares (or withdraws) a known event at run time: every series it applies to is re-marked, and retained closed
    /// periods whose marking changed are restated. A withdrawal of an event not declared here changes nothing.
    /// </summary>
    public KnownEventReceipt Declare(KnownEvent<TKey> knownEvent, bool withdraw)
    {
        if (withdraw)
        {
            int at = _declared.FindIndex(e => e.SameAs(knownEvent, _series.Comparer));
            if (at < 0)
            {
                return default;
            }

            _declared.RemoveAt(at);
        }
        else
        {
            _declared.Add(knownEvent);
        }

        // Resolve every affected series' new marks first: a throwing group function then changes nothing.
        var changes = new List<(SeriesState<TKey> State, EventMarks? Marks, long First, long Last)>();
        try
        {
            Func<TKey, string?>? groupOf = _host.Events?.GroupOf;
            foreach (SeriesState<TKey> s in _series.Values)
            {
                string? group = knownEvent.Scope == EventScope.Group && groupOf is not null ? groupOf(s.Key) : null;
                if (knownEvent.AppliesTo(s.Key, group, _series.Comparer)
                    && EventCalendar<TKey>.TryPeriodsOf(knownEvent, s.Options.Calendar, out long first, out long last))
                {
                    changes.Add((s, MarksFor(s.Key, s.Options), first, last));
                }
            }
        }
        catch
        {
            if (withdraw)
            {
                _declared.Add(knownEvent);
            }
            else
            {
                _declared.RemoveAt(_declared.Count - 1);
            }

            throw;
        }

        long restated = 0, beyond = 0;
        foreach (var (state, marks, first, last) in changes)
        {
            state.ChangeMarks(marks, first, last, _host, ref restated, ref beyond);
        }

        return new KnownEventReceipt(changes.Count, restated, beyond);
    }

    /// <summary>The lift sums of every series held, per kind.</summary>
    public void AddLift(Dictionary<EventKind, EventLift> into)
    {
        foreach (SeriesState<TKey> s in _series.Values)
        {
            if (s.Step.Lift is { } lift)
            {
                for (int i = 0; i < lift.Count; i++)
                {
                    EventLift l = lift[i];
                    into[l.Kind] = into.TryGetValue(l.Kind, out EventLift sum)
                        ? sum with { Periods = sum.Periods + l.Periods, ActualTotal = sum.ActualTotal + l.ActualTotal, ForecastTotal = sum.ForecastTotal + l.ForecastTotal }
                        : l;
                }
            }
        }
    }

    private EventMarks? MarksFor(TKey key, SeriesOptions options) =>
        EventCalendar<TKey>.MarksFor(key, options.Calendar, _host.Events, _declared, _series.Comparer);

    private void EvictQuiet()
    {
        if (_host.EvictAfterQuietPeriods is not { } quiet)
        {
            return;
        }

        foreach (SeriesState<TKey> s in _series.Values)
        {
            if (s.QuietPeriods >= quiet)
            {
                _evict.Add(s.Key);
            }
        }

        foreach (TKey key in _evict)
        {
            if (_series.Remove(key, out SeriesState<TKey>? removed) && removed.Options.IdleTimeout is not null)
            {
                _idleSeries--;
            }

            _host.Counters.Evictions++;
            _host.ReleaseSeries();
        }

        _evict.Clear();
        _count = _series.Count;
    }
}
