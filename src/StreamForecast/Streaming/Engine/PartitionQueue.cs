using System.Diagnostics;
using System.Runtime.CompilerServices;
using System.Threading.Channels;
using System.Threading.Tasks.Sources;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>
/// A partition's queue: bounded, many writers, one reader that takes items in batches.
/// </summary>
/// <typeparam name="T">The item type.</typeparam>
/// <remarks>
/// <para><b>Why not a bounded channel.</b> A channel takes its lock once per item on the reader's side, and when the
/// queue is full (the steady state when posting outruns the partition) every item the reader takes wakes one waiting
/// writer, which writes one item and waits again: a wake-up and a thread-pool hop per observation (issue 15, target 2).
/// Here the reader takes up to a whole batch under one lock, and writers that found the queue full are released
/// together once it has drained to half its capacity, so a full queue costs one wake-up per half queue, not per item.</para>
/// <para><b>Semantics kept from the channel it replaces.</b> First in, first out; <see cref="TryWrite"/> fails when the
/// queue is full or completed; <see cref="WriteAsync"/> waits for room, throws <see cref="ChannelClosedException"/>
/// once the queue is completed and <see cref="OperationCanceledException"/> when cancelled (the item is then not
/// written); <see cref="WaitToReadAsync"/> returns <see langword="false"/> once the queue is completed and empty. A
/// writer released from a wait competes for room with writers that did not wait (no first-come order among writers;
/// each writer's own items stay in its order).</para>
/// <para><b>Allocation.</b> The ring starts small and doubles up to the capacity. The reader's wait allocates nothing
/// (a reusable value-task source); a writer's wait on a full queue shares one task per full episode.</para>
/// <para><b>Thread safety.</b> <see cref="TryWrite"/>, <see cref="WriteAsync"/>, <see cref="Complete"/> and
/// <see cref="Count"/> are thread-safe; <see cref="WaitToReadAsync"/> and <see cref="Take"/> belong to the single reader.</para>
/// </remarks>
internal sealed class PartitionQueue<T> : IValueTaskSource<bool>
{
    private const int InitialSize = 64;

    private readonly Lock _lock = new();
    private readonly int _capacity;
    private readonly int _resumeAt;
    private ManualResetValueTaskSourceCore<bool> _readerSignal = new() { RunContinuationsAsynchronously = true };
    private T[] _ring;
    private int _head;
    private int _count;
    private bool _completed;
    private bool _readerWaiting;
    private TaskCompletionSource? _room;

    /// <summary>Creates an empty queue.</summary>
    /// <param name="capacity">The most items it holds, ≥ 1 (validated by the engine options).</param>
    public PartitionQueue(int capacity)
    {
        Debug.Assert(capacity >= 1, "validated by ForecastEngineOptions");
        _capacity = capacity;
        _resumeAt = capacity / 2;
        _ring = new T[Math.Min(capacity, InitialSize)];
    }

    /// <summary>How many items wait (not counting a batch the reader has taken). Thread-safe.</summary>
    public int Count
    {
        get
        {
            lock (_lock)
            {
                return _count;
            }
        }
    }

    /// <summary>Adds an item at the end unless the queue is full or completed.</summary>
    /// <param name="item">The item.</param>
    /// <returns><see langword="true"/> if the item was added.</returns>
    public bool TryWrite(in T item)
    {
        bool wake;
        lock (_lock)
        {
            if (_completed || _count == _capacity)
            {
                return false;
            }

            Add(in item);
            wake = _readerWaiting;
            _readerWaiting = false;
        }

        if (wake)
        {
            _readerSignal.SetResult(true);
        }

        return true;
    }

    /// <summary>Adds an item at the end, waiting while the queue is full.</summary>
    /// <param name="item">The item.</param>
    /// <param name="cancellationToken">Stops the wait; the item is then not written.</param>
    /// <returns>A task that completes when the item is in the queue.</returns>
    /// <exception cref="ChannelClosedException">The queue is completed.</exception>
    /// <exception cref="OperationCanceledException">The token was cancelled while waiting.</exception>
    public ValueTask WriteAsync(T item, CancellationToken cancellationToken)
    {
        if (cancellationToken.IsCancellationRequested)
        {
            return ValueTask.FromCanceled(cancellationToken);
        }

        return TryWrite(in item) ? default : WriteSlowAsync(item, cancellationToken);
    }

