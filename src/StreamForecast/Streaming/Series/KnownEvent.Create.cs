namespace StreamForecast.Streaming;

/// <summary>Creates validated <see cref="KnownEvent{TKey}"/> values.</summary>
/// <remarks>Stateless and thread-safe.</remarks>
public static class KnownEvent
{
    /// <summary>An event for one series.</summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="key">The series.</param>
    /// <param name="kind">The kind.</param>
    /// <param name="start">When it starts (inclusive).</param>
    /// <param name="end">When it ends (exclusive); after <paramref name="start"/>.</param>
    /// <param name="keepOutOfModel">See <see cref="KnownEvent{TKey}.KeepOutOfModel"/> (default true).</param>
    /// <returns>The event.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="key"/> or <paramref name="kind"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="end"/> is not after <paramref name="start"/>.</exception>
    public static KnownEvent<TKey> ForSeries<TKey>(TKey key, EventKind kind, DateTimeOffset start, DateTimeOffset end, bool keepOutOfModel = true)
    {
        ArgumentNullException.ThrowIfNull(key);
        return new KnownEvent<TKey>(EventScope.Series, key, null, kind, start, end, keepOutOfModel);
    }

    /// <summary>An event for every series of a group (see <see cref="EventCalendar{TKey}.GroupOf"/>).</summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="group">The group's name, not empty.</param>
    /// <param name="kind">The kind.</param>
    /// <param name="start">When it starts (inclusive).</param>
    /// <param name="end">When it ends (exclusive); after <paramref name="start"/>.</param>
    /// <param name="keepOutOfModel">See <see cref="KnownEvent{TKey}.KeepOutOfModel"/> (default true).</param>
    /// <returns>The event.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="group"/> or <paramref name="kind"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="group"/> is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="end"/> is not after <paramref name="start"/>.</exception>
    public static KnownEvent<TKey> ForGroup<TKey>(string group, EventKind kind, DateTimeOffset start, DateTimeOffset end, bool keepOutOfModel = true)
    {
        ArgumentException.ThrowIfNullOrEmpty(group);
        return new KnownEvent<TKey>(EventScope.Group, default, group, kind, start, end, keepOutOfModel);
    }

    /// <summary>An event for every series.</summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="kind">The kind.</param>
    /// <param name="start">When it starts (inclusive).</param>
    /// <param name="end">When it ends (exclusive); after <paramref name="start"/>.</param>
    /// <param name="keepOutOfModel">See <see cref="KnownEvent{TKey}.KeepOutOfModel"/> (default true).</param>
    /// <returns>The event.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="kind"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="end"/> is not after <paramref name="start"/>.</exception>
    public static KnownEvent<TKey> ForAllSeries<TKey>(EventKind kind, DateTimeOffset start, DateTimeOffset end, bool keepOutOfModel = true) =>
        new KnownEvent<TKey>(EventScope.AllSeries, default, null, kind, start, end, keepOutOfModel);
}
