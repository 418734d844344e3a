using Orleans.Concurrency;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>A bucket's state at one moment.</summary>
/// <param name="Bucket">The bucket.</param>
/// <param name="Silo">Where the bucket runs now (a silo address).</param>
/// <param name="Series">Series held.</param>
/// <param name="Sequence">Calls applied since the bucket was first stored.</param>
/// <param name="Repeats">Calls ignored as repeats of an applied id.</param>
/// <param name="Counters">The engine counters of this bucket's series (queue and subscriber fields are 0).</param>
/// <param name="Subscribers">Subscriptions whose lease has not run out.</param>
[GenerateSerializer]
[Immutable]
[Alias("StreamForecast.Orleans.BucketStatus")]
public readonly record struct BucketStatus(
    [property: Id(0)] int Bucket,
    [property: Id(1)] string Silo,
    [property: Id(2)] int Series,
    [property: Id(3)] long Sequence,
    [property: Id(4)] long Repeats,
    [property: Id(5)] EngineCounters Counters,
    [property: Id(6)] int Subscribers);
