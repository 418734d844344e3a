using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// The application's handle on the engine the host runs: the engine once started, where the application's input
/// should be replayed from after a restore, the input position to record with each checkpoint, and an on-demand
/// checkpoint. Registered as a singleton by <see cref="StreamForecastServiceCollectionExtensions.AddStreamForecast{TKey}"/>.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Input positions.</b> A checkpoint stores the engine's state with a position in the application's input
/// (a log offset, a message sequence number, a count of events read). After posting the observations before position
/// <c>p</c>, call <see cref="MarkPosted"/>(<c>p</c>); each checkpoint records the position marked when it was queued,
/// and every observation posted before that mark is in it. After a restart, replay the input from
/// <see cref="Start"/>'s <see cref="EngineStart.ReplayFrom"/>: a crash loses at most the observations since the last
/// checkpoint's position, and nothing is lost if the input can be replayed from there. Observations posted after the
/// mark while a checkpoint is queued may be in it too and are then replayed twice; give observations event ids and
/// the engine ignores the repeats.</para>
/// <para><b>Thread safety.</b> Every member is thread-safe.</para>
/// </remarks>
public sealed class HostedForecastEngine<TKey>
    where TKey : notnull
{
    private readonly TaskCompletionSource<ForecastEngine<TKey>> _started = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private ForecastEngine<TKey>? _engine;
    private long _posted;
    private EngineStart? _start;
    private CheckpointRecord? _lastCheckpoint;
    private Func<CancellationToken, Task<CheckpointRecord>>? _checkpoint;

    /// <summary>Whether the host has started the engine.</summary>
    public bool IsStarted => _started.Task.IsCompletedSuccessfully;

    /// <summary>The running engine.</summary>
    /// <exception cref="InvalidOperationException">The host has not started the engine yet (see <see cref="WaitUntilStartedAsync"/>).</exception>
    public ForecastEngine<TKey> Engine => Volatile.Read(ref _engine)
        ?? throw new InvalidOperationException("The forecast engine has not been started yet: it starts with the host (IHost.StartAsync); await WaitUntilStartedAsync first.");

    /// <summary>How the engine started: restored from which checkpoint, and the input position to replay from.</summary>
    /// <exception cref="InvalidOperationException">The host has not started the engine yet.</exception>
    public EngineStart Start => Volatile.Read(ref _start) ?? throw new InvalidOperationException("The forecast engine has not been started yet.");

    /// <summary>The highest input position marked with <see cref="MarkPosted"/> (initially the replay position).</summary>
    public long PostedPosition => Interlocked.Read(ref _posted);

    /// <summary>The last checkpoint saved since the start, or null.</summary>
    public CheckpointRecord? LastCheckpoint => Volatile.Read(ref _lastCheckpoint);

    /// <summary>Waits until the host has restored and started the engine.</summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>The running engine.</returns>
    public Task<ForecastEngine<TKey>> WaitUntilStartedAsync(CancellationToken cancellationToken = default) =>
        _started.Task.WaitAsync(cancellationToken);

    /// <summary>Records that every observation before <paramref name="inputPosition"/> in the application's input has been posted.</summary>
    /// <param name="inputPosition">The position; a value below the current mark is ignored (marks only move forward).</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <remarks>O(1), lock-free, no allocation.</remarks>
    public void MarkPosted(long inputPosition)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        long current = Interlocked.Read(ref _posted);
        while (inputPosition > current)
        {
            long seen = Interlocked.CompareExchange(ref _posted, inputPosition, current);
            if (seen == current)
            {
                return;
            }

            current = seen;
        }
    }

    /// <summary>Takes a checkpoint now, at the current <see cref="PostedPosition"/>.</summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>What was saved.</returns>
    /// <exception cref="InvalidOperationException">The engine has not started, or no checkpoint store is configured.</exception>
    public Task<CheckpointRecord> CheckpointAsync(CancellationToken cancellationToken = default)
    {
        Func<CancellationToken, Task<CheckpointRecord>> checkpoint = Volatile.Read(ref _checkpoint)
            ?? throw new InvalidOperationException("No checkpoint can be taken: the engine has not started, or no checkpoint store is configured (StreamForecast:Checkpoints:File or CheckpointStoreFactory).");
        return checkpoint(cancellationToken);
    }

    internal void SetStarted(ForecastEngine<TKey> engine, EngineStart start, Func<CancellationToken, Task<CheckpointRecord>>? checkpoint)
    {
        Interlocked.Exchange(ref _posted, start.ReplayFrom);
        Volatile.Write(ref _start, start);
        Volatile.Write(ref _checkpoint, checkpoint);
        Volatile.Write(ref _engine, engine);
        _started.TrySetResult(engine);
    }

    internal void SetStartFailed(Exception error) => _started.TrySetException(error);

    internal void SetCheckpoint(CheckpointRecord record) => Volatile.Write(ref _lastCheckpoint, record);
}

/// <summary>How the host started the engine.</summary>
/// <param name="ReplayFrom">The input position to replay the application's input from (0 when no checkpoint was loaded).</param>
/// <param name="CheckpointLocation">Where the restored checkpoint was stored, or null when the engine started empty.</param>
/// <param name="SeriesRestored">How many series the checkpoint held.</param>
/// <param name="Rejected">Newer checkpoints skipped because they were damaged, newest first; empty normally.</param>
/// <remarks>An immutable value.</remarks>
public sealed record EngineStart(long ReplayFrom, string? CheckpointLocation, int SeriesRestored, IReadOnlyList<CheckpointRejection> Rejected);

/// <summary>A checkpoint saved by the host.</summary>
/// <param name="InputPosition">The input position it accounts for.</param>
/// <param name="SavedAt">When it was saved, by the host's <see cref="TimeProvider"/>.</param>
/// <param name="SnapshotBytes">The snapshot's size in bytes.</param>
/// <remarks>An immutable value.</remarks>
public sealed record CheckpointRecord(long InputPosition, DateTimeOffset SavedAt, long SnapshotBytes);
