using Orleans.Concurrency;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>Receives a bucket's output: the forecast updates, drift alerts and faults of each applied call.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[Alias("StreamForecast.Orleans.ISeriesBucketObserver`1")]
public interface ISeriesBucketObserver<TKey> : IGrainObserver
    where TKey : notnull
{
    /// <summary>The output of one applied call, sent once it is stored (one-way: the bucket does not wait).</summary>
    /// <param name="output">The output.</param>
    /// <returns>A completed task.</returns>
    [OneWay]
    [Alias("OnOutput")]
    Task OnOutputAsync(BucketOutput<TKey> output);
}
