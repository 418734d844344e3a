using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;
using System.Threading.Channels;

namespace StreamForecast.Streaming;

/// <content>The push side of the publisher: one subscriber's buffer and delivery loop.</content>
internal sealed partial class Publisher<T>
{
    /// <summary>One push subscriber: its buffer (a drop-oldest bounded channel) and its delivery loop.</summary>
    private sealed class PushSubscriber : IDeliveryControl
    {
        private readonly Publisher<T> _owner;
        private readonly IObserver<T> _observer;
        private readonly Channel<T> _buffer;
        private Task _loop = Task.CompletedTask;
        private volatile bool _stopped;

        public PushSubscriber(Publisher<T> owner, IObserver<T> observer, long id)
        {
            _owner = owner;
            _observer = observer;
            Handle = new DeliverySubscription(id, this);
            _buffer = Channel.CreateBounded<T>(
                new BoundedChannelOptions(owner._subscriberCapacity)
                {
                    FullMode = BoundedChannelFullMode.DropOldest,
                    SingleReader = true,
                    SingleWriter = false,
                    AllowSynchronousContinuations = false,
                },
                OnItemDropped);
        }

        public DeliverySubscription Handle { get; }

        public int BufferedCount => _buffer.Reader.Count;

        public Task Completion => _loop;

        /// <summary>Buffers an item; when the buffer is full the channel drops the oldest and calls <see cref="OnItemDropped"/>.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Offer(in T item) => _buffer.Writer.TryWrite(item);

        public void Start() => _loop = Task.Run(RunAsync);

        public void CloseBuffer() => _buffer.Writer.TryComplete();

        public void Stop()
        {
            if (_stopped)
            {
                return;
            }

            _stopped = true;
            _owner.DetachSubscriber(this);
            _buffer.Writer.TryComplete();
        }

        /// <summary>For a subscription made after completion: the final notification, on the caller's thread.</summary>
        public void DeliverFinalNow(Exception? error) => Notify(error);

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

        private async Task RunAsync()
        {
            ChannelReader<T> reader = _buffer.Reader;
            try
            {
                // The buffer is only ever completed without an error, so this never throws.
                while (await reader.WaitToReadAsync().ConfigureAwait(false))
                {
                    while (!_stopped && reader.TryRead(out T? item))
                    {
                        try
                        {
                            _observer.OnNext(item);
                            Handle.CountDelivered();
                        }
                        catch (Exception ex)
                        {
                            // User callback: count and report, then go on with the next item.
                            _owner.ReportFault(Handle, DeliveryFaultSource.OnNext, ex);
                        }
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
