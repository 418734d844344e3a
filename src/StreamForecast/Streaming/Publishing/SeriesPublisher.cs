namespace StreamForecast.Streaming;

/// <summary>
/// A sink that publishes what series produce to push subscribers, as the engine publishes: its
/// <see cref="Forecasts"/>, <see cref="Alerts"/> and <see cref="Faults"/> behave like
/// <see cref="ForecastEngine{TKey}.Forecasts"/> and its siblings. Pair it with a <see cref="SeriesSet{TKey}"/> to host
/// series outside the engine and still offer the engine's observables (the cluster client does).
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Delivery.</b> Each subscriber has its own bounded buffer (<see cref="PublishingOptions.SubscriberCapacity"/>)
/// and delivery loop; a slow subscriber loses its own oldest items, and a subscriber that throws is reported on
/// <see cref="Faults"/> as <see cref="SeriesFaultKind.SubscriberFailed"/> (a throwing <see cref="Faults"/> subscriber is
/// only skipped) without ending anyone's stream.</para>
/// <para><b>Cost.</b> Each sink call is O(subscribers) short buffer writes, allocation-free once the buffers have grown.</para>
/// <para><b>Thread safety.</b> Subscribing and <see cref="CompleteAsync"/> are thread-safe. The sink methods may be
/// called from several threads, but items from different threads have no order between them; call them from one owner
/// (or under one lock) to keep each key's order.</para>
/// </remarks>
public sealed class SeriesPublisher<TKey> : ISeriesSink<TKey>
{
    private readonly Publisher<ForecastUpdate<TKey>> _forecasts;
    private readonly Publisher<DriftAlert<TKey>> _alerts;
    private readonly Publisher<SeriesFault<TKey>> _faults;

    /// <summary>Creates a publisher with no subscribers.</summary>
    /// <param name="options">Buffer sizes; <see cref="PublishingOptions.Default"/> when null.</param>
    public SeriesPublisher(PublishingOptions? options = null)
    {
        _forecasts = new Publisher<ForecastUpdate<TKey>>(options, onFault: ReportSubscriberFault);
        _alerts = new Publisher<DriftAlert<TKey>>(options, onFault: ReportSubscriberFault);
        _faults = new Publisher<SeriesFault<TKey>>(options);
    }

    /// <summary>Forecast updates, one per closed period of each series.</summary>
    public IObservable<ForecastUpdate<TKey>> Forecasts => _forecasts;

    /// <summary>Drift-alert transitions.</summary>
    public IObservable<DriftAlert<TKey>> Alerts => _alerts;

    /// <summary>Per-series faults, rejected observations and subscriber failures.</summary>
    public IObservable<SeriesFault<TKey>> Faults => _faults;

    /// <summary>Publishes a forecast update to every <see cref="Forecasts"/> subscriber.</summary>
    /// <param name="update">The update.</param>
    /// <exception cref="InvalidOperationException"><see cref="CompleteAsync"/> has been called.</exception>
    public void Forecast(in ForecastUpdate<TKey> update) => _forecasts.TryPublish(update);

    /// <summary>Publishes an alert transition to every <see cref="Alerts"/> subscriber.</summary>
    /// <param name="alert">The transition.</param>
    /// <exception cref="InvalidOperationException"><see cref="CompleteAsync"/> has been called.</exception>
    public void Alert(in DriftAlert<TKey> alert) => _alerts.TryPublish(alert);

    /// <summary>Publishes a fault to every <see cref="Faults"/> subscriber.</summary>
    /// <param name="fault">The fault.</param>
    /// <exception cref="InvalidOperationException"><see cref="CompleteAsync"/> has been called.</exception>
    public void Fault(in SeriesFault<TKey> fault) => _faults.TryPublish(fault);

    /// <summary>
    /// Publishes forecast updates in order to every <see cref="Forecasts"/> subscriber, waking each sleeping subscriber
    /// at most once for the batch instead of once per update.
    /// </summary>
    /// <param name="updates">The updates, in per-key order.</param>
    /// <exception cref="InvalidOperationException"><see cref="CompleteAsync"/> has been called.</exception>
    /// <remarks>
    /// Subscribers see the same items in the same order as from one <see cref="Forecast(in ForecastUpdate{TKey})"/> call
    /// per update. A subscriber asleep when the batch starts wakes after its last item, or earlier once 256 items (at most
    /// a quarter of its buffer) wait for it, so a long batch never fills a buffer for want of a wake-up. Cost: per update
    /// the same buffer writes as <see cref="Forecast(in ForecastUpdate{TKey})"/>, with one wake-up per subscriber per
    /// batch (or per 256 items) instead of one per update whenever the subscriber keeps up; allocation-free. Thread
    /// safety as for the single-update method.
    /// </remarks>
    public void Forecast(ReadOnlySpan<ForecastUpdate<TKey>> updates) => PublishAll(_forecasts, updates);

    /// <summary>Publishes alert transitions in order to every <see cref="Alerts"/> subscriber, waking each sleeping subscriber at most once for the batch.</summary>
    /// <param name="alerts">The transitions.</param>
    /// <exception cref="InvalidOperationException"><see cref="CompleteAsync"/> has been called.</exception>
    /// <remarks>As <see cref="Forecast(ReadOnlySpan{ForecastUpdate{TKey}})"/>.</remarks>
    public void Alert(ReadOnlySpan<DriftAlert<TKey>> alerts) => PublishAll(_alerts, alerts);

    /// <summary>Publishes faults in order to every <see cref="Faults"/> subscriber, waking each sleeping subscriber at most once for the batch.</summary>
    /// <param name="faults">The faults.</param>
    /// <exception cref="InvalidOperationException"><see cref="CompleteAsync"/> has been called.</exception>
    /// <remarks>As <see cref="Forecast(ReadOnlySpan{ForecastUpdate{TKey}})"/>.</remarks>
    public void Fault(ReadOnlySpan<SeriesFault<TKey>> faults) => PublishAll(_faults, faults);

    /// <summary>Ends the three streams: every subscriber gets what is buffered, then <see cref="IObserver{T}.OnCompleted"/>.</summary>
    /// <returns>A task that completes when every subscriber's delivery has ended; it never faults.</returns>
    /// <remarks>Call it after the last sink call; later calls do nothing more. The fault stream ends last, after the
    /// other two have drained, so a subscriber failure during the drain is still reported. Thread-safe.</remarks>
    public async Task CompleteAsync()
    {
        // Faults last: a forecast or alert subscriber that throws while its buffer drains is still reported.
        _forecasts.Complete();
        _alerts.Complete();
        await Task.WhenAll(_forecasts.Completion, _alerts.Completion).ConfigureAwait(false);
        _faults.Complete();
        await _faults.Completion.ConfigureAwait(false);
    }

    private static void PublishAll<T>(Publisher<T> publisher, ReadOnlySpan<T> items)
    {
        if (publisher.IsCompleted)
        {
            // As the single-item path, and an empty batch after completion too.
            Publisher<T>.ThrowCompleted();
        }

        try
        {
            for (int i = 0; i < items.Length; i++)
            {
                publisher.TryPublishDeferred(in items[i]);
            }
        }
        finally
        {
            // Items written before a failure still reach their subscribers.
            publisher.WakeSubscribers();
        }
    }

    private void ReportSubscriberFault(DeliveryFault fault) =>
        _faults.TryPublish(new SeriesFault<TKey>(default!, 0, SeriesFaultKind.SubscriberFailed, $"Subscriber {fault.Subscription.Id} threw: {fault.Exception.Message}"));
}
