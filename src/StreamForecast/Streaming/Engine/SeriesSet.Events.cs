namespace StreamForecast.Streaming;

// Known events: the marks each series' step reads, declarations at run time and the lift they measure.
public sealed partial class SeriesSet<TKey>
{
    private readonly List<KnownEvent<TKey>> _declared = [];

    /// <summary>The known events declared at run time and not withdrawn, in declaration order.</summary>
    internal IReadOnlyList<KnownEvent<TKey>> Declared => _declared;

    /// <summary>Adds declared events restored from a snapshot, before any series is adopted.</summary>
    internal void RestoreDeclared(IEnumerable<KnownEvent<TKey>> declared) => _declared.AddRange(declared);

    /// <summary>
    /// Declares a known event at run time, as <see cref="ForecastEngine{TKey}.DeclareEventAsync"/> does on one partition:
    /// the series held that it applies to mark the periods it covers from now on (series created later pick it up when
    /// they are created), and their closed periods it covers inside the restatement horizon are restated to
    /// <paramref name="sink"/>.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="sink">Receives the restated forecast updates and any alert transitions.</param>
    /// <returns>What the declaration did in this set.</returns>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <exception cref="ArgumentException">A group event, but the options give no group function (<see cref="EventCalendar{TKey}.GroupOf"/>); nothing changed.</exception>
    /// <remarks>
    /// The event becomes part of the set's state: <see cref="Snapshot"/> writes it and <see cref="Restore"/> reads it
    /// back. Declaring the same event twice holds it twice. Cost: O(series held) plus, per affected series, resolving its
    /// events and replaying its restatement window. Single writer.
    /// </remarks>
    public KnownEventReceipt DeclareEvent(KnownEvent<TKey> knownEvent, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(knownEvent);
        ArgumentNullException.ThrowIfNull(sink);
        ThrowIfNoGroupFunction(knownEvent, _options);
        return Declare(knownEvent, withdraw: false, sink);
    }

    /// <summary>
    /// Withdraws an event declared with <see cref="DeclareEvent"/> (equal in every field, keys by the options' key
    /// comparer), with the same restatement rules; nothing happens for an event not declared here. Events given in
    /// <see cref="ForecastEngineOptions{TKey}.Events"/> cannot be withdrawn.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="sink">Receives the restated forecast updates and any alert transitions.</param>
    /// <returns>What the withdrawal did in this set (all zero when the event was not declared).</returns>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <remarks>Cost as <see cref="DeclareEvent"/>. Single writer.</remarks>
    public KnownEventReceipt WithdrawEvent(KnownEvent<TKey> knownEvent, ISeriesSink<TKey> sink)
    {
        ArgumentNullException.ThrowIfNull(knownEvent);
        ArgumentNullException.ThrowIfNull(sink);
        return Declare(knownEvent, withdraw: true, sink);
    }

    /// <summary>The lift observed per event kind, summed over the series held (see <see cref="EventLift"/>).</summary>
    /// <returns>One entry per kind met, ordered by kind name (ordinal).</returns>
    /// <remarks>O(series held); allocates the result. Single writer.</remarks>
    public EventLift[] GetEventLift()
    {
        var sums = new Dictionary<EventKind, EventLift>();
        AddLift(sums);
        EventLift[] all = [.. sums.Values];
        Array.Sort(all, static (a, b) => string.CompareOrdinal(a.Kind.Name, b.Kind.Name));
        return all;
    }

    /// <summary>Refuses a group event when there is no group function to tell which series are in the group.</summary>
    internal static void ThrowIfNoGroupFunction(KnownEvent<TKey> knownEvent, ForecastEngineOptions<TKey> options)
    {
        if (knownEvent.Scope == EventScope.Group && options.Events?.GroupOf is null)
        {
            throw new ArgumentException("A group event needs a group function: give ForecastEngineOptions an EventCalendar with GroupOf set.", nameof(knownEvent));
        }
    }

    /// <summary>
    /// Declares (or withdraws) a known event at run time: every series it applies to is re-marked, and retained closed
    /// periods whose marking changed are restated to <paramref name="sink"/>. A withdrawal of an event not declared here
    /// changes nothing.
    /// </summary>
    internal KnownEventReceipt Declare(KnownEvent<TKey> knownEvent, bool withdraw, ISeriesSink<TKey> sink)
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
            Func<TKey, string?>? groupOf = _options.Events?.GroupOf;
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
        ISeriesOutput<TKey> output = Use(sink);
        foreach (var (state, marks, first, last) in changes)
        {
            state.ChangeMarks(marks, first, last, output, ref restated, ref beyond);
        }

        return new KnownEventReceipt(changes.Count, restated, beyond);
    }

    /// <summary>Adds the lift sums of every series held, per kind, into <paramref name="into"/>.</summary>
    internal void AddLift(Dictionary<EventKind, EventLift> into)
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

    /// <summary>The marks of a new series; false (the key removed and the observation rejected) when the group function throws.</summary>
    private bool TryMarksFor(TKey key, SeriesOptions options, ISeriesSink<TKey> sink, out EventMarks? marks)
    {
        try
        {
            marks = MarksFor(key, options);
            return true;
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            marks = null;
            _series.Remove(key);
            _budget?.ReleaseSeries();
            Rejected(key, "The series' known events could not be resolved (the group function threw): " + ex.Message, sink);
            return false;
        }
    }

    private EventMarks? MarksFor(TKey key, SeriesOptions options) =>
        EventCalendar<TKey>.MarksFor(key, options.Calendar, _options.Events, _declared, _series.Comparer);
}
