using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>
/// Buffer sizes for publishing results to subscribers: how many items each push subscriber may fall behind
/// before the oldest are dropped, and how many items a pull reader may fall behind before publishing waits.
/// </summary>
/// <remarks>Immutable and thread-safe. Validated at construction; copied by the publisher when it is created.</remarks>
public sealed record PublishingOptions
{
    /// <summary>The default buffer size for push subscribers and pull readers: 10,000 items.</summary>
    public const int DefaultCapacity = 10_000;

    /// <summary>The largest buffer size accepted: 10,000,000 items.</summary>
    public const int MaxCapacity = 10_000_000;

    /// <summary>Creates publishing options.</summary>
    /// <param name="subscriberCapacity">
    /// How many undelivered items each push subscriber (an <see cref="IObserver{T}"/>) may hold, 1 to 10,000,000;
    /// default 10,000. When a slow subscriber's buffer is full, each new item drops that subscriber's oldest
    /// buffered item, counts it in <see cref="DeliverySubscription.DroppedCount"/> and reports it to the
    /// drop callback. Publishing never waits for a push subscriber, with one exception: an engine's flush or watermark
    /// (<see cref="ForecastEngine{TKey}.FlushAsync"/>, <see cref="ForecastEngine{TKey}.AdvanceAsync"/>), which can close a
    /// period in every series at once, publishes what it closes a slice at a time (a quarter of this capacity, at most
    /// 4,096 periods) and before each next slice waits until every push subscriber has room for two slices, so that a
    /// subscriber that keeps up with the steady stream loses nothing to the burst. Meanwhile that partition takes no
    /// other queue item (posts wait or are dropped as for any full queue). A subscriber that makes no such room within
    /// one second (on the engine's <see cref="ForecastEngineOptions{TKey}.TimeProvider"/>) is not waited for again during that flush or watermark.
    /// </param>
    /// <param name="readerCapacity">
    /// How many unread items each pull reader may hold, 1 to 10,000,000; default 10,000. When any pull reader is
    /// full, publishing waits (backpressure) instead of dropping.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A capacity is out of range.</exception>
    public PublishingOptions(int subscriberCapacity = DefaultCapacity, int readerCapacity = DefaultCapacity)
    {
        if (subscriberCapacity is < 1 or > MaxCapacity)
        {
            ThrowHelper.ThrowOutOfRange(nameof(subscriberCapacity), subscriberCapacity, "a subscriber's buffer must hold between 1 and 10,000,000 items");
        }

        if (readerCapacity is < 1 or > MaxCapacity)
        {
            ThrowHelper.ThrowOutOfRange(nameof(readerCapacity), readerCapacity, "a pull reader's buffer must hold between 1 and 10,000,000 items");
        }

        SubscriberCapacity = subscriberCapacity;
        ReaderCapacity = readerCapacity;
    }

    /// <summary>The options with every default (10,000 items for subscribers and readers).</summary>
    public static PublishingOptions Default { get; } = new();

    /// <summary>How many undelivered items each push subscriber may hold before its oldest are dropped.</summary>
    public int SubscriberCapacity { get; }

    /// <summary>How many unread items each pull reader may hold before publishing waits.</summary>
    public int ReaderCapacity { get; }
}
