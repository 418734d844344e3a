using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;
using System.Threading.Channels;

namespace StreamForecast.Streaming;

/// <summary>
/// Fans results out from the engine's owner loops to any number of subscribers, so that a slow or failing subscriber
/// never holds up the engine or other subscribers.
/// </summary>
/// <typeparam name="T">The item type (the engine's payloads are small <c>readonly record struct</c>s).</typeparam>
/// <remarks>
/// <para><b>Push subscribers</b> (<see cref="Subscribe(IObserver{T})"/>) each get a bounded buffer of
/// <see cref="PublishingOptions.SubscriberCapacity"/> items and their own delivery loop (a background thread each)
/// that calls the observer one item at a time. The loop sleeps only when its buffer is empty, and drains it up to 256
/// items per take (see <see cref="DeliveryBuffer{T}"/>: one short lock per published item, one per batch delivered,
/// one wake-up per idle-to-busy change). When a buffer is full the oldest item is dropped, counted on the subscription and
/// reported to the dropped-item callback. An observer's exception is caught, counted and reported to the fault
/// callback; delivery goes on for that observer and every other one. An owner loop that publishes a burst (a flush)
/// paces it with <c>WaitForPushRoomAsync</c> between slices instead of letting the buffers drop. The publisher never calls
/// <see cref="IObserver{T}.OnError"/> except after <see cref="Complete"/> with an error.</para>
/// <para><b>Pull readers</b> (<see cref="OpenReader"/>, <see cref="ReadAllAsync"/>) get backpressure instead of
/// drops: an item is published to everyone or to no one, and while any reader's buffer is full
/// <see cref="TryPublish"/> returns <see langword="false"/> and <see cref="PublishAsync"/> waits.</para>
/// <para><b>How an owner loop publishes.</b> Call <c>TryPublish(in item)</c>; it is synchronous, never waits and
/// allocates nothing in steady state. Only when it returns <see langword="false"/> (a pull reader is full) await
/// <c>PublishAsync(item, token)</c>, which waits for room and then publishes. <c>await PublishAsync(...)</c> alone
/// does the same: it completes synchronously, without allocating, whenever no reader is full. With push subscribers
/// only, <see cref="TryPublish"/> always returns <see langword="true"/>.</para>
/// <para><b>Thread safety.</b> Every member is thread-safe; several owner loops may publish at once. Items published
/// by one thread reach each subscriber in that thread's order; items from different threads interleave. The
/// publisher holds no lock while user code runs. <see cref="Complete"/> must be called after every publisher has
/// stopped: an item published concurrently with it may reach some subscribers and not others.</para>
/// <para><b>Callbacks.</b> The dropped-item callback runs on the publishing thread inside <see cref="TryPublish"/>;
/// keep it short. The fault callback runs on a delivery loop's thread (or the dropping thread). Neither should
/// throw: an exception from the dropped-item callback is reported as a fault, and one from the fault callback
/// is caught and discarded so that delivery goes on.</para>
/// </remarks>
internal sealed partial class Publisher<T> : IObservable<T>
{
    private readonly int _subscriberCapacity;
    private readonly int _readerCapacity;
    private readonly Action<DeliverySubscription, T>? _onDropped;
    private readonly Action<DeliveryFault>? _onFault;

    // Guards membership changes, completion and the running-loop count. Never held while user code runs.
    private readonly Lock _gate = new();

    // Serialises writes to pull readers so that "every reader has room" stays true while an item is written to all.
    private readonly Lock _readerWriteGate = new();
    private readonly TaskCompletionSource _completion = new(TaskCreationOptions.RunContinuationsAsynchronously);

    // Copy-on-write arrays: publishers read a snapshot without locking.
    private volatile PushSubscriber[] _subscribers = [];
    private volatile PullSubscription<T>[] _readers = [];
    private volatile bool _completed;
    private Exception? _error;
    private int _runningLoops;
    private long _lastId;

