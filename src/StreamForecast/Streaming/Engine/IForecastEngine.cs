namespace StreamForecast.Streaming;

/// <summary>
/// What every host of the keyed engine offers its callers: post observations, move event time on, acknowledge drift,
/// and watch forecasts, drift alerts and faults. <see cref="ForecastEngine{TKey}"/> runs in process; a cluster client
/// (StreamForecast.Orleans) runs the same per-series state on many machines. Code written against this interface moves
/// from one to the other by changing configuration only.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Acceptance.</b> A completed post means the host has taken the observation: queued, for the in-process
/// engine (a checkpoint makes it durable); applied and stored durably, for a cluster. Either way a rejected post
/// (for example a quantity that is not finite) throws and posts nothing.</para>
/// <para><b>Thread safety.</b> Implementations are thread-safe. Per-key order is the order of the posts for that key.</para>
/// </remarks>
public interface IForecastEngine<TKey> : IAsyncDisposable
    where TKey : notnull
{
    /// <summary>Forecast updates, one for each closed period of each series (in per-key order).</summary>
    IObservable<ForecastUpdate<TKey>> Forecasts { get; }

    /// <summary>Drift-alert transitions: raised, escalated and cleared episodes.</summary>
    IObservable<DriftAlert<TKey>> Alerts { get; }

    /// <summary>Problems reported as events: rejected actuals, rejected observations, failing subscribers.</summary>
    IObservable<SeriesFault<TKey>> Faults { get; }

    /// <summary>Posts one observation.</summary>
    /// <param name="observation">The observation.</param>
    /// <param name="cancellationToken">Stops waiting; the observation may or may not have been taken.</param>
    /// <returns>A task that completes when the host has taken the observation (see the remarks on acceptance).</returns>
    /// <exception cref="ArgumentOutOfRangeException">The observation is invalid; nothing was posted.</exception>
    ValueTask PostAsync(Observation<TKey> observation, CancellationToken cancellationToken = default);

    /// <summary>Validates every observation of a batch, then posts them in order.</summary>
    /// <param name="batch">The observations.</param>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when the host has taken the whole batch.</returns>
    /// <exception cref="ArgumentOutOfRangeException">An observation is invalid; nothing of the batch was posted.</exception>
    ValueTask PostBatchAsync(ReadOnlyMemory<Observation<TKey>> batch, CancellationToken cancellationToken = default);

    /// <summary>Closes, in every series, each period that ends at or before <paramref name="watermark"/>.</summary>
    /// <param name="watermark">The event time every series has reached.</param>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when every series has done it.</returns>
    Task AdvanceAsync(DateTimeOffset watermark, CancellationToken cancellationToken = default);

    /// <summary>Closes every open period of every series (end of input).</summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when every series has done it.</returns>
    Task FlushAsync(CancellationToken cancellationToken = default);

    /// <summary>A person has looked at the drift of <paramref name="key"/>: open episodes close (rebaselined) and the rules warm up afresh.</summary>
    /// <param name="key">The series.</param>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when the series has done it (nothing happens for an unknown key).</returns>
    Task AcknowledgeAsync(TKey key, CancellationToken cancellationToken = default);

    /// <summary>
    /// Declares a known event (a promotion, a closure, another named kind) during the run, before or after it happens:
    /// the series it applies to mark the periods it covers (not scored, kept out of the drift rules, the lift measured),
    /// and closed periods inside a series' restatement horizon are restated. Declared events are part of the stored state.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="cancellationToken">Stops waiting (the declaration may still be carried out).</param>
    /// <returns>What the declaration did, summed over partitions or buckets.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="knownEvent"/> is null.</exception>
    /// <exception cref="ArgumentException">A group event, but the options give no group function (<see cref="EventCalendar{TKey}.GroupOf"/>).</exception>
    /// <remarks>Ordered after everything posted before the call. See <see cref="ForecastEngine{TKey}.DeclareEventAsync"/> for the details.</remarks>
    Task<KnownEventReceipt> DeclareEventAsync(KnownEvent<TKey> knownEvent, CancellationToken cancellationToken = default);

    /// <summary>Withdraws an event declared with <see cref="DeclareEventAsync"/> (equal in every field), with the same restatement rules.</summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="cancellationToken">Stops waiting (the withdrawal may still be carried out).</param>
    /// <returns>What the withdrawal did (all zero when the event was not declared).</returns>
    /// <exception cref="ArgumentNullException"><paramref name="knownEvent"/> is null.</exception>
    Task<KnownEventReceipt> WithdrawEventAsync(KnownEvent<TKey> knownEvent, CancellationToken cancellationToken = default);

    /// <summary>The lift observed per event kind, summed over every series held (see <see cref="EventLift"/>).</summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>One entry per kind met, ordered by kind name.</returns>
    Task<IReadOnlyList<EventLift>> GetEventLiftAsync(CancellationToken cancellationToken = default);

    /// <summary>The counters now, summed over the engine's partitions or the cluster's buckets.</summary>
    /// <param name="cancellationToken">Stops waiting (a cluster asks every bucket).</param>
    /// <returns>The counters.</returns>
    /// <remarks>In process this completes at once; a read may straddle updates still in flight.</remarks>
    Task<EngineCounters> GetCountersAsync(CancellationToken cancellationToken = default);
}
