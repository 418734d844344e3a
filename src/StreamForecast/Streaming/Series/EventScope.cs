namespace StreamForecast.Streaming;

/// <summary>Which series a <see cref="KnownEvent{TKey}"/> applies to.</summary>
public enum EventScope
{
    /// <summary>One series, named by its key.</summary>
    Series,

    /// <summary>Every series whose group (<see cref="EventCalendar{TKey}.GroupOf"/>) has the event's group name.</summary>
    Group,

    /// <summary>Every series.</summary>
    AllSeries,
}
