using System.Collections.Immutable;
using StreamForecast.Internal;
using StreamForecast.Periods;

namespace StreamForecast.Streaming;

/// <summary>
/// The known events declared before a run (promotions, closures, other named kinds) and how series form groups, given
/// to an engine in <see cref="ForecastEngineOptions{TKey}.Events"/>. Events learnt during the run are declared with
/// <see cref="ForecastEngine{TKey}.DeclareEventAsync"/>.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Groups.</b> <see cref="GroupOf"/> names the group of a key (for example a shop, a region); a
/// <see cref="EventScope.Group"/> event applies to every series of its group. For string keys,
/// <see cref="EventGroups.ByKeyPrefix"/> takes the part of the key before a separator. The function is called once
/// per series when the series is created and once per series when a group or all-series event is declared or withdrawn
/// at run time, on the partition's loop: it must be thread-safe, fast and deterministic.</para>
/// <para><b>Cost.</b> A series' marks are resolved when it is created, in O(e²) for the e events that apply to it (a
/// few hundred events per series are cheap); afterwards a period is looked up in O(log e) without allocation.</para>
/// <para><b>Thread safety.</b> Immutable and thread-safe.</para>
/// </remarks>
public sealed class EventCalendar<TKey>
{
    /// <summary>Creates a calendar.</summary>
    /// <param name="events">The events, in any order; none may be null.</param>
    /// <param name="groupOf">The group of a key, or null when the key belongs to no group (default: no groups, so group events apply to nothing).</param>
    /// <exception cref="ArgumentNullException"><paramref name="events"/> or one of them is null.</exception>
    public EventCalendar(IEnumerable<KnownEvent<TKey>> events, Func<TKey, string?>? groupOf = null)
    {
        ArgumentNullException.ThrowIfNull(events);
        ImmutableArray<KnownEvent<TKey>> list = [.. events];
        foreach (KnownEvent<TKey> e in list)
        {
            if (e is null)
            {
                ThrowHelper.ThrowArgument(nameof(events), "The known events must not contain null.");
            }
        }

        Events = list;
        GroupOf = groupOf;
    }

    /// <summary>The events declared before the run.</summary>
    public ImmutableArray<KnownEvent<TKey>> Events { get; }

    /// <summary>The group of a key (null: no group); null when series form no groups.</summary>
    public Func<TKey, string?>? GroupOf { get; }

    /// <summary>
    /// The marks of one series: the periods of <paramref name="calendar"/> covered by this calendar's events and by
    /// <paramref name="declared"/> that apply to <paramref name="key"/>; null when none does.
    /// </summary>
    internal static EventMarks? MarksFor(TKey key, PeriodCalendar calendar, EventCalendar<TKey>? given, IReadOnlyList<KnownEvent<TKey>> declared, IEqualityComparer<TKey> comparer)
    {
        if ((given is null || given.Events.IsEmpty) && declared.Count == 0)
        {
            return null;
        }

        string? group = given?.GroupOf is { } groupOf ? groupOf(key) : null;
        List<EventMarks.Span>? spans = null;
        if (given is not null)
        {
            foreach (KnownEvent<TKey> e in given.Events)
            {
                Add(e, key, group, calendar, comparer, ref spans);
            }
        }

        foreach (KnownEvent<TKey> e in declared)
        {
            Add(e, key, group, calendar, comparer, ref spans);
        }

        return spans is null ? null : EventMarks.Build(spans);
    }

    /// <summary>The periods of <paramref name="calendar"/> an event covers (those overlapping [start, end)); false when none lies inside the calendar.</summary>
    internal static bool TryPeriodsOf(KnownEvent<TKey> e, PeriodCalendar calendar, out long first, out long last)
    {
        first = last = 0;
        if (e.End <= calendar.SupportedStart || e.Start >= calendar.SupportedEnd)
        {
            return false;
        }

        first = e.Start <= calendar.SupportedStart ? calendar.MinPeriod : calendar.PeriodOf(e.Start);
        last = e.End >= calendar.SupportedEnd ? calendar.MaxPeriod : calendar.PeriodOf(e.End.AddTicks(-1));
        return last >= first;
    }

    private static void Add(KnownEvent<TKey> e, TKey key, string? group, PeriodCalendar calendar, IEqualityComparer<TKey> comparer, ref List<EventMarks.Span>? spans)
    {
        if (!e.AppliesTo(key, group, comparer) || !TryPeriodsOf(e, calendar, out long first, out long last))
        {
            return;
        }

        (spans ??= []).Add(new EventMarks.Span(first, last, e.Kind, e.KeepOutOfModel));
    }
}