    /// <summary>Creates a publisher.</summary>
    /// <param name="options">Buffer sizes; <see cref="PublishingOptions.Default"/> when null.</param>
    /// <param name="onDropped">
    /// Called on the publishing thread for each item dropped from a full subscriber buffer, with the subscription and
    /// the dropped item. Optional; drops are counted on the subscription either way.
    /// </param>
    /// <param name="onFault">Called for each exception thrown by an observer or by <paramref name="onDropped"/>. Optional.</param>
    public Publisher(PublishingOptions? options = null, Action<DeliverySubscription, T>? onDropped = null, Action<DeliveryFault>? onFault = null)
    {
        options ??= PublishingOptions.Default;
        _subscriberCapacity = options.SubscriberCapacity;
        _readerCapacity = options.ReaderCapacity;
        _onDropped = onDropped;
        _onFault = onFault;
    }

    /// <summary>
    /// Completes once <see cref="Complete"/> has been called and every push subscriber's delivery loop has ended
    /// (drained and notified, or disposed). Pull readers are not waited for. Never faults.
    /// </summary>
    public Task Completion => _completion.Task;

    /// <summary>Whether <see cref="Complete"/> has been called.</summary>
    public bool IsCompleted => _completed;

    /// <summary>The number of attached push subscribers.</summary>
    public int SubscriberCount => _subscribers.Length;

    /// <summary>The number of attached pull readers.</summary>
    public int ReaderCount => _readers.Length;

    /// <summary>
    /// Publishes an item to every subscriber and reader, unless a pull reader is full, in which case it publishes
    /// to no one and returns <see langword="false"/>.
    /// </summary>
    /// <param name="item">The item.</param>
    /// <returns><see langword="true"/> if the item was published; <see langword="false"/> if a pull reader is full.</returns>
    /// <exception cref="InvalidOperationException"><see cref="Complete"/> has been called.</exception>
    /// <remarks>
    /// Synchronous and never waits. Cost: O(subscribers + readers) short buffer operations (per push subscriber one
    /// short lock and a copy of the item); with readers attached, one short lock shared by all publishers.
    /// Allocation-free once each buffer has grown to its high-water mark.
    /// </remarks>
    public bool TryPublish(in T item) => Publish(in item, deferWake: false);

    /// <summary><see cref="TryPublish"/> for an owner loop that calls <see cref="WakeSubscribers"/> whenever it runs out of work: a
    /// sleeping push subscriber wakes when <see cref="DeliveryBuffer{T}.DeferredWakeItems"/> items (at most a quarter of its buffer) wait or at that call.</summary>
    /// <param name="item">The item.</param>
    /// <returns>As <see cref="TryPublish"/>.</returns>
    public bool TryPublishDeferred(in T item) => Publish(in item, deferWake: true);

    /// <summary>Wakes each push subscriber asleep while items wait (see <see cref="TryPublishDeferred"/>). O(subscribers), thread-safe.</summary>
    public void WakeSubscribers()
    {
        PushSubscriber[] subscribers = _subscribers;
        for (int i = 0; i < subscribers.Length; i++)
        {
            subscribers[i].WakeIfPending();
        }
    }

    private bool Publish(in T item, bool deferWake)
    {
        if (_completed)
        {
            ThrowCompleted();
        }

        PullSubscription<T>[] readers = _readers;
        if (readers.Length != 0)
        {
            lock (_readerWriteGate)
            {
                for (int i = 0; i < readers.Length; i++)
                {
                    if (!readers[i].HasRoom && !readers[i].IsClosed)
                    {
                        return false;
                    }
                }

                // Every reader has room and only publishers add items (under this lock), so each write succeeds,
                // except into a reader detached meanwhile, which no longer wants items.
                for (int i = 0; i < readers.Length; i++)
                {
                    readers[i].Writer.TryWrite(item);
                }
            }
        }

        PushSubscriber[] subscribers = _subscribers;
        for (int i = 0; i < subscribers.Length; i++)
        {
            subscribers[i].Offer(item, deferWake);
        }

        return true;
    }

