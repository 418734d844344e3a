namespace StreamForecast.Streaming;

/// <summary>
/// What makes an observation acceptable at the door of any host (the engine, a cluster client, a bucket grain), stated
/// once so the hosts cannot drift apart: a key, a finite quantity inside NumericDomain, and an event time not too far ahead of the clock.
/// </summary>
internal static class ObservationRules
{
    /// <summary>The latest event time accepted now, or <see langword="null"/> when any time is.</summary>
    public static DateTimeOffset? LatestEventTime(TimeSpan maxEventTimeAhead, TimeProvider time) =>
        maxEventTimeAhead == Timeout.InfiniteTimeSpan ? null : time.GetUtcNow() + maxEventTimeAhead;

    /// <summary>Why <paramref name="observation"/> is refused, or <see langword="null"/> when it is acceptable. O(1); no allocation.</summary>
    public static string? Problem<TKey>(in Observation<TKey> observation, DateTimeOffset? latestEventTime)
    {
        if (observation.Key is null)
        {
            return "it has no key";
        }

        if (!NumericDomain.Contains(observation.Quantity))
        {
            return double.IsFinite(observation.Quantity)
                ? "the quantity's magnitude must be at most 1e15 (NumericDomain.MaxMagnitude)"
                : "the quantity must be a finite number";
        }

        if (latestEventTime is { } latest && observation.Timestamp > latest)
        {
            return "the event time is further ahead of the clock than the engine allows (MaxEventTimeAhead)";
        }

        return null;
    }
}
