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
