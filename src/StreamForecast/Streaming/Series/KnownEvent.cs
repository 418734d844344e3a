using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>
/// A period of time known to be unusual for one series, a group of series or all of them: a promotion, a closure or
/// another named <see cref="EventKind"/>, from <see cref="Start"/> (inclusive) to <see cref="End"/> (exclusive).
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Effect.</b> Every period of a series' calendar that overlaps [<see cref="Start"/>, <see cref="End"/>) is
/// marked with the kind (<see cref="ForecastUpdate{TKey}.Event"/>): it is not scored (the error statistics and the
/// drift rules do not see it), the lift observed in it is added to its kind's <see cref="EventLift"/>, and when
/// <see cref="KeepOutOfModel"/> is set the method learns from the forecast it had made for the period instead of the
/// actual (see <see cref="KeepOutOfModel"/>).</para>
/// <para>Created by <see cref="KnownEvent.ForSeries"/>, <see cref="KnownEvent.ForGroup"/> or
/// <see cref="KnownEvent.ForAllSeries"/>, which validate every field. Immutable and thread-safe. Two events are equal when every field is equal (the key by
/// <see cref="EqualityComparer{T}.Default"/>; an engine withdraws events by its own key comparer).</para>
/// </remarks>
public sealed record KnownEvent<TKey>
{
    internal KnownEvent(EventScope scope, TKey? key, string? group, EventKind kind, DateTimeOffset start, DateTimeOffset end, bool keepOutOfModel)
    {
        ArgumentNullException.ThrowIfNull(kind);
        if (start >= end)
        {
            ThrowHelper.ThrowOutOfRange(nameof(end), end, $"a known event must end after it starts ({start:O})");
        }

        Scope = scope;
        Key = key;
        Group = group;
        Kind = kind;
        Start = start;
        End = end;
        KeepOutOfModel = keepOutOfModel;
    }

    /// <summary>Which series the event applies to.</summary>
    public EventScope Scope { get; }

    /// <summary>The series, when <see cref="Scope"/> is <see cref="EventScope.Series"/>; otherwise the default value.</summary>
    public TKey? Key { get; }

    /// <summary>The group name, when <see cref="Scope"/> is <see cref="EventScope.Group"/>; otherwise null.</summary>
    public string? Group { get; }

    /// <summary>What kind of event it is.</summary>
    public EventKind Kind { get; }

    /// <summary>When the event starts (inclusive).</summary>
    public DateTimeOffset Start { get; }

    /// <summary>When the event ends (exclusive); after <see cref="Start"/>.</summary>
    public DateTimeOffset End { get; }

    /// <summary>
    /// Whether the method learns from the forecast it had made for a marked period instead of the period's actual
    /// (default true). The forecast is fed rather than the update being skipped, so the method's period count and
    /// seasonal position move on as in any other period (skipping would shift a weekly pattern by one day per skipped
    /// day); its level, trend and seasonal estimates stay where they were, as if the period had gone as expected. While
    /// the method is still warming up there is no forecast to feed, so the actual is taken. False: the method learns
    /// from the actual (the period is still not scored), for an event whose effect should be followed, such as a
    /// permanent price change.
    /// </summary>
    public bool KeepOutOfModel { get; }

    /// <summary>Whether this event applies to <paramref name="key"/> (whose group is <paramref name="group"/>).</summary>
    internal bool AppliesTo(TKey key, string? group, IEqualityComparer<TKey> comparer) => Scope switch
    {
        EventScope.AllSeries => true,
        EventScope.Group => group is not null && string.Equals(group, Group, StringComparison.Ordinal),
        _ => comparer.Equals(Key!, key),
    };

    /// <summary>Whether both are the same event, keys compared with <paramref name="comparer"/>.</summary>
    internal bool SameAs(KnownEvent<TKey> other, IEqualityComparer<TKey> comparer) =>
        Scope == other.Scope && Kind.Equals(other.Kind) && Start == other.Start && Start.Offset == other.Start.Offset
        && End == other.End && End.Offset == other.End.Offset && KeepOutOfModel == other.KeepOutOfModel
        && string.Equals(Group, other.Group, StringComparison.Ordinal)
        && (Scope != EventScope.Series || comparer.Equals(Key!, other.Key!));
}
