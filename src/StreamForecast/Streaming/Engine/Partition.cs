namespace StreamForecast.Streaming;

/// <summary>
/// One owner loop: it alone reads its queue and touches its series, so per-series state needs no locks. Everything it
/// produces is handed to the engine's publishers from this loop.
/// </summary>
internal sealed class Partition<TKey> : ISeriesSink<TKey>, ISeriesBudget
    where TKey : notnull
{
    /// <summary>
    /// How long a sweep waits for push subscribers to make room for the next slice, measured on the engine's
    /// <see cref="ForecastEngineOptions{TKey}.TimeProvider"/>: after it, the rest of that sweep is published without
    /// waiting and a full buffer drops its oldest items as usual (a blocked observer cannot hold a flush for longer).
    /// </summary>
    internal static readonly TimeSpan SweepStallLimit = TimeSpan.FromSeconds(1);

    private readonly ForecastEngine<TKey> _engine;
    /// <summary>The most queue items the loop takes at once (fewer when the queue is smaller).</summary>
    private const int MaxBatch = 256;

    private readonly PartitionQueue<Message> _queue;
    private readonly Message[] _batch;
    private readonly SeriesState<TKey>?[] _known; // the series of each observation of the batch, found ahead (ResolveAhead)
    private long _warm; // written by ResolveAhead only so that its reads stay; never read
    private readonly SeriesSet<TKey> _table;
    private readonly Queue<ForecastUpdate<TKey>> _pendingForecasts = new();
    private readonly Queue<DriftAlert<TKey>> _pendingAlerts = new();

    // A flush or an advance closes periods this many at a time, then waits until each push subscriber has room for
    // twice as many (see SweepAsync): a quarter of a subscriber buffer, between 1 and 4,096.
    private readonly int _sweepSlice;

    // How many items of the batch the loop holds are not handled yet (part of QueueDepth).
    private int _unhandled;

    public Partition(ForecastEngine<TKey> engine, int index)
    {
        _engine = engine;
        Index = index;
        _queue = new PartitionQueue<Message>(engine.Options.QueueCapacity);
        _batch = new Message[Math.Min(MaxBatch, engine.Options.QueueCapacity)];
        _known = new SeriesState<TKey>?[_batch.Length];
        _table = new SeriesSet<TKey>(engine.Options, this);
        _sweepSlice = Math.Clamp(engine.Options.Publishing.SubscriberCapacity / 4, 1, 4096);
    }

    public int Index { get; }

    /// <summary>This partition's counters (relaxed reads; rejections made inside the partition included).</summary>
    public EngineCounters GetCounters() => _table.GetCounters();

    public Task Loop { get; private set; } = Task.CompletedTask;

    /// <summary>Items waiting: in the queue, and taken by the loop but not yet handled.</summary>
    public int QueueDepth => _queue.Count + Volatile.Read(ref _unhandled);

    public int SeriesCount => _table.Count;

    /// <summary>Takes the declared events of a restored snapshot (before any series is adopted).</summary>
    public void RestoreDeclared(IEnumerable<KnownEvent<TKey>> declared) => _table.RestoreDeclared(declared);

    public void Start() => Loop = Task.Run(RunAsync);

    public void Adopt(SeriesState<TKey> state) => _table.Adopt(state);

    public bool TryWrite(in Message message) => _queue.TryWrite(in message);

    public ValueTask WriteAsync(Message message, CancellationToken cancellationToken) => _queue.WriteAsync(message, cancellationToken);

    public void CompleteQueue() => _queue.Complete();

    bool ISeriesBudget.TryReserveSeries() => _engine.TryReserveSeries();

    void ISeriesBudget.ReleaseSeries() => _engine.ReleaseSeries();

    void ISeriesSink<TKey>.Forecast(in ForecastUpdate<TKey> update)
    {
        if (_pendingForecasts.Count > 0 || !_engine.ForecastPublisher.TryPublishDeferred(update))
        {
            _pendingForecasts.Enqueue(update);
        }
    }

    void ISeriesSink<TKey>.Alert(in DriftAlert<TKey> alert)
    {
        if (_pendingAlerts.Count > 0 || !_engine.AlertPublisher.TryPublishDeferred(alert))
        {
            _pendingAlerts.Enqueue(alert);
        }
    }

    void ISeriesSink<TKey>.Fault(in SeriesFault<TKey> fault) => _engine.PublishFault(fault);

    private async Task RunAsync()
    {
        PartitionQueue<Message> queue = _queue;
        Message[] batch = _batch;
        SeriesState<TKey>?[] known = _known;
        while (await queue.WaitToReadAsync().ConfigureAwait(false))
        {
            // A batch per lock: the queue's writers and this loop meet once per batch, not once per item.
            int taken;
            while ((taken = queue.Take(batch)) > 0)
            {
                Volatile.Write(ref _unhandled, taken);
                int resolvedUntil = 0;
                for (int i = 0; i < taken; i++)
                {
                    if (i >= resolvedUntil)
                    {
                        resolvedUntil = ResolveAhead(batch, i, taken);
                    }

                    if (batch[i].Kind is MessageKind.Flush or MessageKind.Advance)
                    {
                        await SweepAsync(batch[i]).ConfigureAwait(false);
                    }
                    else
                    {
                        Handle(in batch[i], known[i]);
                    }

                    // Let go of what the item references (a command's completion, a visitor, the key and event id).
                    batch[i] = default;
                    known[i] = null;
                    Volatile.Write(ref _unhandled, taken - i - 1);
                    if (_pendingForecasts.Count > 0 || _pendingAlerts.Count > 0)
                    {
                        WakeSubscribers();
                        await DrainPendingAsync().ConfigureAwait(false);
                    }
                }
            }

            // Out of work: wake the push subscribers that the deferred publishes above left asleep.
            WakeSubscribers();
        }
    }

    private void WakeSubscribers()
    {
        _engine.ForecastPublisher.WakeSubscribers();
        _engine.AlertPublisher.WakeSubscribers();
    }

    private async ValueTask DrainPendingAsync()
    {
        // A pull reader is full: wait for it (backpressure into this partition's queue), keeping order.
        while (_pendingForecasts.TryDequeue(out ForecastUpdate<TKey> update))
        {
            await _engine.ForecastPublisher.PublishAsync(update).ConfigureAwait(false);
        }

        while (_pendingAlerts.TryDequeue(out DriftAlert<TKey> alert))
        {
            await _engine.AlertPublisher.PublishAsync(alert).ConfigureAwait(false);
        }
    }

    /// <summary>
    /// A flush or an advance, which can close a period in every series at once (millions of updates in one burst, far
    /// more than a subscriber buffer holds): closes them a slice at a time and, before each next slice, waits until
    /// every push subscriber has room for it, so that a subscriber that keeps up with the steady stream loses nothing
    /// to the burst. The outputs and their order are those of an unpaced sweep. The partition takes no other queue item
    /// meanwhile (backpressure on posts during a flush). A subscriber that makes no room for
    /// <see cref="SweepStallLimit"/> is not waited for again in this sweep.
    /// </summary>
    private async Task SweepAsync(Message message)
    {
        bool flush = message.Kind == MessageKind.Flush;
        long ticks = message.Time.UtcTicks;
        bool pace = true;
        try
        {
            _table.BeginSweep();
            bool more;
            do
            {
                more = _table.SweepSlice(flush, ticks, _sweepSlice, this);

                // The last slice's outputs too are handed to the publishers before the command completes.
                if (_pendingForecasts.Count > 0 || _pendingAlerts.Count > 0)
                {
                    WakeSubscribers();
                    await DrainPendingAsync().ConfigureAwait(false);
                }

                if (more && pace)
                {
                    pace = await WaitForRoomAsync().ConfigureAwait(false);
                }
            }
            while (more);

            _table.EndSweep();
            message.Done?.TrySetResult();
        }
        catch (Exception ex) when (message.Done is not null || ex is not OutOfMemoryException)
        {
            Fail(in message, ex);
        }
    }

    /// <summary>Waits until every push subscriber has room for two slices; <see langword="false"/> when one stalled.</summary>
    private async ValueTask<bool> WaitForRoomAsync()
    {
        int room = 2 * _sweepSlice;
        Task forecasts = _engine.ForecastPublisher.WaitForPushRoomAsync(room);
        Task alerts = _engine.AlertPublisher.WaitForPushRoomAsync(room);
        if (forecasts.IsCompleted && alerts.IsCompleted)
        {
            return true;
        }

        // Wake whoever the deferred publishes of this slice left asleep, then yield until they have caught up.
        WakeSubscribers();
        try
        {
            await Task.WhenAll(forecasts, alerts).WaitAsync(SweepStallLimit, _engine.Options.TimeProvider).ConfigureAwait(false);
            return true;
        }
        catch (TimeoutException)
        {
            return false;
        }
    }

    /// <summary>
    /// Finds the series of the run of observations that starts at <paramref name="from"/> (up to the first command) in one
    /// pass of lookups that change nothing, so their cache misses overlap; returns where the run ends. Only a command (a
    /// sweep's eviction, an idle check, a visitor) can remove a series that exists, and the run stops before the first.
    /// </summary>
    private int ResolveAhead(Message[] batch, int from, int taken)
    {
        SeriesSet<TKey> table = _table;
        SeriesState<TKey>?[] known = _known;
        int i = from;
        long warm = 0;
        for (; i < taken && batch[i].Kind == MessageKind.Observation; i++)
        {
            if ((known[i] = table.Find(batch[i].Observation.Key)) is { } state)
            {
                warm ^= state.Warm();
            }
        }

        _warm = warm; // kept, so the reads are not dropped
        return i;
    }

    private void Handle(in Message message, SeriesState<TKey>? known)
    {
        try
        {
            switch (message.Kind)
            {
                case MessageKind.Observation:
                    _table.Observe(message.Observation, message.Arrival, this, known);
                    break;
                case MessageKind.Advance:
                    _table.Advance(message.Time, this);
                    break;
                case MessageKind.Flush:
                    _table.Flush(this);
                    break;
                case MessageKind.IdleCheck:
                    _table.CheckIdle(message.Arrival, this);
                    break;
                case MessageKind.Acknowledge:
                    _table.Acknowledge(message.Observation.Key, this);
                    break;
                case MessageKind.Visit:
                    message.Visitor!.VisitTable(_table, this);
                    break;
                case MessageKind.Barrier:
                    break;
            }

            message.Done?.TrySetResult();
        }
        catch (Exception ex) when (message.Done is not null || ex is not OutOfMemoryException)
        {
            Fail(in message, ex);
        }
    }

    /// <summary>
    /// A message whose handling threw: a command's caller gets the exception; an observation's failure (a defect, which
    /// must not end the loop that owns every other series of this partition) is counted and reported as a fault.
    /// </summary>
    private void Fail(in Message message, Exception ex)
    {
        if (message.Done is not null)
        {
            message.Done.TrySetException(ex);
            return;
        }

        _engine.CountRejected();
        _engine.PublishFault(new SeriesFault<TKey>(message.Observation.Key, 0, SeriesFaultKind.InternalError, ex.ToString()));
    }

    /// <summary>One queue item: an observation, or a command ordered with the observations.</summary>
    internal readonly record struct Message(
        MessageKind Kind,
        Observation<TKey> Observation,
        long Arrival,
        DateTimeOffset Time,
        TaskCompletionSource? Done,
        ISeriesVisitor<TKey>? Visitor);
}

/// <summary>What a partition's queue carries: observations, and commands ordered with them.</summary>
internal enum MessageKind : byte
{
    Observation,
    Advance,
    Flush,
    IdleCheck,
    Acknowledge,

    /// <summary>Hand the partition's series to a visitor on the loop (snapshots, status reads).</summary>
    Visit,
    Barrier,
}

/// <summary>Reads a partition's series on its own loop, so it sees a consistent state (a snapshot section, a status list).</summary>
internal interface ISeriesVisitor<TKey>
    where TKey : notnull
{
    /// <summary>Called once, on the partition's loop, with every series it holds.</summary>
    void Visit(ICollection<SeriesState<TKey>> series);

    /// <summary>
    /// Called once, on the partition's loop, with the partition's series set (its series and declared events) and the
    /// partition as the sink for any outputs; by default visits the series.
    /// </summary>
    void VisitTable(SeriesSet<TKey> set, ISeriesSink<TKey> sink) => Visit(set.Series);
}
