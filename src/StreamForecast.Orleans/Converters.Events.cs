using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

// Wire forms of the known-event types (see Converters.cs for the rules: field ids are the contract, append only).
// Kinds travel by name and events are rebuilt through the core's validating factories.

/// <summary>Wire form of <see cref="KnownEvent{TKey}"/>.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[GenerateSerializer]
internal struct KnownEventSurrogate<TKey>
{
    /// <summary>The scope (<see cref="EventScope"/> as a number).</summary>
    [Id(0)] public int Scope;

    /// <summary>The series key, for a series event.</summary>
    [Id(1)] public TKey? Key;

    /// <summary>The group name, for a group event.</summary>
    [Id(2)] public string? Group;

    /// <summary>The kind's name.</summary>
    [Id(3)] public string Kind;

    /// <summary>The start (inclusive).</summary>
    [Id(4)] public DateTimeOffset Start;

    /// <summary>The end (exclusive).</summary>
    [Id(5)] public DateTimeOffset End;

    /// <summary>Whether the method learns from its forecast in the event's periods.</summary>
    [Id(6)] public bool KeepOutOfModel;
}

/// <summary>Converts <see cref="KnownEvent{TKey}"/> to and from its wire form, validating on the way in.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[RegisterConverter]
internal sealed class KnownEventConverter<TKey> : IConverter<KnownEvent<TKey>, KnownEventSurrogate<TKey>>
{
    /// <inheritdoc/>
    public KnownEvent<TKey> ConvertFromSurrogate(in KnownEventSurrogate<TKey> s)
    {
        EventKind kind = EventKind.Named(s.Kind);
        return (EventScope)s.Scope switch
        {
            EventScope.Series => KnownEvent.ForSeries(s.Key!, kind, s.Start, s.End, s.KeepOutOfModel),
            EventScope.Group => KnownEvent.ForGroup<TKey>(s.Group!, kind, s.Start, s.End, s.KeepOutOfModel),
            EventScope.AllSeries => KnownEvent.ForAllSeries<TKey>(kind, s.Start, s.End, s.KeepOutOfModel),
            _ => throw new InvalidDataException($"A known event arrived with scope {s.Scope}, which this version does not know."),
        };
    }

    /// <inheritdoc/>
    public KnownEventSurrogate<TKey> ConvertToSurrogate(in KnownEvent<TKey> v) => new()
    {
        Scope = (int)v.Scope, Key = v.Key, Group = v.Group, Kind = v.Kind.Name, Start = v.Start, End = v.End, KeepOutOfModel = v.KeepOutOfModel,
    };
}

/// <summary>Wire form of <see cref="EventLift"/>.</summary>
[GenerateSerializer]
internal struct EventLiftSurrogate
{
    /// <summary>The kind's name.</summary>
    [Id(0)] public string Kind;

    /// <summary>Marked periods that had a forecast.</summary>
    [Id(1)] public long Periods;

    /// <summary>Their actuals' sum.</summary>
    [Id(2)] public double ActualTotal;

    /// <summary>Their forecasts' sum.</summary>
    [Id(3)] public double ForecastTotal;
}

/// <summary>Converts <see cref="EventLift"/> to and from its wire form.</summary>
[RegisterConverter]
internal sealed class EventLiftConverter : IConverter<EventLift, EventLiftSurrogate>
{
    /// <inheritdoc/>
    public EventLift ConvertFromSurrogate(in EventLiftSurrogate s) => new(EventKind.Named(s.Kind), s.Periods, s.ActualTotal, s.ForecastTotal);

    /// <inheritdoc/>
    public EventLiftSurrogate ConvertToSurrogate(in EventLift v) => new() { Kind = v.Kind.Name, Periods = v.Periods, ActualTotal = v.ActualTotal, ForecastTotal = v.ForecastTotal };
}

/// <summary>Wire form of <see cref="KnownEventReceipt"/>.</summary>
[GenerateSerializer]
internal struct KnownEventReceiptSurrogate
{
    /// <summary>Series affected.</summary>
    [Id(0)] public int SeriesAffected;

    /// <summary>Periods restated.</summary>
    [Id(1)] public long PeriodsRestated;

    /// <summary>Periods before the restatement horizon.</summary>
    [Id(2)] public long PeriodsBeyondHorizon;
}

/// <summary>Converts <see cref="KnownEventReceipt"/> to and from its wire form.</summary>
[RegisterConverter]
internal sealed class KnownEventReceiptConverter : IConverter<KnownEventReceipt, KnownEventReceiptSurrogate>
{
    /// <inheritdoc/>
    public KnownEventReceipt ConvertFromSurrogate(in KnownEventReceiptSurrogate s) => new(s.SeriesAffected, s.PeriodsRestated, s.PeriodsBeyondHorizon);

    /// <inheritdoc/>
    public KnownEventReceiptSurrogate ConvertToSurrogate(in KnownEventReceipt v) => new() { SeriesAffected = v.SeriesAffected, PeriodsRestated = v.PeriodsRestated, PeriodsBeyondHorizon = v.PeriodsBeyondHorizon };
}
