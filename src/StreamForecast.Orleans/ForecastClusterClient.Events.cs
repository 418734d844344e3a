using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <content>Known events declared at run time, routed to the buckets that own the series, and the lift per event kind.</content>
public sealed partial class ForecastClusterClient<TKey>
{
    /// <summary>
    /// Declares a known event (a promotion, a closure, another named kind) during the run, before or after it happens,
    /// as <see cref="ForecastEngine{TKey}.DeclareEventAsync"/> does: a series event goes to the bucket that owns its key,
    /// a group or all-series event to every bucket. Each bucket marks its series through the engine's own code, restates
    /// closed periods inside their restatement horizon (the restatements arrive on <see cref="Forecasts"/>), and stores
    /// the event with its series before it answers, so the event survives a silo's death and a bucket's reactivation.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="cancellationToken">Stops waiting (the declaration may still be carried out).</param>
    /// <returns>What the declaration did, summed over the buckets called.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="knownEvent"/> is null.</exception>
    /// <exception cref="ArgumentException">A group event, but the silos' engine options give no group function (<see cref="EventCalendar{TKey}.GroupOf"/>).</exception>
    /// <exception cref="ObjectDisposedException">The client has been disposed.</exception>
    /// <remarks>
    /// <para><b>Ordering.</b> Applied after every post to the same bucket that completed before the call. Calls are
    /// retried with the same id, so a retry after a lost answer is not applied twice (its bucket's part of the receipt
    /// then counts nothing). A group or all-series declaration that fails after retries may have been applied by some
    /// buckets and not others: withdraw it and declare it again.</para>
    /// <para><b>Groups.</b> The group function and the events given before the run come from the silos' options
    /// (<see cref="ForecastClusterSiloExtensions.AddForecastBuckets"/>); every silo must be given the same.</para>
    /// <para><b>Cost.</b> One call for a series event; <see cref="ForecastClusterOptions.BucketCount"/> calls otherwise. Thread-safe.</para>
    /// </remarks>
    public Task<KnownEventReceipt> DeclareEventAsync(KnownEvent<TKey> knownEvent, CancellationToken cancellationToken = default) =>
        SendEventAsync(knownEvent, withdraw: false, cancellationToken);

    /// <summary>
    /// Withdraws an event declared with <see cref="DeclareEventAsync"/> (equal in every field): its periods are no longer
    /// marked, with the same restatement rules and routing as a declaration. Nothing happens for an event not declared;
    /// events given in the silos' <see cref="ForecastEngineOptions{TKey}.Events"/> cannot be withdrawn.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="cancellationToken">Stops waiting (the withdrawal may still be carried out).</param>
    /// <returns>What the withdrawal did, summed over the buckets called (all zero when the event was not declared).</returns>
    /// <exception cref="ArgumentNullException"><paramref name="knownEvent"/> is null.</exception>
    /// <exception cref="ObjectDisposedException">The client has been disposed.</exception>
    /// <remarks>Thread-safe; ordered and retried like <see cref="DeclareEventAsync"/>.</remarks>
    public Task<KnownEventReceipt> WithdrawEventAsync(KnownEvent<TKey> knownEvent, CancellationToken cancellationToken = default) =>
        SendEventAsync(knownEvent, withdraw: true, cancellationToken);

    /// <summary>
    /// The lift observed per event kind, summed over every series of every bucket (see <see cref="EventLift"/>): the
    /// actuals of the marked periods against the forecasts made for them, as <see cref="ForecastEngine{TKey}.GetEventLiftAsync"/>.
    /// </summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>One entry per kind met, ordered by kind name.</returns>
    /// <exception cref="ObjectDisposedException">The client has been disposed.</exception>
    /// <remarks>O(<see cref="ForecastClusterOptions.BucketCount"/>) calls, each bucket read once (the sum may straddle updates). Thread-safe.</remarks>
    public async Task<IReadOnlyList<EventLift>> GetEventLiftAsync(CancellationToken cancellationToken = default)
    {
        ThrowIfDisposed();
        var reads = new Task<EventLift[]>[Options.BucketCount];
        for (int b = 0; b < reads.Length; b++)
        {
            reads[b] = CallAsync(Bucket(b), static g => g.GetEventLiftAsync(), cancellationToken);
        }

        EventLift[][] all = await Task.WhenAll(reads).ConfigureAwait(false);
        var sums = new Dictionary<EventKind, EventLift>();
        foreach (EventLift[] bucket in all)
        {
            foreach (EventLift l in bucket)
            {
                sums[l.Kind] = sums.TryGetValue(l.Kind, out EventLift s)
                    ? s with { Periods = s.Periods + l.Periods, ActualTotal = s.ActualTotal + l.ActualTotal, ForecastTotal = s.ForecastTotal + l.ForecastTotal }
                    : l;
            }
        }

        EventLift[] result = [.. sums.Values];
        Array.Sort(result, static (a, b) => string.CompareOrdinal(a.Kind.Name, b.Kind.Name));
        return result;
    }

    private async Task<KnownEventReceipt> SendEventAsync(KnownEvent<TKey> knownEvent, bool withdraw, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(knownEvent);
        ThrowIfDisposed();
        int[] buckets = knownEvent.Scope == EventScope.Series ? [_map.BucketOf(knownEvent.Key!)] : Enumerable.Range(0, Options.BucketCount).ToArray();
        var calls = new Task<KnownEventReceipt>[buckets.Length];
        for (int i = 0; i < buckets.Length; i++)
        {
            Guid id = Guid.NewGuid();
            calls[i] = CallAsync(Bucket(buckets[i]), g => withdraw ? g.WithdrawEventAsync(id, knownEvent) : g.DeclareEventAsync(id, knownEvent), cancellationToken);
        }

        KnownEventReceipt[] receipts = await Task.WhenAll(calls).ConfigureAwait(false);
        int series = 0;
        long restated = 0, beyond = 0;
        foreach (KnownEventReceipt r in receipts)
        {
            series += r.SeriesAffected;
            restated += r.PeriodsRestated;
            beyond += r.PeriodsBeyondHorizon;
        }

        return new KnownEventReceipt(series, restated, beyond);
    }
}
