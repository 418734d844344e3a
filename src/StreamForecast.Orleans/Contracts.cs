using Orleans.Concurrency;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// One bucket of the key space: a grain that holds every series whose key hashes to it, runs the engine's own
/// per-series state on them, and stores them durably before it acknowledges a call. Callers normally use
/// <see cref="ForecastClusterClient{TKey}"/> instead of this interface.
/// </summary>
/// <typeparam name="TKey">The series key type; Orleans must be able to serialize it (string, long, Guid, … or a type with a generated serializer).</typeparam>
/// <remarks>
/// Every call that changes state carries an id chosen by the caller. A call whose id the bucket has already applied
/// is acknowledged again without being applied again, so a caller that did not hear back retries with the same id.
/// A call completes only after the new state is stored; if storing fails, the bucket drops its in-memory state and
/// reloads the stored one, and the call fails (retry it with the same id).
/// </remarks>
[Alias("StreamForecast.Orleans.ISeriesBucketGrain`1")]
public interface ISeriesBucketGrain<TKey> : IGrainWithIntegerKey
    where TKey : notnull
{
    /// <summary>Applies observations, in order, then stores the bucket.</summary>
    /// <param name="callId">The call's id; reuse it when retrying.</param>
    /// <param name="batch">Observations whose keys all belong to this bucket, each with a finite quantity.</param>
    /// <returns>What the call did.</returns>
    /// <exception cref="ArgumentException">A key belongs to another bucket or a quantity is not finite; nothing was applied.</exception>
    [Alias("Post")]
    Task<CallReceipt> PostAsync(Guid callId, Observation<TKey>[] batch);

    /// <summary>Closes, in every series of the bucket, each period that ends at or before <paramref name="watermark"/>.</summary>
    /// <param name="callId">The call's id.</param>
    /// <param name="watermark">The event time every series has reached.</param>
    /// <returns>What the call did.</returns>
    [Alias("Advance")]
    Task<CallReceipt> AdvanceAsync(Guid callId, DateTimeOffset watermark);

    /// <summary>Closes every open period of every series of the bucket.</summary>
    /// <param name="callId">The call's id.</param>
    /// <returns>What the call did.</returns>
    [Alias("Flush")]
    Task<CallReceipt> FlushAsync(Guid callId);

    /// <summary>Acknowledges the drift of one series (see <see cref="IForecastEngine{TKey}.AcknowledgeAsync"/>).</summary>
    /// <param name="callId">The call's id.</param>
    /// <param name="key">The series.</param>
    /// <returns>What the call did.</returns>
    [Alias("Acknowledge")]
    Task<CallReceipt> AcknowledgeAsync(Guid callId, TKey key);

    /// <summary>Sends this bucket's output to <paramref name="observer"/> until the lease runs out or it unsubscribes; calling again renews the lease.</summary>
    /// <param name="observer">A reference made with <c>IGrainFactory.CreateObjectReference</c>.</param>
    /// <param name="lease">How long the subscription lasts without renewal.</param>
    /// <returns>
    /// The number of the bucket's newest output when the subscription was stored (0 before the first): a new subscriber
    /// starts counting from it, so an older output sent again later is recognised as old.
    /// </returns>
    [Alias("Subscribe")]
    Task<long> SubscribeAsync(ISeriesBucketObserver<TKey> observer, TimeSpan lease);

    /// <summary>Stops sending output to <paramref name="observer"/>.</summary>
    /// <param name="observer">The subscribed reference.</param>
    /// <returns>A task that completes when the change is stored.</returns>
    [Alias("Unsubscribe")]
    Task UnsubscribeAsync(ISeriesBucketObserver<TKey> observer);

    /// <summary>The bucket's counters, series count and where it runs now.</summary>
    /// <returns>The status.</returns>
    [Alias("GetStatus")]
    Task<BucketStatus> GetStatusAsync();
}

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

/// <summary>
/// What one applied call produced in one bucket. Outputs are numbered 1, 2, 3, … per bucket, the number stored with the
/// bucket before the output is sent, so a receiver spots repeats (a number seen before) and losses (a number skipped).
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[GenerateSerializer]
[Immutable]
[Alias("StreamForecast.Orleans.BucketOutput`1")]
public sealed class BucketOutput<TKey>
    where TKey : notnull
{
    /// <summary>Creates an output.</summary>
    /// <param name="bucket">The bucket.</param>
    /// <param name="number">The output's number in the bucket: one more than the previous output's.</param>
    /// <param name="sequence">The number of the applied call that produced it (calls without output have numbers too).</param>
    /// <param name="forecasts">Forecast updates, in per-key order.</param>
    /// <param name="alerts">Drift-alert transitions.</param>
    /// <param name="faults">Faults.</param>
    public BucketOutput(int bucket, long number, long sequence, ForecastUpdate<TKey>[] forecasts, DriftAlert<TKey>[] alerts, SeriesFault<TKey>[] faults)
    {
        Bucket = bucket;
        Number = number;
        Sequence = sequence;
        Forecasts = forecasts;
        Alerts = alerts;
        Faults = faults;
    }

    /// <summary>The bucket.</summary>
    [Id(0)]
    public int Bucket { get; }

    /// <summary>The number of the applied call that produced this output.</summary>
    [Id(1)]
    public long Sequence { get; }

    /// <summary>The output's number in the bucket (contiguous: 1, 2, 3, …).</summary>
    [Id(5)]
    public long Number { get; }

    /// <summary>Forecast updates, in per-key order.</summary>
    [Id(2)]
    public ForecastUpdate<TKey>[] Forecasts { get; }

    /// <summary>Drift-alert transitions.</summary>
    [Id(3)]
    public DriftAlert<TKey>[] Alerts { get; }

    /// <summary>Faults.</summary>
    [Id(4)]
    public SeriesFault<TKey>[] Faults { get; }
}

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