    /// <summary>Publishes an item, first waiting while any pull reader is full.</summary>
    /// <param name="item">The item.</param>
    /// <param name="cancellationToken">Stops the wait; the item is then published to no one.</param>
    /// <returns>A task that completes when the item has been published.</returns>
    /// <exception cref="InvalidOperationException"><see cref="Complete"/> has been called.</exception>
    /// <exception cref="OperationCanceledException">The token was cancelled while waiting.</exception>
    /// <remarks>
    /// Completes synchronously and allocates nothing when no reader is full (the <see cref="TryPublish"/> path).
    /// Otherwise it waits for each full reader to make room, then tries again; the item reaches everyone or no one.
    /// </remarks>
    public ValueTask PublishAsync(T item, CancellationToken cancellationToken = default)
    {
        if (TryPublish(in item))
        {
            return default;
        }

        return PublishSlowAsync(item, cancellationToken);
    }

    /// <summary>
    /// Subscribes an observer. It receives every item published from now on (less any dropped because its buffer was
    /// full), then <see cref="IObserver{T}.OnCompleted"/> (or <see cref="IObserver{T}.OnError"/>) once after
    /// <see cref="Complete"/>. Subscribing after <see cref="Complete"/> notifies completion at once, on the caller's thread.
    /// </summary>
    /// <param name="observer">The observer; called by its own delivery loop, never concurrently.</param>
    /// <returns>The subscription: counters, its delivery loop's <see cref="DeliverySubscription.Completion"/>, and Dispose.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="observer"/> is null.</exception>
    /// <remarks>Allocates the buffer and starts one background thread. Thread-safe.</remarks>
    public DeliverySubscription Subscribe(IObserver<T> observer)
    {
        ArgumentNullException.ThrowIfNull(observer);
        PushSubscriber subscriber;
        lock (_gate)
        {
            subscriber = new PushSubscriber(this, observer, ++_lastId);
            if (!_completed)
            {
                _subscribers = [.. _subscribers, subscriber];
                _runningLoops++;
                subscriber.Start();
                return subscriber.Handle;
            }
        }

        subscriber.DeliverFinalNow(_error);
        return subscriber.Handle;
    }

    /// <inheritdoc/>
    IDisposable IObservable<T>.Subscribe(IObserver<T> observer) => Subscribe(observer);

    /// <summary>
    /// Attaches a pull reader with backpressure. It receives every item published from now on, in publishing order;
    /// while its buffer is full, publishing waits. Dispose it when done. Opening a reader after <see cref="Complete"/>
    /// gives one that has already ended.
    /// </summary>
    /// <returns>The reader.</returns>
    /// <remarks>Allocates the reader's buffer. Thread-safe.</remarks>
    public PullSubscription<T> OpenReader()
    {
        lock (_gate)
        {
            var reader = new PullSubscription<T>(++_lastId, _readerCapacity, DetachReader);
            if (_completed)
            {
                reader.Complete(_error);
            }
            else
            {
                _readers = [.. _readers, reader];
            }

            return reader;
        }
    }

    /// <summary>
    /// Reads every item published from the first <c>MoveNextAsync</c> on, with backpressure, until the publisher
    /// completes or the token is cancelled. The reader is detached when the enumeration ends (including on break).
    /// </summary>
    /// <param name="cancellationToken">Ends the enumeration with <see cref="OperationCanceledException"/>.</param>
    /// <returns>The items.</returns>
    /// <remarks>The reader attaches lazily, when enumeration starts; use <see cref="OpenReader"/> to attach at a known point.</remarks>
    public async IAsyncEnumerable<T> ReadAllAsync([EnumeratorCancellation] CancellationToken cancellationToken = default)
    {
        using PullSubscription<T> reader = OpenReader();
        await foreach (T item in reader.ReadAllAsync(cancellationToken).ConfigureAwait(false))
        {
            yield return item;
        }
    }

