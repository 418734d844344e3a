using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>Connects clients to a forecast cluster.</summary>
public static class ForecastCluster
{
    /// <summary>
    /// Connects to a cluster whose silos run the buckets (see <see cref="ForecastClusterSiloExtensions.AddForecastBuckets"/>) and
    /// subscribes to every bucket's output.
    /// </summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="grains">The cluster client's grain factory (an <c>IClusterClient</c>, or a grain's own factory).</param>
    /// <param name="options">The cluster options; the same as the silos'.</param>
    /// <param name="keyCodec">How keys are encoded; the same as the silos'. Keys are mapped to buckets from these bytes.</param>
    /// <param name="engineOptions">
    /// The silos' engine options, when the client has them: the client then also refuses, before sending anything, an
    /// observation further ahead of the clock than <see cref="ForecastEngineOptions{TKey}.MaxEventTimeAhead"/>, as the
    /// engine does, so a refused batch is never partly applied. Without them the client checks keys and quantities, and a
    /// bucket that refuses its part of a batch for its time fails the post after other buckets may have applied theirs.
    /// </param>
    /// <param name="timeProvider">The clock for retry delays, lease renewal and the event-time check; the engine options' clock, else <see cref="TimeProvider.System"/>.</param>
    /// <param name="publishing">Buffering of this client's observables (as for the engine).</param>
    /// <param name="cancellationToken">Stops connecting.</param>
    /// <returns>The connected client.</returns>
    /// <remarks>Subscribing calls every bucket once, activating it: O(<see cref="ForecastClusterOptions.BucketCount"/>) calls.</remarks>
    public static async Task<ForecastClusterClient<TKey>> ConnectAsync<TKey>(
        IGrainFactory grains,
        ForecastClusterOptions options,
        ISnapshotKeyCodec<TKey> keyCodec,
        ForecastEngineOptions<TKey>? engineOptions = null,
        TimeProvider? timeProvider = null,
        PublishingOptions? publishing = null,
        CancellationToken cancellationToken = default)
        where TKey : notnull
    {
        ArgumentNullException.ThrowIfNull(grains);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(keyCodec);
        TimeProvider time = timeProvider ?? engineOptions?.TimeProvider ?? TimeProvider.System;
        TimeSpan ahead = engineOptions?.MaxEventTimeAhead ?? Timeout.InfiniteTimeSpan;
        var client = new ForecastClusterClient<TKey>(grains, options, keyCodec, time, ahead, publishing);
        await client.StartAsync(cancellationToken).ConfigureAwait(false);
        return client;
    }

}
