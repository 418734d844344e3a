using System.Threading.Channels;

namespace StreamForecast.Streaming;

/// <summary>
/// One owner loop: it alone reads its queue and touches its series, so per-series state needs no locks. Everything it
/// produces is handed to the engine's publishers from this loop.
/// </summary>
internal sealed class Partition<TKey> : ISeriesSink<TKey>, ISeriesBudget
    where TKey : notnull
{
    private readonly ForecastEngine<TKey> _engine;
    private readonly Channel<Message> _queue;
    private readonly SeriesSet<TKey> _table;
    private readonly Queue<ForecastUpdate<TKey>> _pendingForecasts = new();
    private readonly Queue<DriftAlert<TKey>> _pendingAlerts = new();

    public Partition(ForecastEngine<TKey> engine, int index)
    {
        _engine = engine;
        Index = index;
        _queue = Channel.CreateBounded<Message>(new BoundedChannelOptions(engine.Options.QueueCapacity)
        {
            SingleReader = true,
            SingleWriter = false,
            FullMode = BoundedChannelFullMode.Wait,
        });
        _table = new SeriesSet<TKey>(engine.Options, this);
    }

    public int Index { get; }

    /// <summary>This partition's counters (relaxed reads; rejections made inside the partition included).</summary>
    public EngineCounters GetCounters() => _table.GetCounters();

    public Task Loop { get; private set; } = Task.CompletedTask;

    public int QueueDepth => _queue.Reader.Count;

    public int SeriesCount => _table.Count;

    /// <summary>Takes the declared events of a restored snapshot (before any series is adopted).</summary>
    public void RestoreDeclared(IEnumerable<KnownEvent<TKey>> declared) => _table.RestoreDeclared(declared);

    public void Start() => Loop = Task.Run(RunAsync);

    public void Adopt(SeriesState<TKey> state) => _table.Adopt(state);

    public bool TryWrite(in Message message) => _queue.Writer.TryWrite(message);

    public ValueTask WriteAsync(Message message, CancellationToken cancellationToken) => _queue.Writer.WriteAsync(message, cancellationToken);

    public void CompleteQueue() => _queue.Writer.TryComplete();

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
        ChannelReader<Message> reader = _queue.Reader;
        while (await reader.WaitToReadAsync().ConfigureAwait(false))
        {
            while (reader.TryRead(out Message message))
            {
                Handle(message);
                if (_pendingForecasts.Count > 0 || _pendingAlerts.Count > 0)
                {
                    WakeSubscribers();
                    await DrainPendingAsync().ConfigureAwait(false);
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

    private void Handle(in Message message)
    {
        try
        {
            switch (message.Kind)
            {
                case MessageKind.Observation:
                    _table.Observe(message.Observation, message.Arrival, this);
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
        catch (Exception ex) when (message.Done is not null)
        {
            message.Done.TrySetException(ex);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            // A defect must not end the loop that owns every other series of this partition: report it as a fault.
            _engine.CountRejected();
            _engine.PublishFault(new SeriesFault<TKey>(message.Observation.Key, 0, SeriesFaultKind.InternalError, ex.ToString()));
        }
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
