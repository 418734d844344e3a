using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>Settings of a <see cref="ForecastEngine{TKey}"/>: series defaults and overrides, partitions, queues, time, limits.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>Immutable and thread-safe; validated at construction. Every setting states its default.</remarks>
public sealed record ForecastEngineOptions<TKey>
    where TKey : notnull
{
    /// <summary>The default capacity of each partition's queue: 16,384 observations.</summary>
    public const int DefaultQueueCapacity = 16_384;

    /// <summary>The default limit on series held at once: 10,000,000.</summary>
    public const int DefaultMaxSeries = 10_000_000;

    /// <summary>Creates engine options.</summary>
    /// <param name="defaultSeries">How a series is treated unless <paramref name="seriesOverrides"/> says otherwise.</param>
    /// <param name="seriesOverrides">
    /// Called once per key when the series is first seen (on its partition's loop); returns that key's options or
    /// null for the default. Must be thread-safe and fast; it is not called again for the key (default: none).
    /// </param>
    /// <param name="keyComparer">Key equality; composite keys need a comparer that compares every part (default: <see cref="EqualityComparer{T}.Default"/>).</param>
    /// <param name="partitions">How many owner loops share the keys (default: the processor count; 1 to 1,024).</param>
    /// <param name="queueCapacity">Observations each partition's queue holds (default 16,384; 1 to 10,000,000).</param>
    /// <param name="fullMode">What happens when a queue is full (default <see cref="IngestionFullMode.Wait"/>).</param>
    /// <param name="onDropped">Called with each observation dropped under <see cref="IngestionFullMode.DropNewest"/> (default: none; drops are counted either way).</param>
    /// <param name="timeProvider">The only source of time: idle timeouts, the future check and how long a flush waits for a stalled subscriber (default <see cref="TimeProvider.System"/>).</param>
    /// <param name="maxEventTimeAhead">
    /// Events stamped further than this ahead of the time provider's clock are rejected at post (a broken clock would
    /// otherwise close every period up to the far future; default 1 day; <see cref="Timeout.InfiniteTimeSpan"/> turns the check off).
    /// </param>
    /// <param name="maxSeries">
    /// The most series held at once; an observation of a new key beyond it is rejected and counted (default 10,000,000).
    /// The limit is shared by all partitions, so with more than one partition which new keys get the last slots depends
    /// on how the partitions interleave.
    /// </param>
    /// <param name="evictAfterQuietPeriods">
    /// A series whose last this-many closed periods had no observation is removed (its state is lost) and counted; checked on
    /// advance, flush and idle checks (default: never).
    /// </param>
    /// <param name="idleCheckInterval">How often series with an idle timeout are checked (default 1 second; 10 ms to 1 hour).</param>
    /// <param name="publishing">Subscriber and reader buffer sizes (default <see cref="PublishingOptions.Default"/>).</param>
    /// <param name="events">
    /// Known events declared before the run (promotions, closures...) and how series form groups (default: none). Events
    /// learnt during the run are declared with <see cref="ForecastEngine{TKey}.DeclareEventAsync"/>.
    /// </param>
    /// <exception cref="ArgumentNullException"><paramref name="defaultSeries"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A number is outside its stated range.</exception>
    public ForecastEngineOptions(
        SeriesOptions defaultSeries,
        Func<TKey, SeriesOptions?>? seriesOverrides = null,
        IEqualityComparer<TKey>? keyComparer = null,
        int? partitions = null,
        int queueCapacity = DefaultQueueCapacity,
        IngestionFullMode fullMode = IngestionFullMode.Wait,
        Action<Observation<TKey>>? onDropped = null,
        TimeProvider? timeProvider = null,
        TimeSpan? maxEventTimeAhead = null,
        int maxSeries = DefaultMaxSeries,
        int? evictAfterQuietPeriods = null,
        TimeSpan? idleCheckInterval = null,
        PublishingOptions? publishing = null,
        EventCalendar<TKey>? events = null)
    {
        ArgumentNullException.ThrowIfNull(defaultSeries);
        int p = partitions ?? Environment.ProcessorCount;
        if (p is < 1 or > 1024)
        {
            ThrowHelper.ThrowOutOfRange(nameof(partitions), p, "the partition count must be between 1 and 1,024");
        }

        if (queueCapacity is < 1 or > 10_000_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(queueCapacity), queueCapacity, "the queue capacity must be between 1 and 10,000,000");
        }

        if (fullMode is not (IngestionFullMode.Wait or IngestionFullMode.DropNewest))
        {
            ThrowHelper.ThrowOutOfRange(nameof(fullMode), fullMode, "the full mode must be Wait or DropNewest");
        }

        TimeSpan ahead = maxEventTimeAhead ?? TimeSpan.FromDays(1);
        if (ahead < TimeSpan.Zero && ahead != Timeout.InfiniteTimeSpan)
        {
            ThrowHelper.ThrowOutOfRange(nameof(maxEventTimeAhead), ahead, "the allowance for future event times must be zero or more");
        }

        if (maxSeries < 1)
        {
            ThrowHelper.ThrowOutOfRange(nameof(maxSeries), maxSeries, "the series limit must be 1 or more");
        }

        if (evictAfterQuietPeriods is < 1)
        {
            ThrowHelper.ThrowOutOfRange(nameof(evictAfterQuietPeriods), evictAfterQuietPeriods, "eviction needs 1 or more quiet periods, or null for never");
        }

        TimeSpan check = idleCheckInterval ?? TimeSpan.FromSeconds(1);
        if (check < TimeSpan.FromMilliseconds(10) || check > TimeSpan.FromHours(1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(idleCheckInterval), check, "the idle check interval must be between 10 ms and 1 hour");
        }

        DefaultSeries = defaultSeries;
        SeriesOverrides = seriesOverrides;
        KeyComparer = keyComparer ?? EqualityComparer<TKey>.Default;
        Partitions = p;
        QueueCapacity = queueCapacity;
        FullMode = fullMode;
        OnDropped = onDropped;
        TimeProvider = timeProvider ?? TimeProvider.System;
        MaxEventTimeAhead = ahead;
        MaxSeries = maxSeries;
        EvictAfterQuietPeriods = evictAfterQuietPeriods;
        IdleCheckInterval = check;
        Publishing = publishing ?? PublishingOptions.Default;
        Events = events;
    }

    /// <summary>How a series is treated unless an override says otherwise.</summary>
    public SeriesOptions DefaultSeries { get; }

    /// <summary>Per-key options, resolved once when a key is first seen; null means none.</summary>
    public Func<TKey, SeriesOptions?>? SeriesOverrides { get; }

    /// <summary>Key equality.</summary>
    public IEqualityComparer<TKey> KeyComparer { get; }

    /// <summary>How many owner loops share the keys.</summary>
    public int Partitions { get; }

    /// <summary>Observations each partition's queue holds.</summary>
    public int QueueCapacity { get; }

    /// <summary>What happens when a queue is full.</summary>
    public IngestionFullMode FullMode { get; }

    /// <summary>Called with each dropped observation; may be null.</summary>
    public Action<Observation<TKey>>? OnDropped { get; }

    /// <summary>The source of time.</summary>
    public TimeProvider TimeProvider { get; }

    /// <summary>How far ahead of the clock an event time may be; <see cref="Timeout.InfiniteTimeSpan"/> when unchecked.</summary>
    public TimeSpan MaxEventTimeAhead { get; }

    /// <summary>The most series held at once.</summary>
    public int MaxSeries { get; }

    /// <summary>Quiet closed periods after which a series is evicted; null for never.</summary>
    public int? EvictAfterQuietPeriods { get; }

    /// <summary>How often idle timeouts are checked.</summary>
    public TimeSpan IdleCheckInterval { get; }

    /// <summary>Subscriber and reader buffer sizes.</summary>
    public PublishingOptions Publishing { get; }

    /// <summary>The known events declared before the run, and the group function; null when none.</summary>
    public EventCalendar<TKey>? Events { get; }

    internal SeriesOptions Resolve(TKey key) => SeriesOverrides?.Invoke(key) ?? DefaultSeries;
}
