namespace StreamForecast.Streaming;

/// <summary>
/// What makes an observation acceptable at the door of any host (the engine, a <see cref="SeriesSet{TKey}"/>, a cluster
/// client, a bucket grain, a host that logs its input first), stated once so the hosts cannot drift apart: a key, a
/// finite quantity inside <see cref="NumericDomain"/>, and an event time not too far ahead of the clock.
/// </summary>
/// <remarks>
/// <para>Check a batch by reading <see cref="LatestEventTime"/> once and passing it to <see cref="FindProblem{TKey}"/>
/// for each observation, so the whole batch is judged against one clock reading.</para>
/// <para><b>Thread safety.</b> Stateless; every member is thread-safe.</para>
/// </remarks>
public static class ObservationRules
{
    /// <summary>The latest event time accepted now.</summary>
    /// <param name="maxEventTimeAhead">How far ahead of the clock an event time may be (<see cref="ForecastEngineOptions{TKey}.MaxEventTimeAhead"/>); <see cref="Timeout.InfiniteTimeSpan"/> accepts any.</param>
    /// <param name="time">The clock.</param>
    /// <returns>The latest accepted event time, or <see langword="null"/> when any time is accepted.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="time"/> is null.</exception>
    /// <remarks>O(1): one clock read.</remarks>
    public static DateTimeOffset? LatestEventTime(TimeSpan maxEventTimeAhead, TimeProvider time)
    {
        ArgumentNullException.ThrowIfNull(time);
        return maxEventTimeAhead == Timeout.InfiniteTimeSpan ? null : time.GetUtcNow() + maxEventTimeAhead;
    }

    /// <summary>Why an observation would be refused, or <see langword="null"/> when it is acceptable.</summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="observation">The observation.</param>
    /// <param name="latestEventTime">From <see cref="LatestEventTime"/>; <see langword="null"/> accepts any event time.</param>
    /// <returns>A short reason in lower case (to be placed inside a sentence), or <see langword="null"/>.</returns>
    /// <remarks>O(1); no allocation.</remarks>
    public static string? FindProblem<TKey>(in Observation<TKey> observation, DateTimeOffset? latestEventTime)
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