    /// <summary>Ends writing: writers waiting for room fail, and the reader ends once it has taken every item. Idempotent.</summary>
    public void Complete()
    {
        bool wake;
        TaskCompletionSource? room;
        lock (_lock)
        {
            _completed = true;
            wake = _readerWaiting;
            _readerWaiting = false;
            room = _room;
            _room = null;
        }

        room?.TrySetResult();
        if (wake)
        {
            _readerSignal.SetResult(true);
        }
    }

    /// <summary>
    /// Reader only: <see langword="true"/> when items wait, <see langword="false"/> when the queue is completed and
    /// empty; otherwise waits (without allocating) until a writer or <see cref="Complete"/> signals.
    /// </summary>
    /// <returns>Whether items may wait; after <see langword="true"/> call <see cref="Take"/> until it returns 0.</returns>
    public ValueTask<bool> WaitToReadAsync()
    {
        lock (_lock)
        {
            if (_count > 0)
            {
                return new ValueTask<bool>(true);
            }

            if (_completed)
            {
                return new ValueTask<bool>(false);
            }

            _readerSignal.Reset();
            _readerWaiting = true;
            return new ValueTask<bool>(this, _readerSignal.Version);
        }
    }

    /// <summary>Reader only: moves up to <c>batch.Length</c> of the oldest items into <paramref name="batch"/>.</summary>
    /// <param name="batch">Where the items go, from index 0.</param>
    /// <returns>How many items were taken (0 when the queue is empty).</returns>
    public int Take(T[] batch)
    {
        TaskCompletionSource? room = null;
        int n;
        lock (_lock)
        {
            n = RingTake.Take(_ring, ref _head, ref _count, batch);
            if (n == 0)
            {
                return 0;
            }

            if (_room is not null && _count <= _resumeAt)
            {
                room = _room;
                _room = null;
            }
        }

        // The waiting writers continue elsewhere (RunContinuationsAsynchronously), not on the reader's thread.
        room?.TrySetResult();
        return n;
    }

    bool IValueTaskSource<bool>.GetResult(short token) => _readerSignal.GetResult(token);

    ValueTaskSourceStatus IValueTaskSource<bool>.GetStatus(short token) => _readerSignal.GetStatus(token);

    void IValueTaskSource<bool>.OnCompleted(Action<object?> continuation, object? state, short token, ValueTaskSourceOnCompletedFlags flags) =>
        _readerSignal.OnCompleted(continuation, state, token, flags);

    // Under sustained load posts take this path once per half queue per writer: pool its state machine.
    [AsyncMethodBuilder(typeof(PoolingAsyncValueTaskMethodBuilder))]
    private async ValueTask WriteSlowAsync(T item, CancellationToken cancellationToken)
    {
        while (true)
        {
            Task? room = null;
            bool wake = false;
            lock (_lock)
            {
                if (_completed)
                {
                    throw new ChannelClosedException();
                }

                if (_count < _capacity)
                {
                    Add(in item);
                    wake = _readerWaiting;
                    _readerWaiting = false;
                }
                else
                {
                    _room ??= new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
                    room = _room.Task;
                }
            }

            if (room is null)
            {
                if (wake)
                {
                    _readerSignal.SetResult(true);
                }

                return;
            }

            await (cancellationToken.CanBeCanceled ? room.WaitAsync(cancellationToken) : room).ConfigureAwait(false);
        }
    }

    private void Add(in T item)
    {
        // Under the lock, with room.
        T[] ring = _ring;
        if (_count == ring.Length)
        {
            ring = Grow();
        }

        int tail = _head + _count;
        if (tail >= ring.Length)
        {
            tail -= ring.Length;
        }

        ring[tail] = item;
        _count++;
    }

    private T[] Grow()
    {
        T[] old = _ring;
        var grown = new T[(int)Math.Min((long)old.Length * 2, _capacity)];
        int first = old.Length - _head;
        Array.Copy(old, _head, grown, 0, first);
        Array.Copy(old, 0, grown, first, _head);
        _ring = grown;
        _head = 0;
        return grown;
    }
}
