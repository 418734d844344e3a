using System.Globalization;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using StreamForecast.Alerts;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// Runs a <see cref="ForecastEngine{TKey}"/> for the host's lifetime: restores it from the newest usable checkpoint on
/// start, takes periodic checkpoints, logs alert transitions and faults, and on stop takes a last checkpoint and lets
/// the engine drain.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Start.</b> A store that holds checkpoints, none usable, or one that does not fit the configured series
/// options fails the host's start (an <see cref="InvalidDataException"/> with the reasons) rather than silently
/// starting empty and losing state.</para>
/// <para><b>Input log.</b> When one is configured (<see cref="StreamForecastOptions{TKey}.InputLog"/>), the start
/// restores the newest checkpoint, then replays the log from the checkpoint's position into the engine, and only then
/// hands the engine out: an observation acknowledged before a crash is in the engine before anything is served. A log
/// that no longer holds the checkpoint's position (truncated past it) or ends before it (another file) fails the start
/// with an <see cref="InvalidDataException"/> saying which positions are missing. After each checkpoint the log is
/// truncated before the oldest of the last <see cref="StreamForecastCheckpointOptions.RetainCount"/> checkpoint
/// positions this host saved or restored, so falling back to an older checkpoint still finds its input.</para>
/// <para><b>Stop.</b> Producers registered after this service are stopped before it. It stops taking posts through the
/// input log and waits until everything queued there is logged and posted, takes the on-stop checkpoint (queued behind
/// everything posted, so it covers it), completes the engine and waits for the queues to drain and subscribers to be
/// told, within the host's shutdown timeout.</para>
/// <para>Registered by <see cref="StreamForecastServiceCollectionExtensions.AddStreamForecast{TKey}"/>. Thread-safe.</para>
/// </remarks>
internal sealed partial class ForecastEngineService<TKey> : BackgroundService
    where TKey : notnull
{
    private readonly StreamForecastOptions<TKey> _options;
    private readonly HostedForecastEngine<TKey> _handle;
    private readonly IServiceProvider _services;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly SemaphoreSlim _checkpointGate = new(1, 1);
    private readonly SemaphoreSlim _postGate = new(1, 1);
    private readonly Queue<long> _checkpointPositions = new();
    private ForecastEngine<TKey>? _engine;
    private ICheckpointStore? _store;
    private ISnapshotKeyCodec<TKey>? _codec;
    private IDisposable? _alertLog;
    private IDisposable? _faultLog;
    private PeriodicTimer? _timer;
    private IInputLog? _log;
    private InputLogWriter<TKey>? _writer;

    /// <summary>Creates the service (the host does this).</summary>
    /// <param name="options">The validated settings.</param>
    /// <param name="handle">The application's handle, completed when the engine starts.</param>
    /// <param name="services">Used to create a custom checkpoint store.</param>
    /// <param name="time">The host's clock.</param>
    /// <param name="logger">Where logs go.</param>
    public ForecastEngineService(
        IOptions<StreamForecastOptions<TKey>> options,
        HostedForecastEngine<TKey> handle,
        IServiceProvider services,
        TimeProvider time,
        ILogger<ForecastEngineService<TKey>> logger)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options.Value;
        _handle = handle ?? throw new ArgumentNullException(nameof(handle));
        _services = services ?? throw new ArgumentNullException(nameof(services));
        _time = time ?? throw new ArgumentNullException(nameof(time));
        _logger = logger ?? throw new ArgumentNullException(nameof(logger));
    }

    /// <summary>Restores or creates the engine, then starts the periodic checkpoints.</summary>
    /// <param name="cancellationToken">Cancels the start.</param>
    /// <returns>A task that completes when the engine runs.</returns>
    /// <exception cref="InvalidDataException">The stored checkpoints cannot be used (the message says why).</exception>
    public override async Task StartAsync(CancellationToken cancellationToken)
    {
        try
        {
            await StartEngineAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (Exception ex)
        {
            LogStartFailed(_logger, ex);
            _handle.SetStartFailed(ex);
            if (_engine is null && _log is not null)
            {
                await _log.DisposeAsync().ConfigureAwait(false);
                _log = null;
            }

            throw;
        }

        // Created here, not in ExecuteAsync (which may start later on another thread), so the first interval counts from the start.
        _timer = _store is null ? null : new PeriodicTimer(_options.Checkpoints.Interval, _time);
        await base.StartAsync(cancellationToken).ConfigureAwait(false);
    }

    /// <summary>Stops the periodic checkpoints, takes the on-stop checkpoint, and drains the engine.</summary>
    /// <param name="cancellationToken">Signals that the host's shutdown timeout has passed: stop waiting for the drain.</param>
    /// <returns>A task that completes when the engine has drained or the timeout passed.</returns>
    public override async Task StopAsync(CancellationToken cancellationToken)
    {
        await base.StopAsync(cancellationToken).ConfigureAwait(false);
        ForecastEngine<TKey>? engine = _engine;
        if (engine is null)
        {
            return;
        }

        if (_writer is not null)
        {
            try
            {
                await _writer.CompleteAsync(cancellationToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                LogLogDrainTimedOut(_logger);
            }
        }

        if (_store is not null && _options.Checkpoints.OnStop)
        {
            try
            {
                await TakeCheckpointAsync(cancellationToken).ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is not OperationCanceledException || !cancellationToken.IsCancellationRequested)
            {
                LogCheckpointFailed(_logger, ex);
            }
        }

        engine.Complete();
        try
        {
            await engine.Completion.WaitAsync(cancellationToken).ConfigureAwait(false);
            await engine.DisposeAsync().ConfigureAwait(false);
            EngineCounters c = engine.GetCounters();
            LogDrained(_logger, c.Observations, c.PeriodsClosed, c.ActiveSeries);
        }
        catch (OperationCanceledException)
        {
            LogDrainTimedOut(_logger, engine.GetCounters().QueueDepth);
        }
        finally
        {
            _alertLog?.Dispose();
            _faultLog?.Dispose();
            if (_log is not null)
            {
                await _log.DisposeAsync().ConfigureAwait(false);
            }
        }
    }

    /// <summary>Releases the checkpoint store (when the host created it), the input log (if it was not released on stop) and the service's semaphores.</summary>
    public override void Dispose()
    {
        // Normally released at the end of StopAsync; a host disposed without stopping still closes the log's connection.
        _log?.DisposeAsync().AsTask().GetAwaiter().GetResult();

        if (_options.CheckpointStoreFactory is null)
        {
            (_store as IDisposable)?.Dispose();
        }

        _checkpointGate.Dispose();
        _postGate.Dispose();
        base.Dispose();
    }

    /// <summary>Takes a checkpoint every <see cref="StreamForecastCheckpointOptions.Interval"/> until the host stops.</summary>
    /// <param name="stoppingToken">Signals the stop.</param>
    /// <returns>The loop.</returns>
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        using PeriodicTimer? timer = _timer;
        if (timer is null)
        {
            return;
        }

        try
        {
            while (await timer.WaitForNextTickAsync(stoppingToken).ConfigureAwait(false))
            {
                try
                {
                    await TakeCheckpointAsync(stoppingToken).ConfigureAwait(false);
                }
                catch (Exception ex) when (ex is not OperationCanceledException)
                {
                    // A failed checkpoint is not fatal: the previous one still stands and the next tick tries again.
                    LogCheckpointFailed(_logger, ex);
                }
            }
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // Stopping.
        }
    }

    private async Task StartEngineAsync(CancellationToken cancellationToken)
    {
        ForecastEngineOptions<TKey> engineOptions = _options.ToEngineOptions(_time);
        _store = _options.CheckpointStoreFactory?.Invoke(_services)
            ?? (string.IsNullOrWhiteSpace(_options.Checkpoints.File)
                ? null
                : new SqliteCheckpointStore(_options.Checkpoints.File, new SqliteCheckpointStoreOptions(_options.Checkpoints.RetainCount)));
        EngineStart start;
        ForecastEngine<TKey> engine;
        if (_store is null)
        {
            engine = new ForecastEngine<TKey>(engineOptions);
            start = new EngineStart(0, null, 0, []);
            LogStartedWithoutCheckpoints(_logger);
        }
        else
        {
            _codec = _options.KeyCodec ?? (SnapshotKeyCodecs.TryGetBuiltIn(out ISnapshotKeyCodec<TKey>? builtIn)
                ? builtIn
                : throw new InvalidOperationException($"No snapshot key codec for {typeof(TKey).Name}: set StreamForecastOptions.KeyCodec."));
            Checkpoint? checkpoint = await _store.LoadLatestAsync(cancellationToken).ConfigureAwait(false);
            if (checkpoint is null)
            {
                engine = new ForecastEngine<TKey>(engineOptions);
                start = new EngineStart(0, null, 0, []);
                LogStartedEmpty(_logger);
            }
            else
            {
                foreach (CheckpointRejection rejection in checkpoint.Rejected)
                {
                    LogCheckpointSkipped(_logger, rejection.Location, rejection.Reason);
                }

                using var stream = new MemoryStream(checkpoint.Snapshot.ToArray(), writable: false);
                try
                {
                    (engine, _) = await ForecastEngine.RestoreAsync(stream, engineOptions, _codec, cancellationToken).ConfigureAwait(false);
                }
                catch (InvalidDataException ex)
                {
                    throw new InvalidDataException(
                        $"The checkpoint at '{checkpoint.Location}' cannot be restored with the configured options: {ex.Message} " +
                        "If the series options changed on purpose, move the checkpoint file away to start empty.", ex);
                }

                start = new EngineStart(checkpoint.InputPosition, checkpoint.Location, engine.SeriesCount, checkpoint.Rejected);
                LogRestored(_logger, engine.SeriesCount, checkpoint.Location, checkpoint.InputPosition);
            }
        }

        _alertLog = engine.Alerts.Subscribe(new AlertLogger(this));
        _faultLog = engine.Faults.Subscribe(new FaultLogger(this));
        long posted = start.ReplayFrom;
        if (_options.HasInputLog)
        {
            try
            {
                (start, posted) = await ReplayInputLogAsync(engine, start, cancellationToken).ConfigureAwait(false);
            }
            catch
            {
                _alertLog.Dispose();
                _faultLog.Dispose();
                await engine.DisposeAsync().ConfigureAwait(false);
                throw;
            }

            _writer = new InputLogWriter<TKey>(
                _log!, new ObservationRecordCodec<TKey>(_codec!), engine, posted, _options.InputLog.MaxPendingPosts, _postGate, _handle.SetLogPosition, _logger);
            _checkpointPositions.Enqueue(start.ReplayFrom);
        }

        _engine = engine;
        _handle.SetStarted(engine, start, posted, _store is null ? null : TakeCheckpointAsync, _writer);
    }

    private async Task<(EngineStart Start, long End)> ReplayInputLogAsync(ForecastEngine<TKey> engine, EngineStart start, CancellationToken cancellationToken)
    {
        StreamForecastInputLogOptions settings = _options.InputLog;
        _log = _options.InputLogFactory?.Invoke(_services)
            ?? new SqliteInputLog(
                string.IsNullOrWhiteSpace(settings.File) ? _options.Checkpoints.File! : settings.File,
                new SqliteInputLogOptions(settings.StreamName ?? string.Empty));
        long from = start.ReplayFrom;
        string source = start.CheckpointLocation ?? "no checkpoint (a first start)";
        InputLogRange range = await _log.GetRangeAsync(cancellationToken).ConfigureAwait(false);
        if (from < range.Start)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"The input log holds positions {range.Start} to {range.End} (exclusive), but the engine restored from {source} needs the input from position {from}: positions {from} to {range.Start - 1} were truncated (was a newer checkpoint skipped as damaged, or the checkpoints deleted?). Those observations cannot be replayed. Restore the checkpoint file from a copy, or move the checkpoint and log files away to start empty."));
        }

        if (from > range.End)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"The engine restored from {source} accounts for the input up to position {from}, but the input log ends at position {range.End}: it is not the log the checkpoint was taken with (a replaced or older file?). New observations would get positions the checkpoint claims to hold. Use the matching log, or move both away to start empty."));
        }

        var codec = new ObservationRecordCodec<TKey>(_codec!);
        long replayed = 0, refused = 0, end = from;
        await foreach (InputLogRecord record in _log.ReadAsync(from, cancellationToken).ConfigureAwait(false))
        {
            Observation<TKey> observation;
            try
            {
                observation = codec.Decode(record.Payload.Span);
            }
            catch (InvalidDataException ex)
            {
                throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"The input log record at position {record.Position} cannot be read: {ex.Message}"), ex);
            }

            try
            {
                await engine.PostAsync(observation, cancellationToken).ConfigureAwait(false);
            }
            catch (ArgumentOutOfRangeException ex)
            {
                refused++;
                LogReplayRefused(_logger, record.Position, ex.Message);
            }

            replayed++;
            end = record.Position + 1;
        }

        end = Math.Max(end, range.End);
        LogReplayed(_logger, replayed, from, end, refused);
        return (start with { LogRecordsReplayed = replayed, LogRecordsRefused = refused }, end);
    }

    private async Task<CheckpointRecord> TakeCheckpointAsync(CancellationToken cancellationToken)
    {
        ForecastEngine<TKey> engine = _engine!;
        await _checkpointGate.WaitAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            // Read the mark before queueing the snapshot: everything posted before the mark is queued ahead of it. The
            // input log's writer posts a whole group and moves the mark under the post gate, so with a log the snapshot
            // holds exactly the observations before the mark (posting pauses for the snapshot, not for the save).
            long position;
            using var buffer = new MemoryStream();
            await _postGate.WaitAsync(cancellationToken).ConfigureAwait(false);
            try
            {
                position = _handle.PostedPosition;
                await engine.SnapshotAsync(buffer, _codec!, position, cancellationToken).ConfigureAwait(false);
            }
            finally
            {
                _postGate.Release();
            }

            await _store!.SaveAsync(buffer.GetBuffer().AsMemory(0, (int)buffer.Length), position, cancellationToken).ConfigureAwait(false);
            var record = new CheckpointRecord(position, _time.GetUtcNow(), buffer.Length);
            _handle.SetCheckpoint(record);
            LogCheckpointSaved(_logger, position, buffer.Length, engine.SeriesCount);
            if (_log is not null)
            {
                await TruncateInputLogAsync(position, cancellationToken).ConfigureAwait(false);
            }

            return record;
        }
        finally
        {
            _checkpointGate.Release();
        }
    }
}
