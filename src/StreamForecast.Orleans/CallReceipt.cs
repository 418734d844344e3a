using Orleans.Concurrency;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>What a call to a bucket did.</summary>
/// <param name="Bucket">The bucket.</param>
/// <param name="Sequence">The number of the applied call (the one that applied it, for a repeat).</param>
/// <param name="Repeat"><see langword="true"/> when the id had already been applied and nothing was done this time.</param>
/// <param name="Observations">Observations taken into periods by this call (0 for a repeat).</param>
[GenerateSerializer]
[Immutable]
[Alias("StreamForecast.Orleans.CallReceipt")]
public readonly record struct CallReceipt(
    [property: Id(0)] int Bucket,
    [property: Id(1)] long Sequence,
    [property: Id(2)] bool Repeat,
    [property: Id(3)] long Observations);
