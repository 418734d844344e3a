namespace StreamForecast.Streaming;

/// <summary>
/// One push subscriber's connection to a stream of results: its delivery counters, the task of its delivery loop,
/// and <see cref="Dispose"/> to unsubscribe.
/// </summary>
/// <remarks>
/// <para><b>Delivery.</b> Each subscriber has its own bounded buffer and its own delivery loop, which calls the
/// observer one item at a time on a background thread of its own (never two calls at once for one observer; one
/// thread per subscription, so it never waits for a thread-pool thread), in the order the items were published by each
/// publishing thread. The loop sleeps while its buffer is empty and, woken, takes up to 256 buffered items at a time,
/// delivering them before it takes more. A slow subscriber delays only itself:
/// when its buffer is full the oldest buffered item is dropped and counted in <see cref="DroppedCount"/> (items the
/// loop has already taken are delivered, not dropped).</para>
/// <para><b>Thread safety.</b> Every member is thread-safe. The counters are read without locks and may be up to one
/// batch behind the delivery loop (<see cref="DeliveredCount"/> is added after each batch).</para>
/// </remarks>
public sealed class DeliverySubscription : IDisposable
{
    private readonly IDeliveryControl _control;
    private long _delivered;
    private long _dropped;
    private long _faults;

    internal DeliverySubscription(long id, IDeliveryControl control)
    {
        Id = id;
        _control = control;
    }

    /// <summary>A number that identifies this subscription within its publisher (1, 2, 3… in subscription order).</summary>
    public long Id { get; }

    /// <summary>How many items the observer's <see cref="IObserver{T}.OnNext"/> accepted without throwing.</summary>
    public long DeliveredCount => Interlocked.Read(ref _delivered);

    /// <summary>
    /// How many items were dropped because this subscriber's buffer was full (the oldest buffered item makes room for
    /// the newest). Each one was also reported to the publisher's dropped-item callback.
    /// </summary>
    public long DroppedCount => Interlocked.Read(ref _dropped);

    /// <summary>How many times one of the observer's methods threw (each is also reported to the fault callback).</summary>
    public long FaultCount => Interlocked.Read(ref _faults);

    /// <summary>How many items wait in this subscriber's buffer (not counting a batch its loop has taken). O(1); takes the buffer's lock briefly.</summary>
    public int BufferedCount => _control.BufferedCount;

    /// <summary>
    /// How many items this subscriber has been given and not yet had delivered: those in its buffer plus those of the
    /// batch its delivery loop is working through (the item whose <see cref="IObserver{T}.OnNext"/> is running included).
    /// The backlog a monitor should watch. Exact: the loop takes a batch from the buffer and counts it here in one step
    /// under the buffer's lock, and a finished batch leaves this count just before <see cref="DeliveredCount"/> takes it
    /// in (so for a moment an item may be in neither). O(1); takes the buffer's lock briefly.
    /// </summary>
    public int PendingCount => _control.PendingCount;

    /// <summary>
    /// Completes when this subscriber's delivery loop has ended: after the publisher completed and the loop delivered
    /// the buffered items and the final notification, or soon after <see cref="Dispose"/>. Never faults.
    /// </summary>
    public Task Completion => _control.Completion;

    /// <summary>
    /// Unsubscribes. Never blocks, so it may be called from inside the observer's own <see cref="IObserver{T}.OnNext"/>.
    /// </summary>
    /// <remarks>
    /// Guarantees once it returns: no new item enters this subscriber's buffer; items still buffered are discarded
    /// (not counted as dropped); the observer gets neither <see cref="IObserver{T}.OnCompleted"/> nor
    /// <see cref="IObserver{T}.OnError"/>; and at most one <see cref="IObserver{T}.OnNext"/> call may still begin,
    /// one the delivery loop had already committed to (plus any call already running). Await
    /// <see cref="Completion"/> to know that no further call can happen. Idempotent.
    /// </remarks>
    public void Dispose() => _control.Stop();

    internal void CountDelivered(int count) => Interlocked.Add(ref _delivered, count);

    internal void CountDropped() => Interlocked.Increment(ref _dropped);

    internal void CountFault() => Interlocked.Increment(ref _faults);
}

/// <summary>What a <see cref="DeliverySubscription"/> needs from the generic delivery loop behind it.</summary>
internal interface IDeliveryControl
{
    int BufferedCount { get; }

    int PendingCount { get; }

    Task Completion { get; }

    void Stop();
}
