using Microsoft.Extensions.Logging;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// The grain behind <see cref="ISeriesBucketGrain{TKey}"/>: a <see cref="SeriesSet{TKey}"/> (the same routing, period,
/// lateness, restatement, de-duplication, forecasting and drift code as an engine partition) run one call at a time,
/// stored through the grain storage named <see cref="ForecastClusterOptions.StorageName"/> before each acknowledgement.
/// It uses only the core library's public surface.
/// </summary>
internal sealed partial class SeriesBucketGrain<TKey> : Grain, ISeriesBucketGrain<TKey>, ISeriesSink<TKey>
    where TKey : notnull
{

    private readonly IPersistentState<BucketState<TKey>> _state;
    private readonly ForecastEngineOptions<TKey> _options;
    private readonly ISnapshotKeyCodec<TKey> _codec;
    private readonly ForecastClusterOptions _cluster;
    private readonly BucketMap<TKey> _map;
    private readonly ILogger _logger;
    private readonly List<ForecastUpdate<TKey>> _forecasts = [];
    private readonly List<DriftAlert<TKey>> _alerts = [];
    private readonly List<SeriesFault<TKey>> _faults = [];
    private readonly BucketOutputWriter<TKey> _outputWriter;
    private BucketOutput<TKey>? _lastOutput;
    private CallIdWindow _calls = null!;
    private SeriesSet<TKey> _table = null!;
    private int _bucket;
    private bool _broken;

    public SeriesBucketGrain(
        [PersistentState("bucket", ForecastClusterOptions.StorageName)] IPersistentState<BucketState<TKey>> state,
        ForecastEngineOptions<TKey> options,
        ISnapshotKeyCodec<TKey> codec,
        ForecastClusterOptions cluster,
        ILogger<SeriesBucketGrain<TKey>> logger)
    {
        _state = state;
        _options = options;
        _codec = codec;
        _cluster = cluster;
        _map = new BucketMap<TKey>(codec, cluster.BucketCount);
        _outputWriter = new BucketOutputWriter<TKey>(codec);
        _logger = logger;
    }

    public override Task OnActivateAsync(CancellationToken cancellationToken)
    {
        long bucket = this.GetPrimaryKeyLong();
        if (bucket < 0 || bucket >= _cluster.BucketCount)
        {
            throw new InvalidOperationException($"Bucket {bucket} does not exist: this cluster has buckets 0 to {_cluster.BucketCount - 1} (ForecastClusterOptions.BucketCount).");
        }

        _bucket = (int)bucket;
        _table = new SeriesSet<TKey>(_options);
        BucketState<TKey> stored = _state.State;
        if (stored.Series is { } bytes)
        {
            ReadSeries(bytes);
        }

        _calls = new CallIdWindow(_cluster.RememberedCommands);
        foreach (AppliedCall call in stored.Applied ?? [])
        {
            _calls.Add(call.Id, call.Sequence); // stored by an earlier version; written in the compact form from now on
        }

        if (stored.CallIds is { } ids)
        {
            try
            {
                _calls.Load(ids, stored.CallIdCount, stored.CallIdNext);
            }
            catch (InvalidDataException ex)
            {
                throw new InvalidDataException($"Bucket {bucket}'s stored call ids cannot be loaded: " + ex.Message, ex);
            }
        }

        StoreCallIds();

        _table.RestoreCounters(stored.Counters);
        LoadLastOutput();

        if (_options.IdleCheckInterval > TimeSpan.Zero && _options.IdleCheckInterval != Timeout.InfiniteTimeSpan)
        {
            this.RegisterGrainTimer(IdleTickAsync, _options.IdleCheckInterval, _options.IdleCheckInterval);
        }

        LogActivated(_logger, _bucket, _table.Count, stored.Sequence);

        // The previous activation may have died between storing its last output and sending it: send it again.
        Publish();
        return Task.CompletedTask;
    }

    public Task<CallReceipt> PostAsync(Guid callId, Observation<TKey>[] batch)
    {
        ArgumentNullException.ThrowIfNull(batch);
        ThrowIfBroken();
        if (!_calls.Contains(callId))
        {
            Validate(batch);
        }

        return ApplyAsync(callId, batch, static (grain, b) => grain._table.Post(b, grain));
    }

    public Task<CallReceipt> AdvanceAsync(Guid callId, DateTimeOffset watermark) =>
        ApplyAsync(callId, watermark, static (grain, w) => grain._table.Advance(w, grain));

    public Task<CallReceipt> FlushAsync(Guid callId) =>
        ApplyAsync(callId, 0, static (grain, _) => grain._table.Flush(grain));

    public Task<CallReceipt> AcknowledgeAsync(Guid callId, TKey key)
    {
        ThrowIfBroken();
        if (!_calls.Contains(callId) && _map.BucketOf(key) != _bucket)
        {
            throw new ArgumentException($"The key belongs to bucket {_map.BucketOf(key)}, not {_bucket}: every client and silo must use the same ForecastClusterOptions.BucketCount and key codec.", nameof(key));
        }

        return ApplyAsync(callId, key, static (grain, k) => grain._table.Acknowledge(k, grain));
    }

    public async Task<long> SubscribeAsync(ISeriesBucketObserver<TKey> observer, TimeSpan lease)
    {
        ArgumentNullException.ThrowIfNull(observer);
        ThrowIfBroken();
        if (lease <= TimeSpan.Zero || lease > TimeSpan.FromDays(1))
        {
            throw new ArgumentOutOfRangeException(nameof(lease), lease, "A subscription lease lasts more than 0 and at most 1 day.");
        }

        List<BucketSubscriber<TKey>> subscribers = _state.State.Subscribers;
        subscribers.RemoveAll(s => s.Observer.Equals(observer));
        subscribers.Add(new BucketSubscriber<TKey>(observer, _options.TimeProvider.GetUtcNow() + lease));
        await StoreAsync().ConfigureAwait(true);
        return _state.State.Outputs;
    }

    public async Task UnsubscribeAsync(ISeriesBucketObserver<TKey> observer)
    {
        ArgumentNullException.ThrowIfNull(observer);
        ThrowIfBroken();
        if (_state.State.Subscribers.RemoveAll(s => s.Observer.Equals(observer)) > 0)
        {
            await StoreAsync().ConfigureAwait(true);
        }
    }

    public Task<BucketStatus> GetStatusAsync()
    {
        ThrowIfBroken();
        EngineCounters counters = _table.GetCounters();
        DateTimeOffset now = _options.TimeProvider.GetUtcNow();
        int live = _state.State.Subscribers.Count(s => s.LeaseEnds > now);
        return Task.FromResult(new BucketStatus(_bucket, RuntimeIdentity, _table.Count, _state.State.Sequence, _state.State.Repeats, counters, live));
    }

    void ISeriesSink<TKey>.Forecast(in ForecastUpdate<TKey> update) => _forecasts.Add(update);

    void ISeriesSink<TKey>.Alert(in DriftAlert<TKey> alert) => _alerts.Add(alert);

    void ISeriesSink<TKey>.Fault(in SeriesFault<TKey> fault) => _faults.Add(fault);

    private async Task<CallReceipt> ApplyAsync<TArg>(Guid callId, TArg argument, Action<SeriesBucketGrain<TKey>, TArg> apply)
    {
        ThrowIfBroken();
        if (_calls.TryGet(callId, out long appliedAs))
        {
            _state.State.Repeats++;
            LogRepeat(_logger, _bucket, callId, appliedAs);
            return new CallReceipt(_bucket, appliedAs, true, 0);
        }

        long observationsBefore = _table.GetCounters().Observations;
        try
        {
            apply(this, argument);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            // A defect inside the series code: the in-memory state may be half-changed. Never store it; reload instead.
            Break(ex);
            throw;
        }

        long sequence = _state.State.Sequence + 1;
        _calls.Add(callId, sequence);
        await CommitAsync(sequence).ConfigureAwait(true);

        return new CallReceipt(_bucket, sequence, false, _table.GetCounters().Observations - observationsBefore);
    }

    private async Task StoreAsync()
    {
        try
        {
            await _state.WriteStateAsync().ConfigureAwait(true);
        }
        catch (Exception ex)
        {
            // What is in memory is now ahead of what is stored (or another activation stored first): drop it.
            Break(ex);
            throw new BucketRestartingException("The bucket could not store its state; the call was not acknowledged. Retry it with the same id. " + ex.Message, ex);
        }
    }

    /// <summary>Moves the collected output, if any, into the state as the next numbered output (stored with the state).</summary>
    private bool TakeOutput(long sequence)
    {
        if (_forecasts.Count == 0 && _alerts.Count == 0 && _faults.Count == 0)
        {
            return false;
        }

        BucketState<TKey> state = _state.State;
        state.Outputs++;

        // Stored only for re-sending after a silo dies, so only when someone listens: a subscriber that comes later
        // starts counting after this number (SubscribeAsync's answer) and never asks for it.
        _lastOutput = HasLiveSubscriber()
            ? new BucketOutput<TKey>(_bucket, state.Outputs, sequence, [.. _forecasts], [.. _alerts], [.. _faults])
            : null;
        state.LastOutputData = _lastOutput is null ? null : _outputWriter.Write(_lastOutput);
        state.LastOutput = null;
        _forecasts.Clear();
        _alerts.Clear();
        _faults.Clear();
        return true;
    }

    /// <summary>Sends the newest stored output to every live subscriber (one-way; receivers drop numbers they have seen).</summary>
    private void Publish()
    {
        if (_lastOutput is not { } output)
        {
            return;
        }

        DateTimeOffset now = _options.TimeProvider.GetUtcNow();
        foreach (BucketSubscriber<TKey> s in _state.State.Subscribers)
        {
            if (s.LeaseEnds <= now)
            {
                continue;
            }

            try
            {
                _ = s.Observer.OnOutputAsync(output);
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                LogSubscriberFailed(_logger, ex, _bucket);
            }
        }

        // Expired leases go with the next stored write.
        _state.State.Subscribers.RemoveAll(s => s.LeaseEnds <= now);
    }

    private async Task IdleTickAsync()
    {
        if (_broken || !_table.HasIdleSeries)
        {
            return;
        }

        EngineCounters before = _table.GetCounters();
        try
        {
            _table.CheckIdle(this);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            Break(ex);
            return;
        }

        EngineCounters after = _table.GetCounters();
        if (after.PeriodsClosed != before.PeriodsClosed || after.Evictions != before.Evictions)
        {
            try
            {
                await CommitAsync(_state.State.Sequence + 1).ConfigureAwait(true);
            }
            catch (BucketRestartingException)
            {
                // Logged when the bucket broke; the next activation reloads the stored state.
            }
        }
    }

    /// <summary>Stores the series, counters and output of change number <paramref name="sequence"/>, then sends the output.</summary>
    private async Task CommitAsync(long sequence)
    {
        BucketState<TKey> state = _state.State;
        state.Sequence = sequence;
        state.Series = WriteSeries();
        state.Counters = _table.GetCounters();
        StoreCallIds();
        bool hasOutput = TakeOutput(sequence);
        await StoreAsync().ConfigureAwait(true);
        if (hasOutput)
        {
            Publish();
        }
    }

    /// <summary>Points the state at the call-id window's stored form (the ring is updated in place, and replaced when it grows).</summary>
    private void StoreCallIds()
    {
        BucketState<TKey> state = _state.State;
        state.Applied = null;
        state.CallIds = _calls.Count == 0 ? null : _calls.Ring;
        state.CallIdCount = _calls.Count;
        state.CallIdNext = _calls.Next;
    }

    private bool HasLiveSubscriber()
    {
        DateTimeOffset now = _options.TimeProvider.GetUtcNow();
        foreach (BucketSubscriber<TKey> s in _state.State.Subscribers)
        {
            if (s.LeaseEnds > now)
            {
                return true;
            }
        }

        return false;
    }

    private void Validate(Observation<TKey>[] batch)
    {
        DateTimeOffset? latest = ObservationRules.LatestEventTime(_options.MaxEventTimeAhead, _options.TimeProvider);
        for (int i = 0; i < batch.Length; i++)
        {
            if (ObservationRules.FindProblem(batch[i], latest) is { } problem)
            {
                throw new ArgumentOutOfRangeException(nameof(batch), $"Observation {i} of the batch is invalid ({problem}); nothing was applied.");
            }

            int home = _map.BucketOf(batch[i].Key);
            if (home != _bucket)
            {
                throw new ArgumentException($"Observation {i} of the batch belongs to bucket {home}, not {_bucket}: every client and silo must use the same ForecastClusterOptions.BucketCount and key codec. Nothing was applied.", nameof(batch));
            }
        }
    }

    private void ThrowIfBroken()
    {
        if (_broken)
        {
            throw new BucketRestartingException();
        }
    }

    private void Break(Exception cause)
    {
        _broken = true;
        LogBroken(_logger, cause, _bucket);
        DeactivateOnIdle();
    }

    [LoggerMessage(Level = LogLevel.Debug, Message = "Bucket {Bucket} activated with {Series} series after {Sequence} applied calls")]
    private static partial void LogActivated(ILogger logger, int bucket, int series, long sequence);

    [LoggerMessage(Level = LogLevel.Information, Message = "Bucket {Bucket} ignored call {CallId}: already applied as call {Sequence}")]
    private static partial void LogRepeat(ILogger logger, int bucket, Guid callId, long sequence);

    [LoggerMessage(Level = LogLevel.Warning, Message = "Bucket {Bucket} could not notify a subscriber")]
    private static partial void LogSubscriberFailed(ILogger logger, Exception exception, int bucket);

    [LoggerMessage(Level = LogLevel.Error, Message = "Bucket {Bucket} dropped its in-memory state after a failure and will reload the stored state")]
    private static partial void LogBroken(ILogger logger, Exception exception, int bucket);
}
