using System.Diagnostics.Metrics;
using System.Text;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>
/// The keyed streaming engine: it takes raw observations for many series, buckets them into periods by event time,
/// closes periods as event time moves on, updates each series' forecaster, error statistics and drift rules, and
/// publishes forecast updates and drift-alert transitions.
/// </summary>
/// <typeparam name="TKey">The series key type; equality comes from <see cref="ForecastEngineOptions{TKey}.KeyComparer"/>.</typeparam>
/// <remarks>
/// <para><b>Ownership.</b> Keys are hashed onto <see cref="ForecastEngineOptions{TKey}.Partitions"/> partitions. Each
/// partition has one loop that alone owns its series, so series state needs no locks; per-key order is the post
/// order. The outputs of a key do not depend on the partition count.</para>
/// <para><b>Posting.</b> <see cref="TryPost"/> is a synchronous fast path; <see cref="PostAsync"/> waits for room;
/// <see cref="PostBatchAsync"/> validates a whole batch before posting any of it. Bad observations (a non-finite
/// quantity, an event time too far ahead of the clock) are refused at the call with an exception; the engine's state is
/// untouched. What the engine does with late, duplicate and out-of-calendar observations is counted
/// (<see cref="GetCounters"/>) and documented on <see cref="SeriesOptions"/>.</para>
/// <para><b>Commands</b> (<see cref="AdvanceAsync"/>, <see cref="FlushAsync"/>, <see cref="AcknowledgeAsync"/>,
/// <see cref="SnapshotAsync"/>) are queued behind everything posted before them and complete when every partition has
/// carried them out.</para>
/// <para><b>Publishing.</b> <see cref="Forecasts"/>, <see cref="Alerts"/> and <see cref="Faults"/> are push streams: each
/// subscriber has its own bounded buffer and delivery loop, so a slow subscriber loses its own oldest items (counted)
/// and a throwing subscriber is reported on <see cref="Faults"/> without ending anyone's stream. A flush or a watermark,
/// which can close a period in every series at once, is paced instead: its updates go out a slice at a time, and the
/// partition waits for a push subscriber that is behind before the next slice (at most one second per stalled
/// subscriber and sweep; see <see cref="PublishingOptions.SubscriberCapacity"/>). The pull readers
/// (<see cref="ReadForecastsAsync"/>, <see cref="ReadAlertsAsync"/>) apply backpressure instead: while one is full,
/// the partitions wait.</para>
/// <para><b>Thread safety.</b> Every public member is thread-safe. A snapshot covers what was posted before the call
/// when no post runs concurrently with it.</para>
/// <para>Forecasts and alerts are advisory and need a person's judgement before stock or staff are changed.</para>
/// </remarks>
public sealed partial class ForecastEngine<TKey> : IForecastEngine<TKey>
    where TKey : notnull
{
    private readonly Partition<TKey>[] _partitions;
    private readonly Publisher<ForecastUpdate<TKey>> _forecasts;
    private readonly Publisher<DriftAlert<TKey>> _alerts;
    private readonly Publisher<SeriesFault<TKey>> _faults;
    private readonly Meter _meter;
    private readonly ITimer _idleTimer;
    private readonly TaskCompletionSource _completion = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private readonly Lock _completeGate = new();
    private int _seriesCount;
    private long _dropped;
    private long _rejected;
    private long _subscriberFaults;
    private long _subscriberDrops;
    private bool _completing;

    /// <summary>Creates and starts an engine with no series.</summary>
    /// <param name="options">Validated engine options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public ForecastEngine(ForecastEngineOptions<TKey> options)
        : this(options, null)
    {
    }

    internal ForecastEngine(ForecastEngineOptions<TKey> options, List<SeriesState<TKey>>? restored, List<KnownEvent<TKey>>? declared = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        Options = options;
        _forecasts = new Publisher<ForecastUpdate<TKey>>(options.Publishing, (_, _) => Interlocked.Increment(ref _subscriberDrops), OnSubscriberFault);
        _alerts = new Publisher<DriftAlert<TKey>>(options.Publishing, (_, _) => Interlocked.Increment(ref _subscriberDrops), OnSubscriberFault);
        _faults = new Publisher<SeriesFault<TKey>>(options.Publishing, (_, _) => Interlocked.Increment(ref _subscriberDrops), _ => Interlocked.Increment(ref _subscriberFaults));
        _partitions = new Partition<TKey>[options.Partitions];
        for (int i = 0; i < _partitions.Length; i++)
        {
            _partitions[i] = new Partition<TKey>(this, i);
        }

        if (declared is not null)
        {
            // Before any series is adopted, so restored series are marked by them: a series event lives on its key's partition.
            foreach (KnownEvent<TKey> e in declared)
            {
                if (e.Scope == EventScope.Series)
                {
                    PartitionOf(e.Key!).RestoreDeclared([e]);
                }
                else
                {
                    foreach (Partition<TKey> p in _partitions)
                    {
                        p.RestoreDeclared([e]);
                    }
                }
            }
        }

        if (restored is not null)
        {
            foreach (SeriesState<TKey> state in restored)
            {
                PartitionOf(state.Key).Adopt(state);
            }

            _seriesCount = restored.Count;
        }

        // One meter per engine, scoped to it, so listeners can tell several engines in one process apart.
        _meter = new Meter(new MeterOptions(MeterName) { Scope = this });
        CreateInstruments();
        foreach (Partition<TKey> p in _partitions)
        {
            p.Start();
        }

        _ = Task.WhenAll(Array.ConvertAll(_partitions, p => p.Loop)).ContinueWith(
            static (t, state) => ((ForecastEngine<TKey>)state!).FinishAsync(t),
            this,
            CancellationToken.None,
            TaskContinuationOptions.ExecuteSynchronously,
            TaskScheduler.Default);
        _idleTimer = options.TimeProvider.CreateTimer(static s => ((ForecastEngine<TKey>)s!).RequestIdleCheck(), this, options.IdleCheckInterval, options.IdleCheckInterval);
    }

    /// <summary>The name of the engine's <see cref="Meter"/>; each engine's meter has the engine as its scope.</summary>
    public const string MeterName = "StreamForecast.Engine";

    /// <summary>The options the engine was created with.</summary>
    public ForecastEngineOptions<TKey> Options { get; }

    /// <summary>Forecast updates, one per closed period per series (plus restatements), as a push stream.</summary>
    public IObservable<ForecastUpdate<TKey>> Forecasts => _forecasts;

    /// <summary>Drift-alert transitions (raised, escalated, cleared) as a push stream.</summary>
    public IObservable<DriftAlert<TKey>> Alerts => _alerts;

    /// <summary>Per-series and per-subscriber faults; never OnError.</summary>
    public IObservable<SeriesFault<TKey>> Faults => _faults;

    /// <summary>Completes when the engine has drained its queues after <see cref="Complete"/> and every push subscriber has been told.</summary>
    public Task Completion => _completion.Task;

    /// <summary>The number of series held now.</summary>
    public int SeriesCount => Volatile.Read(ref _seriesCount);

    internal Publisher<ForecastUpdate<TKey>> ForecastPublisher => _forecasts;

    internal Publisher<DriftAlert<TKey>> AlertPublisher => _alerts;

    /// <summary>Reads forecast updates with backpressure: while this reader is full, the partitions wait.</summary>
    /// <param name="cancellationToken">Ends the enumeration.</param>
    /// <returns>The updates published after the call, in per-key order.</returns>
    public IAsyncEnumerable<ForecastUpdate<TKey>> ReadForecastsAsync(CancellationToken cancellationToken = default) => _forecasts.ReadAllAsync(cancellationToken);

    /// <summary>Reads drift-alert transitions with backpressure.</summary>
    /// <param name="cancellationToken">Ends the enumeration.</param>
    /// <returns>The transitions published after the call.</returns>
    public IAsyncEnumerable<DriftAlert<TKey>> ReadAlertsAsync(CancellationToken cancellationToken = default) => _alerts.ReadAllAsync(cancellationToken);

    /// <summary>Posts one observation without waiting.</summary>
    /// <param name="observation">The observation.</param>
    /// <returns>
    /// <see langword="true"/> if it was queued; <see langword="false"/> if its partition's queue is full under
    /// <see cref="IngestionFullMode.Wait"/>. Under <see cref="IngestionFullMode.DropNewest"/> a full queue drops it (counted,
    /// <see cref="ForecastEngineOptions{TKey}.OnDropped"/> called) and the result is <see langword="false"/>.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException">The quantity is not finite, or the time is too far ahead of the clock.</exception>
    /// <exception cref="InvalidOperationException">The engine has been completed.</exception>
    /// <remarks>O(1); no allocation. Thread-safe.</remarks>
    public bool TryPost(in Observation<TKey> observation)
    {
        Validate(observation);
        Partition<TKey> p = PartitionOf(observation.Key);
        if (p.TryWrite(new Partition<TKey>.Message(MessageKind.Observation, observation, Options.TimeProvider.GetTimestamp(), default, null, null)))
        {
            return true;
        }

        ThrowIfCompleted();
        if (Options.FullMode == IngestionFullMode.DropNewest)
        {
            Interlocked.Increment(ref _dropped);
            Options.OnDropped?.Invoke(observation);
        }

        return false;
    }

    /// <summary>Posts one observation, waiting for room under <see cref="IngestionFullMode.Wait"/>.</summary>
    /// <param name="observation">The observation.</param>
    /// <param name="cancellationToken">Stops the wait; the observation is then not posted.</param>
    /// <returns>A task that completes when the observation is queued (or dropped under <see cref="IngestionFullMode.DropNewest"/>).</returns>
    /// <exception cref="ArgumentOutOfRangeException">The quantity is not finite, or the time is too far ahead of the clock.</exception>
    /// <exception cref="InvalidOperationException">The engine has been completed.</exception>
    public ValueTask PostAsync(Observation<TKey> observation, CancellationToken cancellationToken = default)
    {
        if (TryPost(observation) || Options.FullMode == IngestionFullMode.DropNewest)
        {
            return ValueTask.CompletedTask;
        }

        return WriteSlowAsync(observation, cancellationToken);
    }

    /// <summary>Validates every observation of a batch, then posts them in order.</summary>
    /// <param name="batch">The observations.</param>
    /// <param name="cancellationToken">Stops waiting for room; observations already queued stay queued.</param>
    /// <returns>A task that completes when the whole batch is queued.</returns>
    /// <exception cref="ArgumentOutOfRangeException">An observation is invalid; nothing of the batch was posted.</exception>
    public async ValueTask PostBatchAsync(ReadOnlyMemory<Observation<TKey>> batch, CancellationToken cancellationToken = default)
    {
        for (int i = 0; i < batch.Length; i++)
        {
            try
            {
                Validate(batch.Span[i]);
            }
            catch (ArgumentOutOfRangeException ex)
            {
                throw new ArgumentOutOfRangeException(nameof(batch), $"Observation {i} of the batch is invalid; nothing was posted. {ex.Message}");
            }
        }

        for (int i = 0; i < batch.Length; i++)
        {
            await PostAsync(batch.Span[i], cancellationToken).ConfigureAwait(false);
        }
    }

    /// <summary>Closes, in every series, each period that ends at or before <paramref name="watermark"/>: the caller says no earlier events will come.</summary>
    /// <remarks>O(series + closed periods). Published a slice at a time with the same pacing as <see cref="FlushAsync"/>.</remarks>
    /// <param name="watermark">The event time every series has reached.</param>
    /// <param name="cancellationToken">Stops waiting (the command may still run).</param>
    /// <returns>A task that completes when every partition has done it.</returns>
    public Task AdvanceAsync(DateTimeOffset watermark, CancellationToken cancellationToken = default) =>
        BroadcastAsync(MessageKind.Advance, watermark, cancellationToken);

    /// <summary>Closes every open period of every series, including the one holding its latest event (end of input).</summary>
    /// <remarks>
    /// O(series). The updates are published a slice at a time and, before each next slice, each partition waits until
    /// every push subscriber has room for it (backpressure during the flush instead of drops; a subscriber that makes
    /// no room within one second is not waited for again in this flush). The outputs and their order per partition are
    /// those of <see cref="SeriesSet{TKey}.Flush"/>; while a partition flushes it takes no other queue item.
    /// </remarks>
    /// <param name="cancellationToken">Stops waiting (the command may still run).</param>
    /// <returns>A task that completes when every partition has done it.</returns>
    public Task FlushAsync(CancellationToken cancellationToken = default) =>
        BroadcastAsync(MessageKind.Flush, default, cancellationToken);

    /// <summary>
    /// A person has looked at the drift of <paramref name="key"/>: every rule's open episode is closed (published as
    /// cleared, reason rebaselined) and the rules start a fresh warm-up. The error statistics are kept.
    /// </summary>
    /// <param name="key">The series.</param>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when the series' partition has done it (nothing happens for an unknown key).</returns>
    public Task AcknowledgeAsync(TKey key, CancellationToken cancellationToken = default)
    {
        var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        var message = new Partition<TKey>.Message(MessageKind.Acknowledge, new Observation<TKey>(key, default, 0), 0, default, done, null);
        return SendAsync(PartitionOf(key), message, done, cancellationToken);
    }

    /// <summary>Stops taking posts and commands; queued observations are still processed, then subscribers are completed.</summary>
    public void Complete()
    {
        lock (_completeGate)
        {
            if (_completing)
            {
                return;
            }

            _completing = true;
        }

        _idleTimer.Dispose();
        foreach (Partition<TKey> p in _partitions)
        {
            p.CompleteQueue();
        }
    }

    /// <summary>Completes the engine, waits for the queues to drain and subscribers to be told, and releases the meter.</summary>
    /// <returns>A task that completes when the engine has stopped.</returns>
    public async ValueTask DisposeAsync()
    {
        Complete();
        await Completion.ConfigureAwait(false);
        _meter.Dispose();
    }

    internal void PublishFault(in SeriesFault<TKey> fault)
    {
        if (!_faults.IsCompleted)
        {
            _faults.TryPublish(fault);
        }
    }

    internal void CountRejected() => Interlocked.Increment(ref _rejected);

    internal bool TryReserveSeries()
    {
        // Compare-and-swap, so that two partitions racing for the last slot never both fail on a transient over-count.
        int current = Volatile.Read(ref _seriesCount);
        while (current < Options.MaxSeries)
        {
            int seen = Interlocked.CompareExchange(ref _seriesCount, current + 1, current);
            if (seen == current)
            {
                return true;
            }

            current = seen;
        }

        return false;
    }

    internal void ReleaseSeries() => Interlocked.Decrement(ref _seriesCount);

    private void OnSubscriberFault(DeliveryFault fault)
    {
        Interlocked.Increment(ref _subscriberFaults);
        PublishFault(new SeriesFault<TKey>(default!, 0, SeriesFaultKind.SubscriberFailed, $"Subscriber {fault.Subscription.Id} threw: {fault.Exception.Message}"));
    }

    private void Validate(in Observation<TKey> observation)
    {
        if (ObservationRules.FindProblem(observation, ObservationRules.LatestEventTime(Options.MaxEventTimeAhead, Options.TimeProvider)) is { } problem)
        {
            object? value = double.IsFinite(observation.Quantity) ? observation.Timestamp : observation.Quantity;
            ThrowHelper.ThrowOutOfRange(nameof(observation), value, problem + "; the observation was not posted");
        }
    }

    private Partition<TKey> PartitionOf(TKey key)
    {
        // Spread the key's hash before taking the partition, so poor hash codes still balance.
        uint hash = (uint)Options.KeyComparer.GetHashCode(key) * 0x9E3779B1u;
        return _partitions[(int)((ulong)hash * (ulong)_partitions.Length >> 32)];
    }

    // Under sustained load the queue is full for most posts, so this path is hot: pool its state machine.
    [System.Runtime.CompilerServices.AsyncMethodBuilder(typeof(System.Runtime.CompilerServices.PoolingAsyncValueTaskMethodBuilder))]
    private async ValueTask WriteSlowAsync(Observation<TKey> observation, CancellationToken cancellationToken)
    {
        Partition<TKey> p = PartitionOf(observation.Key);
        try
        {
            await p.WriteAsync(new Partition<TKey>.Message(MessageKind.Observation, observation, Options.TimeProvider.GetTimestamp(), default, null, null), cancellationToken).ConfigureAwait(false);
        }
        catch (System.Threading.Channels.ChannelClosedException)
        {
            ThrowIfCompleted();
            throw;
        }
    }

    private Task BroadcastAsync(MessageKind kind, DateTimeOffset time, CancellationToken cancellationToken)
    {
        var waits = new Task[_partitions.Length];
        for (int i = 0; i < _partitions.Length; i++)
        {
            var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            waits[i] = SendAsync(_partitions[i], new Partition<TKey>.Message(kind, default, 0, time, done, null), done, cancellationToken);
        }

        return Task.WhenAll(waits);
    }

    private async Task SendAsync(Partition<TKey> partition, Partition<TKey>.Message message, TaskCompletionSource done, CancellationToken cancellationToken)
    {
        try
        {
            await partition.WriteAsync(message, cancellationToken).ConfigureAwait(false);
        }
        catch (System.Threading.Channels.ChannelClosedException)
        {
            ThrowIfCompleted();
            throw;
        }

        await done.Task.WaitAsync(cancellationToken).ConfigureAwait(false);
    }

    private void RequestIdleCheck()
    {
        long now = Options.TimeProvider.GetTimestamp();
        foreach (Partition<TKey> p in _partitions)
        {
            // Best effort: a full queue skips this check; the next tick tries again.
            p.TryWrite(new Partition<TKey>.Message(MessageKind.IdleCheck, default, now, default, null, null));
        }
    }
}