    /// <summary>
    /// Ends the stream. Each push subscriber's loop delivers what is buffered, then calls
    /// <see cref="IObserver{T}.OnCompleted"/> once (or <see cref="IObserver{T}.OnError"/> with <paramref name="error"/>);
    /// each pull reader yields what is buffered and then ends (or throws <paramref name="error"/>).
    /// <see cref="Completion"/> completes when every delivery loop has ended. Later calls do nothing.
    /// </summary>
    /// <param name="error">Null for a normal end; otherwise the reason the stream failed, passed to every subscriber.</param>
    /// <returns><see langword="true"/> if this call completed the publisher; <see langword="false"/> if it was already complete.</returns>
    /// <remarks>Never blocks and never calls user code on the caller's thread. Call it after every publisher has stopped.</remarks>
    public bool Complete(Exception? error = null)
    {
        PushSubscriber[] subscribers;
        PullSubscription<T>[] readers;
        bool allEnded;
        lock (_gate)
        {
            if (_completed)
            {
                return false;
            }

            _error = error;
            _completed = true;
            subscribers = _subscribers;
            readers = _readers;
            _subscribers = [];
            _readers = [];
            allEnded = _runningLoops == 0;
        }

        for (int i = 0; i < subscribers.Length; i++)
        {
            subscribers[i].CloseBuffer();
        }

        for (int i = 0; i < readers.Length; i++)
        {
            readers[i].Complete(error);
        }

        if (allEnded)
        {
            _completion.TrySetResult();
        }

        return true;
    }

    private async ValueTask PublishSlowAsync(T item, CancellationToken cancellationToken)
    {
        while (true)
        {
            PullSubscription<T>[] readers = _readers;
            for (int i = 0; i < readers.Length; i++)
            {
                PullSubscription<T> reader = readers[i];
                if (reader.HasRoom || reader.IsClosed)
                {
                    continue;
                }

                try
                {
                    await reader.Writer.WaitToWriteAsync(cancellationToken).ConfigureAwait(false);
                }
                catch (Exception ex) when (ex is not OperationCanceledException && reader.IsClosed)
                {
                    // The reader ended (the publisher completed with an error): stop waiting for it.
                }
            }

            if (TryPublish(in item))
            {
                return;
            }
        }
    }

    private void DetachReader(PullSubscription<T> reader)
    {
        lock (_gate)
        {
            int index = Array.IndexOf(_readers, reader);
            if (index >= 0)
            {
                _readers = Without(_readers, index);
            }
        }
    }

    private void DetachSubscriber(PushSubscriber subscriber)
    {
        lock (_gate)
        {
            int index = Array.IndexOf(_subscribers, subscriber);
            if (index >= 0)
            {
                _subscribers = Without(_subscribers, index);
            }
        }
    }

    private void OnLoopEnded()
    {
        bool allEnded;
        lock (_gate)
        {
            _runningLoops--;
            allEnded = _completed && _runningLoops == 0;
        }

        if (allEnded)
        {
            _completion.TrySetResult();
        }
    }

    private void ReportFault(DeliverySubscription subscription, DeliveryFaultSource source, Exception exception)
    {
        subscription.CountFault();
        if (_onFault is null)
        {
            return;
        }

        try
        {
            _onFault(new DeliveryFault(subscription, source, exception));
        }
        catch (Exception)
        {
            // A failing fault callback must not end delivery, and there is nowhere left to report it (documented).
        }
    }

    private static TItem[] Without<TItem>(TItem[] items, int index)
    {
        var result = new TItem[items.Length - 1];
        Array.Copy(items, 0, result, 0, index);
        Array.Copy(items, index + 1, result, index, items.Length - index - 1);
        return result;
    }

    [DoesNotReturn]
    internal static void ThrowCompleted() =>
        throw new InvalidOperationException("The publisher has been completed; nothing more can be published. Complete it only after every owner loop has stopped publishing.");
}
