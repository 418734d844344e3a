using System.Diagnostics;
using System.Runtime.CompilerServices;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>
/// One push subscriber's buffer: a bounded ring that drops its oldest item when full, written by any number of
/// publishing threads and drained by one delivery loop in batches.
/// </summary>
/// <typeparam name="T">The item type.</typeparam>
/// <remarks>
/// <para><b>Why not a channel.</b> A bounded channel takes its lock once per item on both sides and wakes its reader
/// per item when the reader keeps up (issue 15 measured drops with it at the engine's full rate; see
/// benchmarks/README.md for what this design changes). Here a write is one short lock and a copy into the ring; the
/// reader takes up to a whole batch under one lock, and a writer wakes the reader only when the reader has found the
/// ring empty and gone to sleep (an owner loop may defer even that until a run of items waits or it runs out of work,
/// see <see cref="Write"/>).</para>
/// <para><b>Capacity.</b> The ring holds at most <c>capacity</c> items; it starts small and doubles up to that, so the
/// steady state allocates nothing once it has reached its high-water mark. Items the reader has taken (at most one
/// batch) are out of the ring: they are delivered, not dropped, unless the subscription is disposed.</para>
/// <para><b>Thread safety.</b> <see cref="Write"/>, <see cref="Close"/> and <see cref="Count"/> are thread-safe;
/// <see cref="WaitToRead"/> and <see cref="Take"/> belong to the single reader, which runs on a thread of its own and
/// sleeps on a monitor: waking it allocates nothing and never waits for a thread-pool thread (the owner loops and
/// the posting code occupy pool threads without yielding while they have work).</para>
/// </remarks>
internal sealed class DeliveryBuffer<T>
{
    /// <summary>
    /// The most items a deferred write lets wait before it wakes a sleeping reader itself (<see cref="WakeAt"/>: a quarter
    /// of the capacity when that is less). 256, one reader batch: with two push subscribers on 2 cores, 64 cost 11–15× a
    /// <c>Subject&lt;T&gt;.OnNext</c> per item and 256 about 9× (benchmarks/README.md, issue 15 target 1).
    /// </summary>
    public const int DeferredWakeItems = 256;

    private const int InitialSize = 64;

    private readonly Lock _lock = new();
    private readonly int _capacity;
    // The reader sleeps on this monitor until a writer sets _woken (Monitor.Wait/Pulse: nothing to dispose).
    private readonly object _sleep = new();
    private bool _woken;
    private T[] _ring;
    private int _head;
    private int _count;
    private int _inFlight; // taken by the reader and not yet delivered: set under _lock by Take, cleared by EndBatch
    private bool _closed;
    private bool _readerWaiting;

    // A paced writer (an owner loop's sweep) waiting for room; completed by the reader's Take or by Close.
    private TaskCompletionSource? _roomWaiter;
    private int _roomWanted;

    public DeliveryBuffer(int capacity)
    {
        Debug.Assert(capacity >= 1, "validated by PublishingOptions");
        _capacity = capacity;
        _ring = new T[Math.Min(capacity, InitialSize)];
        WakeAt = Math.Max(1, Math.Min(DeferredWakeItems, capacity / 4));
    }

    /// <summary>
    /// How many items a deferred write lets wait before it wakes a sleeping reader itself: <see cref="DeferredWakeItems"/>,
    /// or a quarter of the capacity (at least 1) when that is less, so a small buffer wakes its reader long before it fills.
    /// </summary>
    public int WakeAt { get; }

    /// <summary>How many items wait in the ring (not counting a batch the reader has taken).</summary>
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

    /// <summary>
    /// How many items wait in the ring plus those of the batch the reader has taken and not yet finished
    /// (<see cref="EndBatch"/>); exact at every moment, since <see cref="Take"/> moves items from one to the other under
    /// the lock this reads them under.
    /// </summary>
    public int Pending
    {
        get
        {
            lock (_lock)
            {
                return _count + Volatile.Read(ref _inFlight);
            }
        }
    }

    /// <summary>Reader only: the batch of the last <see cref="Take"/> is finished (delivered or discarded).</summary>
    public void EndBatch() => Volatile.Write(ref _inFlight, 0);

    /// <summary>
    /// Adds an item at the end. When the ring is full, the oldest item makes room: it is returned in
    /// <paramref name="dropped"/> and the method returns <see langword="true"/>. After <see cref="Close"/> the item
    /// is ignored.
    /// </summary>
    /// <param name="item">The item.</param>
    /// <param name="dropped">The item dropped to make room, when the method returns <see langword="true"/>.</param>
    /// <param name="deferWake">
    /// Leave a sleeping reader asleep until <see cref="WakeAt"/> items wait or <see cref="WakeIfPending"/> is
    /// called: for an owner loop that calls <see cref="WakeIfPending"/> whenever it runs out of work, so that a reader
    /// that keeps up is woken once per run of items instead of once per item.
    /// </param>
    public bool Write(in T item, out T dropped, bool deferWake = false)
    {
        bool wake;
        bool drop = false;
        dropped = default!;
        lock (_lock)
        {
            if (_closed)
            {
                return false;
            }

            T[] ring = _ring;
            if (_count == ring.Length)
            {
                if (ring.Length < _capacity)
                {
                    ring = Grow();
                }
                else
                {
                    dropped = ring[_head];
                    ring[_head] = default!;
                    _head = _head + 1 == ring.Length ? 0 : _head + 1;
                    _count--;
                    drop = true;
                }
            }

            int tail = _head + _count;
            if (tail >= ring.Length)
            {
                tail -= ring.Length;
            }

            ring[tail] = item;
            _count++;
            wake = _readerWaiting && (!deferWake || _count >= WakeAt);
            _readerWaiting &= !wake;
        }

        if (wake)
        {
            WakeReader();
        }

        return drop;
    }

