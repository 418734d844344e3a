using System.Runtime.InteropServices;
using System.Threading.Channels;

namespace StreamForecast.Streaming;

/// <summary>
/// One owner loop: it alone reads its queue and touches its series, so per-series state needs no locks. Everything it
/// produces is handed to the engine's publishers from this loop.
/// </summary>
internal sealed class Partition<TKey> : ISeriesOutput<TKey>
    where TKey : notnull
{
    private readonly ForecastEngine<TKey> _engine;
    private readonly Channel<Message> _queue;
    private readonly Dictionary<TKey, SeriesState<TKey>> _series;
    private readonly Queue<ForecastUpdate<TKey>> _pendingForecasts = new();
    private readonly Queue<DriftAlert<TKey>> _pendingAlerts = new();
    private readonly List<TKey> _evict = [];
    private int _idleSeries;

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
        _series = new Dictionary<TKey, SeriesState<TKey>>(engine.Options.KeyComparer);
    }

    public int Index { get; }

    public SeriesCounters Counters { get; } = new();

    public Task Loop { get; private set; } = Task.CompletedTask;

    public int QueueDepth => _queue.Reader.Count;

    public int SeriesCount => Volatile.Read(ref _seriesCount);

    private int _seriesCount;

    public void Start() => Loop = Task.Run(RunAsync);

    public void Adopt(SeriesState<TKey> state)
    {
        _series.Add(state.Key, state);
        _seriesCount = _series.Count;
        if (state.Options.IdleTimeout is not null)
        {
            _idleSeries++;
        }
    }

    public bool TryWrite(in Message message) => _queue.Writer.TryWrite(message);

    public ValueTask WriteAsync(Message message, CancellationToken cancellationToken) => _queue.Writer.WriteAsync(message, cancellationToken);

    public void CompleteQueue() => _queue.Writer.TryComplete();

    void ISeriesOutput<TKey>.Forecast(in ForecastUpdate<TKey> update)
    {
        if (_pendingForecasts.Count > 0 || !_engine.ForecastPublisher.TryPublish(update))
        {
            _pendingForecasts.Enqueue(update);
        }
    }

    void ISeriesOutput<TKey>.Alert(in DriftAlert<TKey> alert)
    {
        if (_pendingAlerts.Count > 0 || !_engine.AlertPublisher.TryPublish(alert))
        {
            _pendingAlerts.Enqueue(alert);
        }
    }

    void ISeriesOutput<TKey>.Fault(in SeriesFault<TKey> fault) => _engine.PublishFault(fault);

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
                    await DrainPendingAsync().ConfigureAwait(false);
                }
            }
        }
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
                    Observe(message.Observation, message.Arrival);
                    break;
                case MessageKind.Advance:
                    long watermark = message.Time.UtcTicks;
                    foreach (SeriesState<TKey> s in _series.Values)
                    {
                        s.CloseThrough(watermark, this);
                    }

                    EvictQuiet();
                    break;
                case MessageKind.Flush:
                    foreach (SeriesState<TKey> s in _series.Values)
                    {
                        s.CloseAll(this);
                    }

                    EvictQuiet();
                    break;
                case MessageKind.IdleCheck:
                    if (_idleSeries > 0)
                    {
                        foreach (SeriesState<TKey> s in _series.Values)
                        {
                            s.Idle(message.Arrival, _engine.Options.TimeProvider, this);
                        }
                    }

                    EvictQuiet();
                    break;
                case MessageKind.Acknowledge:
                    if (_series.TryGetValue(message.Observation.Key, out SeriesState<TKey>? series))
                    {
                        series.Acknowledge(this);
                    }

                    break;
                case MessageKind.Snapshot:
                    message.Snapshot!.Write(_series.Values);
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

    private void Observe(in Observation<TKey> observation, long arrival)
    {
        ref SeriesState<TKey>? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(_series, observation.Key, out bool exists);
        if (!exists)
        {
            SeriesOptions options;
            try
            {
                options = _engine.Options.Resolve(observation.Key);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                _series.Remove(observation.Key);
                _engine.CountRejected();
                _engine.PublishFault(new SeriesFault<TKey>(observation.Key, 0, SeriesFaultKind.ObservationRejected, "The series options could not be resolved: " + ex.Message));
                return;
            }

            if (!_engine.TryReserveSeries())
            {
                _series.Remove(observation.Key);
                _engine.CountRejected();
                return;
            }

            slot = new SeriesState<TKey>(observation.Key, options, arrival);
            _seriesCount = _series.Count;
            if (options.IdleTimeout is not null)
            {
                _idleSeries++;
            }
        }

        SeriesState<TKey> state = slot!;
        if (!state.Options.Calendar.TryPeriodOf(observation.Timestamp, out long period))
        {
            _engine.CountRejected();
            _engine.PublishFault(new SeriesFault<TKey>(observation.Key, 0, SeriesFaultKind.ObservationRejected, "The event time is outside the range the series' calendar supports."));
            return;
        }

        state.Observe(observation.Timestamp, period, observation.Quantity, observation.EventId, arrival, this);
    }

    private void EvictQuiet()
    {
        if (_engine.Options.EvictAfterQuietPeriods is not { } quiet)
        {
            return;
        }

        foreach (SeriesState<TKey> s in _series.Values)
        {
            if (s.QuietPeriods >= quiet)
            {
                _evict.Add(s.Key);
            }
        }

        foreach (TKey key in _evict)
        {
            if (_series.Remove(key, out SeriesState<TKey>? removed) && removed.Options.IdleTimeout is not null)
            {
                _idleSeries--;
            }

            Counters.Evictions++;
            _engine.ReleaseSeries();
        }

        _evict.Clear();
        _seriesCount = _series.Count;
    }

    /// <summary>One queue item: an observation, or a command ordered with the observations.</summary>
    internal readonly record struct Message(
        MessageKind Kind,
        Observation<TKey> Observation,
        long Arrival,
        DateTimeOffset Time,
        TaskCompletionSource? Done,
        SnapshotSection<TKey>? Snapshot);
}

/// <summary>What a partition's queue carries: observations, and commands ordered with them.</summary>
internal enum MessageKind : byte
{
    Observation,
    Advance,
    Flush,
    IdleCheck,
    Acknowledge,
    Snapshot,
    Barrier,
}
