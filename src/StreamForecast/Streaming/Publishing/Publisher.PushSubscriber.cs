using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;

namespace StreamForecast.Streaming;

/// <content>The push side of the publisher: one subscriber's buffer and delivery loop.</content>
internal sealed partial class Publisher<T>
{
    /// <summary>How many items each push subscriber may hold (<see cref="PublishingOptions.SubscriberCapacity"/>).</summary>
    public int SubscriberCapacity => _subscriberCapacity;

    /// <summary>
    /// For an owner loop that publishes a burst (a flush or a watermark closing many periods at once): completes when every
    /// push subscriber attached now has room for <paramref name="room"/> more items (at most its capacity), so that the
    /// next part of the burst drops nothing. A subscriber detached or completed meanwhile no longer counts.
    /// </summary>
    /// <param name="room">How many free slots to wait for in each subscriber's buffer, ≥ 1.</param>
    /// <returns>A task that completes when there is room; completed at once, without allocating, when there is already.</returns>
    /// <remarks>O(subscribers). Pull readers are not waited for here (publishing waits for them item by item). Thread-safe.</remarks>
    public async Task WaitForPushRoomAsync(int room)
    {
        PushSubscriber[] subscribers = _subscribers;
        for (int i = 0; i < subscribers.Length; i++)
        {
            await subscribers[i].WaitForRoomAsync(room).ConfigureAwait(false);
        }
    }

    /// <summary>One push subscriber: its buffer (a drop-oldest ring, see <see cref="DeliveryBuffer{T}"/>) and its delivery loop.</summary>
    private sealed class PushSubscriber : IDeliveryControl
    {
        /// <summary>The most items the delivery loop takes from the buffer at once.</summary>
        private const int MaxBatch = 256;

        private readonly Publisher<T> _owner;
        private readonly IObserver<T> _observer;
        private readonly DeliveryBuffer<T> _buffer;
        private readonly T[] _batch;
        private readonly TaskCompletionSource _loopEnded = new(TaskCreationOptions.RunContinuationsAsynchronously);
        private volatile bool _stopped;

        public PushSubscriber(Publisher<T> owner, IObserver<T> observer, long id)
        {
            _owner = owner;
            _observer = observer;
            Handle = new DeliverySubscription(id, this);
            _buffer = new DeliveryBuffer<T>(owner._subscriberCapacity);
            _batch = new T[Math.Min(MaxBatch, owner._subscriberCapacity)];
        }

        public DeliverySubscription Handle { get; }

        public int BufferedCount => _buffer.Count;

        public int PendingCount => _buffer.Pending;

        public Task Completion => _loopEnded.Task;

        /// <summary>Buffers an item; when the buffer is full its oldest item is dropped and reported.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Offer(in T item, bool deferWake)
        {
            if (_buffer.Write(in item, out T dropped, deferWake))
            {
                OnItemDropped(dropped);
            }
        }

        public void WakeIfPending() => _buffer.WakeIfPending();

        public Task WaitForRoomAsync(int room) => _buffer.WaitForRoomAsync(room);

        /// <summary>Starts the delivery loop on a background thread of its own (see <see cref="DeliveryBuffer{T}"/> for why).</summary>
        public void Start() => new Thread(Run) { IsBackground = true, Name = "StreamForecast delivery " + Handle.Id }.Start();

        public void CloseBuffer() => _buffer.Close(discard: false);

        public void Stop()
        {
            if (_stopped)
            {
                return;
            }

            _stopped = true;
            _owner.DetachSubscriber(this);
            _buffer.Close(discard: true);
        }

        /// <summary>For a subscription made after completion: the final notification, on the caller's thread.</summary>
        public void DeliverFinalNow(Exception? error)
        {
            Notify(error);
            _loopEnded.TrySetResult();
        }

        private void OnItemDropped(T item)
        {
            Handle.CountDropped();
            Action<DeliverySubscription, T>? onDropped = _owner._onDropped;
            if (onDropped is null)
            {
                return;
            }

            try
            {
                onDropped(Handle, item);
            }
            catch (Exception ex)
            {
                // User callback: report it; it must never break publishing.
                _owner.ReportFault(Handle, DeliveryFaultSource.DroppedItemCallback, ex);
            }
        }

        private void Run()
        {
            DeliveryBuffer<T> buffer = _buffer;
            T[] batch = _batch;
            try
            {
                // Each wake-up drains everything buffered, a batch at a time, before sleeping again.
                while (buffer.WaitToRead())
                {
                    int taken;
                    while (!_stopped && (taken = buffer.Take(batch)) > 0)
                    {
                        Deliver(batch, taken);
                    }

                    if (_stopped)
                    {
                        return;
                    }
                }

                if (!_stopped)
                {
                    Notify(_owner._error);
                }
            }
            finally
            {
                _owner.OnLoopEnded();
                _loopEnded.TrySetResult();
            }
        }

        private void Deliver(T[] batch, int count)
        {
            int delivered = 0;
            int i = 0;
            while (i < count && !_stopped)
            {
                try
                {
                    // Checked before each call: after Dispose at most the call already committed to begins.
                    for (; i < count && !_stopped; i++)
                    {
                        _observer.OnNext(batch[i]);
                        delivered++;
                    }
                }
                catch (Exception ex)
                {
                    // User callback: count and report, then go on with the next item.
                    i++;
                    _owner.ReportFault(Handle, DeliveryFaultSource.OnNext, ex);
                }
            }

            _buffer.EndBatch(); // once per batch: nothing is counted per item
            Handle.CountDelivered(delivered);
            if (RuntimeHelpers.IsReferenceOrContainsReferences<T>())
            {
                Array.Clear(batch, 0, count);
            }
        }

        private void Notify(Exception? error)
        {
            try
            {
                if (error is null)
                {
                    _observer.OnCompleted();
                }
                else
                {
                    _observer.OnError(error);
                }
            }
            catch (Exception ex)
            {
                _owner.ReportFault(Handle, error is null ? DeliveryFaultSource.OnCompleted : DeliveryFaultSource.OnError, ex);
            }
        }
    }
}
