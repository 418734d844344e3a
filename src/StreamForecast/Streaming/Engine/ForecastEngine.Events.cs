namespace StreamForecast.Streaming;

/// <content>Known events declared at run time, and the lift observed per event kind.</content>
public sealed partial class ForecastEngine<TKey>
{
    /// <summary>
    /// Declares a known event (a promotion, a closure, another named kind) during the run, before or after it happens.
    /// Series the event applies to mark the periods it covers from now on; closed periods it covers inside a series'
    /// restatement horizon (<see cref="Periods.LatenessPolicy.RestatementPeriods"/>) are restated: the model rolls back,
    /// replays them marked, and republishes them with <see cref="ForecastUpdate{TKey}.IsRestatement"/> set. Closed periods
    /// before the horizon keep their published outputs and statistics; the receipt counts them.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="cancellationToken">Stops waiting (the declaration may still be carried out).</param>
    /// <returns>What the declaration did, summed over partitions.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="knownEvent"/> is null.</exception>
    /// <exception cref="ArgumentException">A group event was declared but the engine's options give no group function (<see cref="EventCalendar{TKey}.GroupOf"/>).</exception>
    /// <exception cref="InvalidOperationException">The engine has been completed.</exception>
    /// <remarks>
    /// <para><b>Ordering and thread safety.</b> Thread-safe. The declaration is queued like a command: it applies on the
    /// partition that owns each series (the key's partition for a series event, every partition otherwise), after
    /// everything posted before the call. Drift episodes opened before the declaration are not rolled back; acknowledge
    /// them (<see cref="AcknowledgeAsync"/>) if they were caused by the event.</para>
    /// <para><b>Durability.</b> Declared events are part of the engine's state: snapshots and checkpoints hold them (see
    /// <see cref="SnapshotAsync"/>). An input log holds observations only: after a crash, declarations made since the last
    /// checkpoint are not replayed, so declare them again. Declaring the same event twice holds it twice (withdraw it
    /// twice to remove it).</para>
    /// <para><b>Cost.</b> O(series of the partition) plus, per affected series, resolving its events and replaying its
    /// restatement window.</para>
    /// </remarks>
    public Task<KnownEventReceipt> DeclareEventAsync(KnownEvent<TKey> knownEvent, CancellationToken cancellationToken = default) =>
        SendEventAsync(knownEvent, withdraw: false, cancellationToken);

    /// <summary>
    /// Withdraws an event declared with <see cref="DeclareEventAsync"/> (equal in every field, keys by the engine's key
    /// comparer): its periods are no longer marked, with the same restatement rules as a declaration. Events given in
    /// <see cref="ForecastEngineOptions{TKey}.Events"/> cannot be withdrawn. Nothing happens for an event not declared.
    /// </summary>
    /// <param name="knownEvent">The event.</param>
    /// <param name="cancellationToken">Stops waiting (the withdrawal may still be carried out).</param>
    /// <returns>What the withdrawal did, summed over partitions (all zero when the event was not declared).</returns>
    /// <exception cref="ArgumentNullException"><paramref name="knownEvent"/> is null.</exception>
    /// <exception cref="InvalidOperationException">The engine has been completed.</exception>
    /// <remarks>Thread-safe; ordered with posts like <see cref="DeclareEventAsync"/>.</remarks>
    public Task<KnownEventReceipt> WithdrawEventAsync(KnownEvent<TKey> knownEvent, CancellationToken cancellationToken = default) =>
        SendEventAsync(knownEvent, withdraw: true, cancellationToken);

    /// <summary>
    /// The lift observed per event kind, summed over every series held (see <see cref="EventLift"/>): the actuals of the
    /// marked periods against the forecasts made for them. Series evicted or not yet restored no longer count.
    /// </summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>One entry per kind met, ordered by kind name.</returns>
    /// <exception cref="InvalidOperationException">The engine has been completed.</exception>
    /// <remarks>Queued behind everything posted before the call; O(series). Thread-safe.</remarks>
    public async Task<IReadOnlyList<EventLift>> GetEventLiftAsync(CancellationToken cancellationToken = default)
    {
        var readers = new EventCommand[_partitions.Length];
        var waits = new Task[_partitions.Length];
        for (int i = 0; i < _partitions.Length; i++)
        {
            readers[i] = new EventCommand(null, false);
            var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            waits[i] = SendAsync(_partitions[i], new Partition<TKey>.Message(MessageKind.Visit, default, 0, default, done, readers[i]), done, cancellationToken);
        }

        await Task.WhenAll(waits).ConfigureAwait(false);
        var sums = new Dictionary<EventKind, EventLift>();
        foreach (EventCommand r in readers)
        {
            foreach (EventLift l in r.Lift.Values)
            {
                sums[l.Kind] = sums.TryGetValue(l.Kind, out EventLift s)
                    ? s with { Periods = s.Periods + l.Periods, ActualTotal = s.ActualTotal + l.ActualTotal, ForecastTotal = s.ForecastTotal + l.ForecastTotal }
                    : l;
            }
        }

        return [.. sums.Values.OrderBy(static l => l.Kind.Name, StringComparer.Ordinal)];
    }

    private async Task<KnownEventReceipt> SendEventAsync(KnownEvent<TKey> knownEvent, bool withdraw, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(knownEvent);
        if (!withdraw)
        {
            SeriesSet<TKey>.ThrowIfNoGroupFunction(knownEvent, Options);
        }

        ThrowIfCompleted();
        Partition<TKey>[] targets = knownEvent.Scope == EventScope.Series ? [PartitionOf(knownEvent.Key!)] : _partitions;
        var commands = new EventCommand[targets.Length];
        var waits = new Task[targets.Length];
        for (int i = 0; i < targets.Length; i++)
        {
            commands[i] = new EventCommand(knownEvent, withdraw);
            var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            waits[i] = SendAsync(targets[i], new Partition<TKey>.Message(MessageKind.Visit, default, 0, default, done, commands[i]), done, cancellationToken);
        }

        await Task.WhenAll(waits).ConfigureAwait(false);
        int series = 0;
        long restated = 0, beyond = 0;
        foreach (EventCommand c in commands)
        {
            series += c.Receipt.SeriesAffected;
            restated += c.Receipt.PeriodsRestated;
            beyond += c.Receipt.PeriodsBeyondHorizon;
        }

        return new KnownEventReceipt(series, restated, beyond);
    }

    /// <summary>A declaration, withdrawal or lift read carried out on a partition's loop.</summary>
    private sealed class EventCommand(KnownEvent<TKey>? knownEvent, bool withdraw) : ISeriesVisitor<TKey>
    {
        public KnownEventReceipt Receipt { get; private set; }

        public Dictionary<EventKind, EventLift> Lift { get; } = [];

        public void Visit(ICollection<SeriesState<TKey>> series) => throw new InvalidOperationException("An event command needs the partition's series set.");

        public void VisitTable(SeriesSet<TKey> set, ISeriesSink<TKey> sink)
        {
            if (knownEvent is null)
            {
                set.AddLift(Lift);
            }
            else
            {
                Receipt = set.Declare(knownEvent, withdraw, sink);
            }
        }
    }
}