    /// <summary>Wakes the reader if it sleeps while items wait (after writes with a deferred wake-up).</summary>
    public void WakeIfPending()
    {
        bool wake;
        lock (_lock)
        {
            wake = _readerWaiting && _count > 0;
            _readerWaiting &= !wake;
        }

        if (wake)
        {
            WakeReader();
        }
    }

    /// <summary>
    /// Writer side, for a paced burst (an owner loop closing many periods at once): completes when at least
    /// <paramref name="room"/> items (at most the capacity) can be written without dropping, or when the buffer is closed.
    /// A reader left asleep by deferred writes is woken first.
    /// </summary>
    /// <param name="room">How many free slots to wait for, ≥ 1.</param>
    /// <returns>A completed task when there is room already (no allocation); otherwise one the reader completes.</returns>
    /// <remarks>One waiter at a time (the owner loops wait one after another on a subscriber); a second call while one
    /// waits shares its task and the larger room.</remarks>
    public Task WaitForRoomAsync(int room)
    {
        Debug.Assert(room >= 1, "a paced writer waits for at least one slot");
        Task task;
        bool wake;
        lock (_lock)
        {
            room = Math.Min(room, _capacity);
            if (_closed || _capacity - _count >= room)
            {
                return Task.CompletedTask;
            }

            _roomWanted = Math.Max(_roomWanted, room);
            _roomWaiter ??= new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            task = _roomWaiter.Task;
            wake = _readerWaiting;
            _readerWaiting = false;
        }

        if (wake)
        {
            WakeReader();
        }

        return task;
    }

    /// <summary>
    /// Ends writing. With <paramref name="discard"/> the buffered items are thrown away (an unsubscribe); otherwise the
    /// reader still takes them. Idempotent.
    /// </summary>
    public void Close(bool discard)
    {
        bool wake;
        TaskCompletionSource? waiter;
        lock (_lock)
        {
            _closed = true;
            if (discard && _count > 0)
            {
                Array.Clear(_ring);
                _head = 0;
                _count = 0;
            }

            wake = _readerWaiting;
            _readerWaiting = false;
            waiter = _roomWaiter;
            _roomWaiter = null;
            _roomWanted = 0;
        }

        waiter?.TrySetResult();
        if (wake)
        {
            WakeReader();
        }
    }

    /// <summary>Whether the reader sleeps waiting for items (for tests).</summary>
    internal bool IsReaderWaiting
    {
        get
        {
            lock (_lock)
            {
                return _readerWaiting;
            }
        }
    }

    /// <summary>
    /// Reader only: returns <see langword="true"/> when items wait, or <see langword="false"/> when the ring is empty and
    /// closed; otherwise sleeps until a writer (or <see cref="Close"/>) wakes it.
    /// </summary>
    public bool WaitToRead()
    {
        while (true)
        {
            lock (_lock)
            {
                if (_count > 0)
                {
                    return true;
                }

                if (_closed)
                {
                    return false;
                }

                // Cleared before any writer can see the flag, so a write between here and the wait still wakes it.
                lock (_sleep)
                {
                    _woken = false;
                }

                _readerWaiting = true;
            }

            lock (_sleep)
            {
                while (!_woken)
                {
                    Monitor.Wait(_sleep);
                }
            }
        }
    }

    /// <summary>
    /// Reader only: moves up to <c>batch.Length</c> of the oldest items into <paramref name="batch"/>; they count in
    /// <see cref="Pending"/> until <see cref="EndBatch"/>.
    /// </summary>
    /// <returns>How many items were taken (0 when the ring is empty).</returns>
    public int Take(T[] batch)
    {
        TaskCompletionSource? waiter = null;
        int n;
        lock (_lock)
        {
            n = RingTake.Take(_ring, ref _head, ref _count, batch);
            _inFlight = n; // in the same lock as the count, so Pending never misses a batch between ring and reader
            if (n == 0)
            {
                return 0;
            }

            if (_roomWaiter is not null && _capacity - _count >= _roomWanted)
            {
                waiter = _roomWaiter;
                _roomWaiter = null;
                _roomWanted = 0;
            }
        }

        // Outside the lock: the waiter's continuation runs elsewhere (RunContinuationsAsynchronously) either way.
        waiter?.TrySetResult();
        return n;
    }

    private void WakeReader()
    {
        lock (_sleep)
        {
            _woken = true;
            Monitor.Pulse(_sleep);
        }
    }

    private T[] Grow()
    {
        // Called under the lock with a full ring: unroll it into a larger array, oldest first.
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
