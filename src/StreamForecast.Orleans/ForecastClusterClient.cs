using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// The cluster's counterpart of <see cref="ForecastEngine{TKey}"/>: the same posting API and the same observables, with
/// the series held by bucket grains across the silos of an Orleans cluster. Create one with <see cref="ForecastCluster.ConnectAsync{TKey}"/>.
/// </summary>
/// <typeparam name="TKey">The series key type; Orleans must be able to serialize it.</typeparam>
/// <remarks>
/// <para><b>Acceptance.</b> A post completes when every bucket it touched has applied it and stored the result. A call
/// that fails for a transient reason (a silo died, a bucket is moving, a timeout) is retried with the same id, so a
/// retry after a lost acknowledgement is recognised and not applied twice. An invalid observation (no key, a quantity
/// that is not finite, and, when the client was given the engine options, an event time too far ahead) throws before
/// anything is sent. A post that fails after retries may have been applied by some buckets and not others: post it
/// again (buckets that applied their part count the observations again unless they carry event ids and the series
/// options keep a duplicate window).</para>
/// <para><b>Order.</b> Per key, observations are applied in the order of the posts. One batch is split by bucket; the
/// buckets are called in parallel, each bucket's part in order.</para>
/// <para><b>Output.</b> Each bucket sends the output of every applied call to this client's subscription (a grain
/// observer, renewed every third of <see cref="ForecastClusterOptions.SubscriptionLease"/>) after storing it. Output is
/// numbered per bucket and delivered in number order: an output that arrives early waits for the gap before it (up to
/// <see cref="ForecastClusterOptions.OutputReorderWindow"/>), a repeat is dropped, and a gap that is never filled
/// (output lost when a silo died before sending it, or while the subscription was lapsed) is counted in
/// <see cref="MissedOutputs"/>; the forecasts of later periods carry the full error statistics, so state is never lost,
/// only those events.</para>
/// <para><b>Thread safety.</b> Every public member is thread-safe.</para>
/// <para>Forecasts and alerts are advisory and need a person's judgement before stock or staff are changed.</para>
/// </remarks>
public sealed partial class ForecastClusterClient<TKey> : IForecastEngine<TKey>, ISeriesBucketObserver<TKey>
    where TKey : notnull
{
    private readonly IGrainFactory _grains;
    private readonly BucketMap<TKey> _map;
    private readonly TimeProvider _time;
    private readonly TimeSpan _maxEventTimeAhead;
    private readonly SeriesPublisher<TKey> _outputs;
    private const int MaxWaitingOutputs = 4096;

    private readonly long[] _lastNumber;
    private readonly SortedList<long, (BucketOutput<TKey> Output, long Arrived)>?[] _waiting;
    private ITimer? _gapTimer;
    private readonly object _outputGate = new();
    private readonly CancellationTokenSource _stopping = new();
    private ISeriesBucketObserver<TKey>? _reference;
    private Task _renewal = Task.CompletedTask;
    private long _missedOutputs;
    private long _repeatedOutputs;
    private long _retries;
    private int _disposed;

    internal ForecastClusterClient(IGrainFactory grains, ForecastClusterOptions options, ISnapshotKeyCodec<TKey> keyCodec, TimeProvider time, TimeSpan maxEventTimeAhead, PublishingOptions? publishing)
    {
        _grains = grains;
        _maxEventTimeAhead = maxEventTimeAhead;
        Options = options;
        _map = new BucketMap<TKey>(keyCodec, options.BucketCount);
        _time = time;
        // A subscriber that throws is reported on Faults, as the engine does (a throwing Faults subscriber is only skipped).
        _outputs = new SeriesPublisher<TKey>(publishing);
        _lastNumber = new long[options.BucketCount];
        _waiting = new SortedList<long, (BucketOutput<TKey> Output, long Arrived)>?[options.BucketCount];
    }

    /// <summary>The cluster options this client uses (they must match the silos').</summary>
    public ForecastClusterOptions Options { get; }

    /// <inheritdoc/>
    public IObservable<ForecastUpdate<TKey>> Forecasts => _outputs.Forecasts;

    /// <inheritdoc/>
    public IObservable<DriftAlert<TKey>> Alerts => _outputs.Alerts;

    /// <inheritdoc/>
    public IObservable<SeriesFault<TKey>> Faults => _outputs.Faults;

    /// <summary>Bucket outputs this client never received (counted from gaps in each bucket's numbering).</summary>
    public long MissedOutputs => Interlocked.Read(ref _missedOutputs);

    /// <summary>Bucket outputs received twice and dropped.</summary>
    public long RepeatedOutputs => Interlocked.Read(ref _repeatedOutputs);

    /// <summary>Calls tried again after a transient failure.</summary>
    public long Retries => Interlocked.Read(ref _retries);

    /// <summary>Subscribes to every bucket and starts renewing (called once by <see cref="ForecastCluster.ConnectAsync{TKey}"/>).</summary>
    internal async Task StartAsync(CancellationToken cancellationToken)
    {
        _reference = _grains.CreateObjectReference<ISeriesBucketObserver<TKey>>(this);
        TimeSpan tick = Options.OutputReorderWindow / 2;
        _gapTimer = _time.CreateTimer(static state => ((ForecastClusterClient<TKey>)state!).SkipStaleGaps(all: false), this, tick, tick);
        await RenewAsync(first: true, cancellationToken).ConfigureAwait(false);
        _renewal = RenewLoopAsync();
    }

    /// <summary>The bucket a key belongs to.</summary>
    /// <param name="key">The key.</param>
    /// <returns>The bucket, 0 to <see cref="ForecastClusterOptions.BucketCount"/> − 1.</returns>
    public int BucketOf(TKey key) => _map.BucketOf(key);

    /// <summary>One bucket grain, for status queries.</summary>
    /// <param name="bucket">The bucket.</param>
    /// <returns>The grain reference.</returns>
    public ISeriesBucketGrain<TKey> Bucket(int bucket)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(bucket);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(bucket, Options.BucketCount);
        return _grains.GetGrain<ISeriesBucketGrain<TKey>>(bucket);
    }

    /// <inheritdoc/>
    public ValueTask PostAsync(Observation<TKey> observation, CancellationToken cancellationToken = default) =>
        PostBatchAsync(new[] { observation }, cancellationToken);

    /// <inheritdoc/>
    /// <remarks>O(batch) to validate and group; one call per bucket part, in parallel across buckets.</remarks>
    public async ValueTask PostBatchAsync(ReadOnlyMemory<Observation<TKey>> batch, CancellationToken cancellationToken = default)
    {
        ThrowIfDisposed();
        var parts = new Dictionary<int, List<Observation<TKey>>>();
        DateTimeOffset? latest = ObservationRules.LatestEventTime(_maxEventTimeAhead, _time);
        ReadOnlySpan<Observation<TKey>> span = batch.Span;
        for (int i = 0; i < span.Length; i++)
        {
            Observation<TKey> o = span[i];
            if (ObservationRules.FindProblem(o, latest) is { } problem)
            {
                throw new ArgumentOutOfRangeException(nameof(batch), $"Observation {i} of the batch is invalid ({problem}); nothing was posted.");
            }

            int bucket = _map.BucketOf(o.Key);
            if (!parts.TryGetValue(bucket, out List<Observation<TKey>>? part))
            {
                parts[bucket] = part = [];
            }

            part.Add(o);
        }

        var calls = new List<Task>(parts.Count);
        foreach ((int bucket, List<Observation<TKey>> part) in parts)
        {
            calls.Add(PostPartAsync(bucket, part, cancellationToken));
        }

        await Task.WhenAll(calls).ConfigureAwait(false);
    }

    /// <inheritdoc/>
    public Task AdvanceAsync(DateTimeOffset watermark, CancellationToken cancellationToken = default) =>
        EveryBucketAsync((grain, id) => grain.AdvanceAsync(id, watermark), cancellationToken);

    /// <inheritdoc/>
    public Task FlushAsync(CancellationToken cancellationToken = default) =>
        EveryBucketAsync((grain, id) => grain.FlushAsync(id), cancellationToken);

    /// <inheritdoc/>
    public Task AcknowledgeAsync(TKey key, CancellationToken cancellationToken = default)
    {
        ThrowIfDisposed();
        Guid id = Guid.NewGuid();
        return CallAsync(Bucket(_map.BucketOf(key)), grain => grain.AcknowledgeAsync(id, key), cancellationToken);
    }

    /// <summary>The counters of every bucket, summed (each bucket read once; the sum may straddle updates).</summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>The counters.</returns>
    /// <remarks>O(<see cref="ForecastClusterOptions.BucketCount"/>) calls.</remarks>
    public async Task<EngineCounters> GetCountersAsync(CancellationToken cancellationToken = default)
    {
        var reads = new Task<BucketStatus>[Options.BucketCount];
        for (int b = 0; b < reads.Length; b++)
        {
            ISeriesBucketGrain<TKey> grain = Bucket(b);
            reads[b] = CallAsync(grain, g => g.GetStatusAsync(), cancellationToken);
        }

        BucketStatus[] all = await Task.WhenAll(reads).ConfigureAwait(false);
        EngineCounters sum = default;
        foreach (BucketStatus s in all)
        {
            sum += s.Counters;
        }

        return sum;
    }

    /// <summary>Receives a bucket's output (called by the cluster through the observer reference).</summary>
    /// <param name="output">The output.</param>
    /// <returns>A completed task.</returns>
    /// <remarks>
    /// Outputs of one bucket are numbered 1, 2, 3, … but may arrive out of order (they can take different gateways, and
    /// a reactivated bucket sends its newest output again). They are delivered in number order: an early one waits
    /// until the gap before it is filled, for at most <see cref="ForecastClusterOptions.OutputReorderWindow"/>; a number
    /// already delivered is dropped.
    /// </remarks>
    Task ISeriesBucketObserver<TKey>.OnOutputAsync(BucketOutput<TKey> output)
    {
        if (output is null || (uint)output.Bucket >= (uint)_lastNumber.Length)
        {
            return Task.CompletedTask;
        }

        lock (_outputGate)
        {
            int b = output.Bucket;
            SortedList<long, (BucketOutput<TKey> Output, long Arrived)>? waiting = _waiting[b];
            if (output.Number <= _lastNumber[b] || (waiting is not null && waiting.ContainsKey(output.Number)))
            {
                _repeatedOutputs++;
                return Task.CompletedTask;
            }

            if (output.Number == _lastNumber[b] + 1)
            {
                Deliver(output);
                DeliverWaiting(b);
                return Task.CompletedTask;
            }

            waiting ??= _waiting[b] = [];
            waiting.Add(output.Number, (output, _time.GetTimestamp()));
            if (waiting.Count > MaxWaitingOutputs)
            {
                SkipGap(b);
            }
        }

        return Task.CompletedTask;
    }

    /// <summary>Unsubscribes from every bucket (best effort), stops renewing, and completes the observables.</summary>
    /// <returns>A task that completes when the observables' subscribers have been told.</returns>
    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        await _stopping.CancelAsync().ConfigureAwait(false);
        try
        {
            await _renewal.ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
        }

        if (_reference is not null)
        {
            var leaving = new List<Task>(Options.BucketCount);
            for (int b = 0; b < Options.BucketCount; b++)
            {
                leaving.Add(Bucket(b).UnsubscribeAsync(_reference));
            }

            try
            {
                await Task.WhenAll(leaving).WaitAsync(TimeSpan.FromSeconds(10), _time).ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                // Best effort: a subscription that could not be removed simply runs out with its lease.
            }

            _grains.DeleteObjectReference<ISeriesBucketObserver<TKey>>(_reference);
        }

        if (_gapTimer is not null)
        {
            await _gapTimer.DisposeAsync().ConfigureAwait(false);
        }

        SkipStaleGaps(all: true);
        await _outputs.CompleteAsync().ConfigureAwait(false);
        _stopping.Dispose();
    }

    private async Task PostPartAsync(int bucket, List<Observation<TKey>> part, CancellationToken cancellationToken)
    {
        ISeriesBucketGrain<TKey> grain = Bucket(bucket);
        for (int start = 0; start < part.Count; start += Options.MaxBatchSize)
        {
            Observation<TKey>[] chunk = part.GetRange(start, Math.Min(Options.MaxBatchSize, part.Count - start)).ToArray();
            Guid id = Guid.NewGuid();
            await CallAsync(grain, g => g.PostAsync(id, chunk), cancellationToken).ConfigureAwait(false);
        }
    }

    private Task EveryBucketAsync(Func<ISeriesBucketGrain<TKey>, Guid, Task<CallReceipt>> call, CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        var calls = new Task[Options.BucketCount];
        for (int b = 0; b < calls.Length; b++)
        {
            Guid id = Guid.NewGuid();
            calls[b] = CallAsync(Bucket(b), g => call(g, id), cancellationToken);
        }

        return Task.WhenAll(calls);
    }

    private async Task<T> CallAsync<T>(ISeriesBucketGrain<TKey> grain, Func<ISeriesBucketGrain<TKey>, Task<T>> call, CancellationToken cancellationToken)
    {
        TimeSpan delay = Options.RetryDelay;
        for (int attempt = 1; ; attempt++)
        {
            cancellationToken.ThrowIfCancellationRequested();
            try
            {
                return await call(grain).ConfigureAwait(false);
            }
            catch (Exception ex) when (attempt < Options.MaxAttempts && IsTransient(ex))
            {
                Interlocked.Increment(ref _retries);
            }

            await Task.Delay(delay, _time, cancellationToken).ConfigureAwait(false);
            delay = TimeSpan.FromTicks(Math.Min(delay.Ticks * 2, Options.MaxRetryDelay.Ticks));
        }
    }

    private static bool IsTransient(Exception ex) =>
        ex is not (ArgumentException or OperationCanceledException or ObjectDisposedException or NotSupportedException or InvalidDataException);

    private async Task RenewAsync(bool first, CancellationToken cancellationToken)
    {
        var calls = new Task<long>[Options.BucketCount];
        for (int b = 0; b < calls.Length; b++)
        {
            ISeriesBucketGrain<TKey> grain = Bucket(b);
            calls[b] = CallAsync(grain, g => g.SubscribeAsync(_reference!, Options.SubscriptionLease), cancellationToken);
        }

        long[] newest = await Task.WhenAll(calls).ConfigureAwait(false);
        if (!first)
        {
            // A renewal must not move the counting: outputs numbered below its answer may still be on their way here.
            return;
        }

        lock (_outputGate)
        {
            for (int b = 0; b < newest.Length; b++)
            {
                // The first subscription sets where counting starts: outputs up to this number were made before this
                // client listened (one of them may still be sent again by a reactivated bucket, and must be dropped).
                _lastNumber[b] = Math.Max(_lastNumber[b], newest[b]);
                DeliverWaiting(b);
            }
        }
    }

    private async Task RenewLoopAsync()
    {
        CancellationToken stop = _stopping.Token;
        while (!stop.IsCancellationRequested)
        {
            await Task.Delay(Options.SubscriptionLease / 3, _time, stop).ConfigureAwait(false);
            try
            {
                await RenewAsync(first: false, stop).ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is not (OperationCanceledException or OutOfMemoryException))
            {
                _outputs.Fault(new SeriesFault<TKey>(default!, 0, SeriesFaultKind.SubscriberFailed, "Renewing the cluster subscription failed; output may be missed until the next renewal: " + ex.Message));
            }
        }
    }

    private void ThrowIfDisposed()
    {
        if (Volatile.Read(ref _disposed) != 0)
        {
            throw new ObjectDisposedException(nameof(ForecastClusterClient<TKey>), "The cluster client has been disposed; it takes no more observations or commands.");
        }
    }
}
