using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>What a bucket stores: its series in the engine's snapshot format, and what it needs to ignore retries.</summary>
[GenerateSerializer]
[Alias("StreamForecast.Orleans.BucketState`1")]
internal sealed class BucketState<TKey>
    where TKey : notnull
{
    /// <summary>The bucket's series as an engine snapshot (codec name section, then one section of series); null before the first write.</summary>
    [Id(0)] public byte[]? Series { get; set; }

    /// <summary>
    /// The applied call ids as stored by earlier versions (a list of objects, rewritten whole on every write); read once
    /// when a bucket stored that way is activated, then left null. Now kept in <see cref="CallIds"/>.
    /// </summary>
    [Id(1)] public List<AppliedCall>? Applied { get; set; }

    /// <summary>The most recent applied call ids with the number each was applied as: a ring of 24-byte records (<see cref="CallIdWindow"/>); null before the first call.</summary>
    [Id(9)] public byte[]? CallIds { get; set; }

    /// <summary>How many records of <see cref="CallIds"/> hold ids.</summary>
    [Id(10)] public int CallIdCount { get; set; }

    /// <summary>The ring position of the next record of <see cref="CallIds"/> (the oldest once it is full).</summary>
    [Id(11)] public int CallIdNext { get; set; }

    /// <summary>Calls applied so far.</summary>
    [Id(2)] public long Sequence { get; set; }

    /// <summary>Calls ignored as repeats.</summary>
    [Id(3)] public long Repeats { get; set; }

    /// <summary>The counters of the bucket's series set (<see cref="SeriesSet{TKey}.GetCounters"/>); id 4 held an older layout.</summary>
    [Id(8)] public EngineCounters Counters { get; set; }

    /// <summary>Subscribers and when their lease ends.</summary>
    [Id(5)] public List<BucketSubscriber<TKey>> Subscribers { get; set; } = [];

    /// <summary>Outputs numbered so far (a call that produced nothing gets no number).</summary>
    [Id(6)] public long Outputs { get; set; }

    /// <summary>
    /// The newest output as stored by earlier versions (serialized field by field); read once when a bucket stored that
    /// way is activated, then left null. Now kept in <see cref="LastOutputData"/>.
    /// </summary>
    [Id(7)] public BucketOutput<TKey>? LastOutput { get; set; }

    /// <summary>
    /// The newest output in its compact form (<see cref="BucketOutputWriter{TKey}"/>), sent again by the next activation
    /// in case the silo died before sending it; null when it had no live subscriber to go to (nobody could miss it).
    /// </summary>
    [Id(12)] public byte[]? LastOutputData { get; set; }
}

/// <summary>One applied call id, in the list form of earlier versions (<see cref="BucketState{TKey}.Applied"/>).</summary>
[GenerateSerializer]
[Alias("StreamForecast.Orleans.AppliedCall")]
internal readonly record struct AppliedCall([property: Id(0)] Guid Id, [property: Id(1)] long Sequence);

/// <summary>One subscriber and the end of its lease.</summary>
[GenerateSerializer]
[Alias("StreamForecast.Orleans.BucketSubscriber`1")]
internal readonly record struct BucketSubscriber<TKey>([property: Id(0)] ISeriesBucketObserver<TKey> Observer, [property: Id(1)] DateTimeOffset LeaseEnds)
    where TKey : notnull;
