using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// The application's handle on the engine the host runs: the engine once started, where the application's input
/// should be replayed from after a restore, the input position to record with each checkpoint, and an on-demand
/// checkpoint. Registered as a singleton by <see cref="StreamForecastServiceCollectionExtensions.AddStreamForecast{TKey}"/>.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Input that cannot be replayed</b> (HTTP posts, MQTT without retained history): turn on the host's input log
/// (<see cref="StreamForecastOptions{TKey}.InputLog"/>) and post through <see cref="PostAsync"/> and
/// <see cref="PostBatchAsync"/>. Each post is appended to the durable log first and completes only once the append is
/// durable and the observations are queued in the engine, so an observation whose post completed survives a crash:
/// the next start restores the newest checkpoint and replays the log from the checkpoint's position before the engine
/// is handed out. The host keeps the input positions itself (<see cref="MarkPosted"/> is refused).</para>
/// <para><b>Input the application can replay</b> (a log offset, a message sequence number, a count of events read),
/// without an input log: a checkpoint stores the engine's state with a position in that input. After posting the
/// observations before position <c>p</c>, call <see cref="MarkPosted"/>(<c>p</c>); each checkpoint records the position
/// marked when it was queued, and every observation posted before that mark is in it. After a restart, replay the input
/// from <see cref="Start"/>'s <see cref="EngineStart.ReplayFrom"/>: a crash loses the observations since the last
/// checkpoint's position unless the input can be replayed from there. Observations posted after the mark while a
/// checkpoint is queued may be in it too and are then replayed twice; give observations event ids and the engine
/// ignores the repeats.</para>
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
    private InputLogWriter<TKey>? _writer;

    /// <summary>Whether the host has started the engine.</summary>
    public bool IsStarted => _started.Task.IsCompletedSuccessfully;

    /// <summary>The running engine.</summary>
    /// <exception cref="InvalidOperationException">The host has not started the engine yet (see <see cref="WaitUntilStartedAsync"/>).</exception>
    public ForecastEngine<TKey> Engine => Volatile.Read(ref _engine)
        ?? throw new InvalidOperationException("The forecast engine has not been started yet: it starts with the host (IHost.StartAsync); await WaitUntilStartedAsync first.");

    /// <summary>How the engine started: restored from which checkpoint, and the input position to replay from.</summary>
    /// <exception cref="InvalidOperationException">The host has not started the engine yet.</exception>
    public EngineStart Start => Volatile.Read(ref _start) ?? throw new InvalidOperationException("The forecast engine has not been started yet.");

    /// <summary>Whether posts through <see cref="PostAsync"/> and <see cref="PostBatchAsync"/> go through a durable input log (false before the start).</summary>
    public bool HasInputLog => Volatile.Read(ref _writer) is not null;

    /// <summary>
    /// The highest input position marked with <see cref="MarkPosted"/> (initially the replay position); with an input
    /// log, the log position every observation before which has been posted to the engine.
    /// </summary>
    public long PostedPosition => Interlocked.Read(ref _posted);

    /// <summary>The last checkpoint saved since the start, or null.</summary>
    public CheckpointRecord? LastCheckpoint => Volatile.Read(ref _lastCheckpoint);

    /// <summary>Waits until the host has restored and started the engine.</summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>The running engine.</returns>
    public Task<ForecastEngine<TKey>> WaitUntilStartedAsync(CancellationToken cancellationToken = default) =>
        _started.Task.WaitAsync(cancellationToken);

    /// <summary>
    /// Posts one observation through the host. With an input log, the task completes once the observation is durable in
    /// the log and queued in the engine (several concurrent posts share one durable write); without one, once it is
    /// queued in the engine, as <see cref="ForecastEngine{TKey}.PostAsync"/>.
    /// </summary>
    /// <param name="observation">The observation.</param>
    /// <param name="cancellationToken">
    /// Stops waiting. A post cancelled after it was queued for the log may still be logged and counted: resend it with
    /// the same event id and the engine ignores the repeat.
    /// </param>
    /// <returns>A task that completes when the observation is taken (see above).</returns>
    /// <exception cref="ArgumentOutOfRangeException">The observation is invalid (a quantity that is not finite or beyond <see cref="NumericDomain.MaxMagnitude"/>, an event time too far ahead); nothing was logged or posted.</exception>
    /// <exception cref="ArgumentException">With an input log: the key codec cannot write the key, or the event id is not well-formed text (an unpaired surrogate); nothing was logged or posted.</exception>
    /// <exception cref="InvalidOperationException">The engine has not started, or the host is stopping.</exception>
    /// <exception cref="IOException">The input log could not store it; it was not accepted.</exception>
    /// <remarks>
    /// With an input log, each call allocates its pending entry and the encoded record, and waits for a share of one
    /// durable write (a disk sync for the SQLite log); use <see cref="PostBatchAsync"/> to log many observations with one
    /// entry. Thread-safe.
    /// </remarks>
    public ValueTask PostAsync(Observation<TKey> observation, CancellationToken cancellationToken = default)
    {
        InputLogWriter<TKey>? writer = Volatile.Read(ref _writer);
        return writer is null ? Engine.PostAsync(observation, cancellationToken) : writer.PostAsync([observation], cancellationToken);
    }

    /// <summary>
    /// Posts a batch through the host: every observation is checked first (one invalid observation posts nothing); with
    /// an input log the batch is logged as one unit and the task completes once it is durable and queued in the engine;
    /// without one, as <see cref="ForecastEngine{TKey}.PostBatchAsync"/>.
    /// </summary>
    /// <param name="batch">The observations, in order (copied).</param>
    /// <param name="cancellationToken">Stops waiting (see <see cref="PostAsync"/>).</param>
    /// <returns>A task that completes when the whole batch is taken.</returns>
    /// <exception cref="ArgumentOutOfRangeException">An observation is invalid; nothing of the batch was logged or posted.</exception>
    /// <exception cref="ArgumentException">With an input log: a key or event id cannot be written to the log; nothing of the batch was logged or posted.</exception>
    /// <exception cref="InvalidOperationException">The engine has not started, or the host is stopping.</exception>
    /// <exception cref="IOException">The input log could not store the batch; none of it was accepted.</exception>
    /// <remarks>Thread-safe. An empty batch completes at once.</remarks>
    public ValueTask PostBatchAsync(ReadOnlyMemory<Observation<TKey>> batch, CancellationToken cancellationToken = default)
    {
        InputLogWriter<TKey>? writer = Volatile.Read(ref _writer);
        if (writer is null)
        {
            return Engine.PostBatchAsync(batch, cancellationToken);
        }

        return batch.IsEmpty ? ValueTask.CompletedTask : writer.PostAsync(batch.ToArray(), cancellationToken);
    }

    /// <summary>Records that every observation before <paramref name="inputPosition"/> in the application's input has been posted.</summary>
    /// <param name="inputPosition">The position; a value below the current mark is ignored (marks only move forward).</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <exception cref="InvalidOperationException">An input log is on: the host keeps the positions itself.</exception>
    /// <remarks>O(1), lock-free, no allocation.</remarks>
    public void MarkPosted(long inputPosition)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        if (Volatile.Read(ref _writer) is not null)
        {
            throw new InvalidOperationException("An input log is on: the host records the input positions itself (post through HostedForecastEngine.PostAsync); MarkPosted is for input the application replays.");
        }

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

    internal void SetStarted(ForecastEngine<TKey> engine, EngineStart start, long postedPosition, Func<CancellationToken, Task<CheckpointRecord>>? checkpoint, InputLogWriter<TKey>? writer)
    {
        Interlocked.Exchange(ref _posted, postedPosition);
        Volatile.Write(ref _writer, writer);
        Volatile.Write(ref _start, start);
        Volatile.Write(ref _checkpoint, checkpoint);
        Volatile.Write(ref _engine, engine);
        _started.TrySetResult(engine);
    }

    internal void SetStartFailed(Exception error) => _started.TrySetException(error);

    internal void SetCheckpoint(CheckpointRecord record) => Volatile.Write(ref _lastCheckpoint, record);

    /// <summary>The input log writer moves the mark past a group it has posted (positions only grow).</summary>
    internal void SetLogPosition(long position) => Interlocked.Exchange(ref _posted, position);
}
