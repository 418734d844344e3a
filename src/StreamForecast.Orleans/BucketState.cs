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

    /// <summary>The most recent applied call ids with the sequence number each got, oldest first.</summary>
    [Id(1)] public List<AppliedCall> Applied { get; set; } = [];

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

    /// <summary>The newest output, sent again by the next activation in case the silo died before sending it.</summary>
    [Id(7)] public BucketOutput<TKey>? LastOutput { get; set; }
}

/// <summary>One applied call id.</summary>
[GenerateSerializer]
[Alias("StreamForecast.Orleans.AppliedCall")]
internal readonly record struct AppliedCall([property: Id(0)] Guid Id, [property: Id(1)] long Sequence);

/// <summary>One subscriber and the end of its lease.</summary>
[GenerateSerializer]
[Alias("StreamForecast.Orleans.BucketSubscriber`1")]
internal readonly record struct BucketSubscriber<TKey>([property: Id(0)] ISeriesBucketObserver<TKey> Observer, [property: Id(1)] DateTimeOffset LeaseEnds)
    where TKey : notnull;
