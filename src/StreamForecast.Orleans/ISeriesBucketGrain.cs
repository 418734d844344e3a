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

    /// <summary>
    /// Declares a known event in this bucket (see <see cref="IForecastEngine{TKey}.DeclareEventAsync"/>): its series the
    /// event applies to are marked and restated as in an engine partition, and the event is stored with the bucket.
    /// </summary>
    /// <param name="callId">The call's id; reuse it when retrying.</param>
    /// <param name="knownEvent">The event; a series event's key must belong to this bucket.</param>
    /// <returns>What the call did in this bucket; all zero when the call id was already applied (a retry: the first application's counts went with its lost answer).</returns>
    /// <exception cref="ArgumentException">The key belongs to another bucket, or a group event was declared while the silos' options give no group function; nothing was applied.</exception>
    [Alias("DeclareEvent")]
    Task<KnownEventReceipt> DeclareEventAsync(Guid callId, KnownEvent<TKey> knownEvent);

    /// <summary>Withdraws a known event declared in this bucket (see <see cref="IForecastEngine{TKey}.WithdrawEventAsync"/>).</summary>
    /// <param name="callId">The call's id; reuse it when retrying.</param>
    /// <param name="knownEvent">The event, equal in every field to the declared one.</param>
    /// <returns>What the call did in this bucket (all zero when the event was not declared, or the call id was already applied).</returns>
    /// <exception cref="ArgumentException">The key belongs to another bucket; nothing was applied.</exception>
    [Alias("WithdrawEvent")]
    Task<KnownEventReceipt> WithdrawEventAsync(Guid callId, KnownEvent<TKey> knownEvent);

    /// <summary>The lift observed per event kind in this bucket's series (see <see cref="SeriesSet{TKey}.GetEventLift"/>).</summary>
    /// <returns>One entry per kind met, ordered by kind name.</returns>
    [Alias("GetEventLift")]
    Task<EventLift[]> GetEventLiftAsync();

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
