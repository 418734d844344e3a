using System.Collections.Concurrent;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Streaming;

public sealed class PublisherTests
{
    // Awaits below use this only as a failure guard: a correct run never comes near it.
    private static readonly TimeSpan s_guard = TimeSpan.FromSeconds(30);

    private readonly record struct Item(int Source, int Sequence);

    [Fact]
    public async Task Subscribe_ManyItems_EachSubscriberGetsEveryItemInOrderThenOneCompletion()
    {
        var hub = new Publisher<int>();
        var first = new RecordingObserver<int>();
        var second = new RecordingObserver<int>();
        hub.Subscribe(first);
        hub.Subscribe(second);

        for (int i = 0; i < 5_000; i++)
        {
            Assert.True(hub.TryPublish(i));
        }

        Assert.True(hub.Complete());
        await hub.Completion.WaitAsync(s_guard);

        int[] expected = Enumerable.Range(0, 5_000).ToArray();
        Assert.Equal(expected, first.Items);
        Assert.Equal(expected, second.Items);
        Assert.Equal(1, first.CompletedCount);
        Assert.Equal(1, second.CompletedCount);
        Assert.False(first.SawConcurrentCalls);
        Assert.False(second.SawConcurrentCalls);
    }

    [Fact]
    public async Task OnNext_ObserverThrows_OthersGetEveryItemAndThrowerKeepsGettingLaterItems()
    {
        var faults = new ConcurrentQueue<DeliveryFault>();
        var hub = new Publisher<int>(onFault: faults.Enqueue);
        var thrower = new RecordingObserver<int> { ThrowWhen = i => i % 2 == 0 };
        var healthy = new RecordingObserver<int>();
        DeliverySubscription throwerSubscription = hub.Subscribe(thrower);
        DeliverySubscription healthySubscription = hub.Subscribe(healthy);

        for (int i = 0; i < 1_000; i++)
        {
            hub.TryPublish(i);
        }

        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        int[] all = Enumerable.Range(0, 1_000).ToArray();
        Assert.Equal(all, healthy.Items);
        Assert.Equal(all, thrower.Items); // every item was offered, including those after a throw
        Assert.Equal(500, throwerSubscription.FaultCount);
        Assert.Equal(500, throwerSubscription.DeliveredCount);
        Assert.Equal(0, healthySubscription.FaultCount);
        Assert.Equal(1_000, healthySubscription.DeliveredCount);
        Assert.Equal(500, faults.Count);
        Assert.All(faults, f =>
        {
            Assert.Same(throwerSubscription, f.Subscription);
            Assert.Equal(DeliveryFaultSource.OnNext, f.Source);
            Assert.IsType<InvalidOperationException>(f.Exception);
        });
        Assert.Equal(1, thrower.CompletedCount);
        Assert.Equal(1, healthy.CompletedCount);
    }

    [Fact]
    public async Task OnNext_FaultCallbackThrowsToo_DeliveryGoesOn()
    {
        var hub = new Publisher<int>(onFault: _ => throw new InvalidOperationException("fault handler failed"));
        var thrower = new RecordingObserver<int> { ThrowWhen = _ => true };
        var healthy = new RecordingObserver<int>();
        DeliverySubscription throwerSubscription = hub.Subscribe(thrower);
        hub.Subscribe(healthy);

        for (int i = 0; i < 100; i++)
        {
            hub.TryPublish(i);
        }

        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        Assert.Equal(100, healthy.Items.Count);
        Assert.Equal(100, thrower.Items.Count);
        Assert.Equal(100, throwerSubscription.FaultCount);
        Assert.Equal(1, thrower.CompletedCount);
    }

    [Fact]
    public async Task TryPublish_SubscriberBlocked_NeverWaitsAndDropsOldestCountedExactly()
    {
        const int capacity = 10;
        const int burst = 100;
        var dropped = new ConcurrentQueue<(long Id, int Item)>();
        var hub = new Publisher<int>(new PublishingOptions(subscriberCapacity: capacity), onDropped: (s, item) => dropped.Enqueue((s.Id, item)));
        using var gate = new SemaphoreSlim(0);
        var slow = new RecordingObserver<int> { BlockOnFirst = gate };
        var fast = new RecordingObserver<int>();
        DeliverySubscription slowSubscription = hub.Subscribe(slow);
        DeliverySubscription fastSubscription = hub.Subscribe(fast);

        hub.TryPublish(0);
        await slow.FirstItemEntered.WaitAsync(s_guard); // the slow loop now holds item 0 and waits on the gate

        // Each publish returns at once although the slow subscriber does not move, and the fast subscriber keeps
        // up item by item meanwhile (waiting for it keeps its own buffer from overflowing).
        for (int i = 1; i <= burst; i++)
        {
            Assert.True(hub.TryPublish(i));
            await fast.WaitForCountAsync(i + 1).WaitAsync(s_guard);
        }

        // Items 1..100 went into a 10-slot buffer: exactly 90 dropped, the oldest ones, in order.
        Assert.Equal(burst - capacity, slowSubscription.DroppedCount);
        Assert.Equal(capacity, slowSubscription.BufferedCount);
        Assert.Equal(capacity + 1, slowSubscription.PendingCount); // item 0, held by the blocked call, is pending too
        Assert.Equal(Enumerable.Range(1, burst - capacity).ToArray(), dropped.Select(d => d.Item).ToArray());
        Assert.All(dropped, d => Assert.Equal(slowSubscription.Id, d.Id));

        gate.Release();
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        int[] expectedSlow = [0, .. Enumerable.Range(burst - capacity + 1, capacity)];
        Assert.Equal(expectedSlow, slow.Items);
        Assert.Equal(Enumerable.Range(0, burst + 1).ToArray(), fast.Items);
        Assert.Equal(0, fastSubscription.DroppedCount);
        Assert.Equal(1, slow.CompletedCount);
    }

    [Fact]
    public async Task TryPublish_DropCallbackThrows_ReportedAsFaultAndPublishingGoesOn()
    {
        var faults = new ConcurrentQueue<DeliveryFault>();
        var hub = new Publisher<int>(new PublishingOptions(subscriberCapacity: 1), onDropped: (_, _) => throw new InvalidOperationException("drop handler failed"), onFault: faults.Enqueue);
        using var gate = new SemaphoreSlim(0);
        var slow = new RecordingObserver<int> { BlockOnFirst = gate };
        DeliverySubscription subscription = hub.Subscribe(slow);
        hub.TryPublish(0);
        await slow.FirstItemEntered.WaitAsync(s_guard);

        for (int i = 1; i <= 5; i++)
        {
            Assert.True(hub.TryPublish(i)); // items 2..5 each drop one; the callback's exception never escapes
        }

        Assert.Equal(4, subscription.DroppedCount);
        Assert.Equal(4, faults.Count(f => f.Source == DeliveryFaultSource.DroppedItemCallback));
        gate.Release();
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);
        Assert.Equal([0, 5], slow.Items);
    }

    [Fact]
    public async Task TryPublish_SteadyStateWithFullBuffer_AllocatesNothing()
    {
        long drops = 0;
        var hub = new Publisher<Item>(new PublishingOptions(subscriberCapacity: 64), onDropped: (_, _) => Interlocked.Increment(ref drops));
        using var gate = new SemaphoreSlim(0);
        var slow = new RecordingObserver<Item> { BlockOnFirst = gate };
        hub.Subscribe(slow);
        hub.TryPublish(new Item(0, 0));
        await slow.FirstItemEntered.WaitAsync(s_guard);
        for (int i = 1; i <= 200; i++)
        {
            hub.TryPublish(new Item(0, i)); // fill the buffer and grow it to its high-water mark
        }

        long published = 0;
        Allocations.AssertNone(() =>
        {
            for (int i = 0; i < 10_000; i++)
            {
                var item = new Item(1, i);
                hub.TryPublish(in item);
                published++;
            }

            return published;
        });

        gate.Release();
        hub.Complete();
        Assert.Equal(200 - 64 + published, Interlocked.Read(ref drops));
    }

    [Fact]
    public async Task Complete_ItemsBuffered_DrainsThenCompletesExactlyOnce()
    {
        var hub = new Publisher<int>();
        using var gate = new SemaphoreSlim(0);
        var slow = new RecordingObserver<int> { BlockOnFirst = gate };
        DeliverySubscription subscription = hub.Subscribe(slow);
        hub.TryPublish(0);
        await slow.FirstItemEntered.WaitAsync(s_guard);
        for (int i = 1; i <= 5; i++)
        {
            hub.TryPublish(i);
        }

        Assert.True(hub.Complete());
        Assert.False(hub.Complete());
        Assert.True(hub.IsCompleted);
        Assert.False(hub.Completion.IsCompleted); // the slow loop still holds items

        gate.Release();
        await hub.Completion.WaitAsync(s_guard);
        await subscription.Completion.WaitAsync(s_guard);

        Assert.Equal([0, 1, 2, 3, 4, 5], slow.Items);
        Assert.Equal(1, slow.CompletedCount);
        Assert.Equal("C", slow.Log[^1]); // completion came after the last item
        Assert.Equal(0, slow.ErrorCount);
    }

    [Fact]
    public async Task Complete_WithError_SubscribersGetBufferedItemsThenOnError()
    {
        var hub = new Publisher<int>();
        var observer = new RecordingObserver<int>();
        hub.Subscribe(observer);
        using PullSubscription<int> reader = hub.OpenReader();
        hub.TryPublish(1);
        hub.TryPublish(2);
        var failure = new TimeoutException("source lost");

        hub.Complete(failure);
        await hub.Completion.WaitAsync(s_guard);

        Assert.Equal([1, 2], observer.Items);
        Assert.Equal(1, observer.ErrorCount);
        Assert.Same(failure, observer.LastError);
        Assert.Equal(0, observer.CompletedCount);

        var read = new List<int>();
        var thrown = await Assert.ThrowsAsync<TimeoutException>(async () =>
        {
            await foreach (int item in reader.ReadAllAsync().WithCancellation(CancellationToken.None))
            {
                read.Add(item);
            }
        }).WaitAsync(s_guard);
        Assert.Same(failure, thrown);
        Assert.Equal([1, 2], read);
    }

    [Fact]
    public void Subscribe_AfterComplete_GetsOnCompletedAtOnce()
    {
        var hub = new Publisher<int>();
        hub.Complete();
        var observer = new RecordingObserver<int>();

        DeliverySubscription subscription = hub.Subscribe(observer);

        Assert.Equal(1, observer.CompletedCount); // synchronously, before Subscribe returned
        Assert.True(subscription.Completion.IsCompleted);
        Assert.True(hub.Completion.IsCompleted);
        Assert.Equal(0, hub.SubscriberCount);
    }

    [Fact]
    public void TryPublish_AfterComplete_ThrowsInvalidOperation()
    {
        var hub = new Publisher<int>();
        hub.Complete();

        var ex = Assert.Throws<InvalidOperationException>(() => hub.TryPublish(1));
        Assert.Contains("completed", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task TryPublish_ConcurrentPublishers_EveryItemExactlyOncePerSubscriberInEachPublishersOrder()
    {
        const int publishers = 4;
        const int perPublisher = 25_000;
        var hub = new Publisher<Item>(new PublishingOptions(subscriberCapacity: publishers * perPublisher));
        var observers = new[] { new RecordingObserver<Item>(), new RecordingObserver<Item>(), new RecordingObserver<Item>() };
        DeliverySubscription[] subscriptions = observers.Select(hub.Subscribe).ToArray();
        var start = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);

        Task[] running = Enumerable.Range(0, publishers).Select(p => Task.Run(async () =>
        {
            await start.Task;
            for (int i = 0; i < perPublisher; i++)
            {
                Assert.True(hub.TryPublish(new Item(p, i)));
            }
        })).ToArray();
        start.SetResult();
        await Task.WhenAll(running).WaitAsync(s_guard);
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        foreach (RecordingObserver<Item> observer in observers)
        {
            Assert.False(observer.SawConcurrentCalls);
            Assert.Equal(publishers * perPublisher, observer.Items.Count);
            for (int p = 0; p < publishers; p++)
            {
                int source = p;
                int[] sequence = observer.Items.Where(x => x.Source == source).Select(x => x.Sequence).ToArray();
                Assert.Equal(Enumerable.Range(0, perPublisher).ToArray(), sequence);
            }
        }

        Assert.All(subscriptions, s => Assert.Equal(0, s.DroppedCount));
        Assert.All(subscriptions, s => Assert.Equal(publishers * perPublisher, s.DeliveredCount));
    }

    [Fact]
    public async Task Dispose_Subscription_StopsDeliveryWithoutCompletionNotice()
    {
        var hub = new Publisher<int>();
        var observer = new RecordingObserver<int>();
        var other = new RecordingObserver<int>();
        DeliverySubscription subscription = hub.Subscribe(observer);
        hub.Subscribe(other);
        hub.TryPublish(1);
        await observer.WaitForCountAsync(1).WaitAsync(s_guard);

        subscription.Dispose();
        subscription.Dispose(); // idempotent
        Assert.Equal(1, hub.SubscriberCount);
        await subscription.Completion.WaitAsync(s_guard);
        hub.TryPublish(2);
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        Assert.Equal([1], observer.Items);
        Assert.Equal(0, observer.CompletedCount);
        Assert.Equal([1, 2], other.Items);
    }

    [Fact]
    public async Task Dispose_FromInsideOnNext_NoFurtherItems()
    {
        var hub = new Publisher<int>();
        using var gate = new SemaphoreSlim(0);
        DeliverySubscription? subscription = null;
        var observer = new RecordingObserver<int>
        {
            BlockOnFirst = gate,
            OnItem = i =>
            {
                if (i == 3)
                {
                    subscription!.Dispose();
                }
            },
        };
        subscription = hub.Subscribe(observer);
        hub.TryPublish(0);
        await observer.FirstItemEntered.WaitAsync(s_guard);
        for (int i = 1; i < 10; i++)
        {
            hub.TryPublish(i); // buffered behind the gate
        }

        gate.Release();
        await subscription.Completion.WaitAsync(s_guard);
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        Assert.Equal([0, 1, 2, 3], observer.Items);
        Assert.Equal(0, observer.CompletedCount);
    }

    [Fact]
    public async Task OpenReader_ItemsPublished_ReadInOrderThenEndsOnComplete()
    {
        var hub = new Publisher<int>();
        using PullSubscription<int> reader = hub.OpenReader();
        for (int i = 0; i < 100; i++)
        {
            Assert.True(hub.TryPublish(i));
        }

        hub.Complete();
        var read = new List<int>();
        await foreach (int item in reader.ReadAllAsync().WithCancellation(CancellationToken.None))
        {
            read.Add(item);
        }

        Assert.Equal(Enumerable.Range(0, 100).ToArray(), read);
        Assert.True(hub.Completion.IsCompleted); // readers are not waited for
    }

    [Fact]
    public async Task TryPublish_ReaderFull_ReturnsFalseAndPublishesToNobody()
    {
        var hub = new Publisher<int>(new PublishingOptions(readerCapacity: 2));
        var observer = new RecordingObserver<int>();
        hub.Subscribe(observer);
        using PullSubscription<int> reader = hub.OpenReader();
        using PullSubscription<int> other = hub.OpenReader();

        Assert.True(hub.TryPublish(0));
        Assert.True(hub.TryPublish(1));
        Assert.False(hub.TryPublish(2)); // both readers are full
        Assert.True(reader.Reader.TryRead(out int first));
        Assert.Equal(0, first);
        Assert.False(hub.TryPublish(2)); // `other` is still full: all or nothing
        Assert.True(other.Reader.TryRead(out first));
        Assert.True(hub.TryPublish(2));

        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);
        Assert.Equal([0, 1, 2], observer.Items); // the refused attempt reached no one
        Assert.Equal([1, 2], await DrainAsync(reader));
        Assert.Equal([1, 2], await DrainAsync(other));
    }

    [Fact]
    public async Task PublishAsync_ReaderFull_WaitsUntilReaderMakesRoom()
    {
        var hub = new Publisher<int>(new PublishingOptions(readerCapacity: 1));
        using PullSubscription<int> reader = hub.OpenReader();
        ValueTask quick = hub.PublishAsync(0);
        Assert.True(quick.IsCompletedSuccessfully);

        ValueTask waiting = hub.PublishAsync(1);
        Assert.False(waiting.IsCompleted);
        Assert.True(reader.Reader.TryRead(out int item));
        Assert.Equal(0, item);
        await waiting.AsTask().WaitAsync(s_guard);

        Assert.True(reader.Reader.TryRead(out item));
        Assert.Equal(1, item);
    }

    [Fact]
    public async Task PublishAsync_ReaderDisposedWhileWaiting_PublishesToTheOthers()
    {
        var hub = new Publisher<int>(new PublishingOptions(readerCapacity: 1));
        var observer = new RecordingObserver<int>();
        hub.Subscribe(observer);
        PullSubscription<int> reader = hub.OpenReader();
        await hub.PublishAsync(0);
        ValueTask waiting = hub.PublishAsync(1);
        Assert.False(waiting.IsCompleted);

        reader.Dispose();
        await waiting.AsTask().WaitAsync(s_guard);
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        Assert.Equal(0, hub.ReaderCount);
        Assert.Equal([0, 1], observer.Items);
        Assert.Equal([0], await DrainAsync(reader)); // what it held before detaching stays readable
    }

    [Fact]
    public async Task PublishAsync_CancelledWhileWaiting_ThrowsAndPublishesToNobody()
    {
        var hub = new Publisher<int>(new PublishingOptions(readerCapacity: 1));
        var observer = new RecordingObserver<int>();
        hub.Subscribe(observer);
        using PullSubscription<int> reader = hub.OpenReader();
        await hub.PublishAsync(0);
        using var cancel = new CancellationTokenSource();
        ValueTask waiting = hub.PublishAsync(1, cancel.Token);

        await cancel.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => waiting.AsTask()).WaitAsync(s_guard);
        hub.Complete();
        await hub.Completion.WaitAsync(s_guard);

        Assert.Equal([0], observer.Items);
        Assert.Equal([0], await DrainAsync(reader));
    }

    [Fact]
    public async Task ReadAllAsync_Enumerated_AttachesOnFirstMoveAndDetachesOnDispose()
    {
        var hub = new Publisher<int>();
        IAsyncEnumerator<int> enumerator = hub.ReadAllAsync().GetAsyncEnumerator();
        Assert.Equal(0, hub.ReaderCount);

        ValueTask<bool> move = enumerator.MoveNextAsync();
        Assert.Equal(1, hub.ReaderCount);
        hub.TryPublish(7);
        Assert.True(await move.AsTask().WaitAsync(s_guard));
        Assert.Equal(7, enumerator.Current);

        await enumerator.DisposeAsync();
        Assert.Equal(0, hub.ReaderCount);
    }

    [Fact]
    public async Task OpenReader_AfterComplete_EndsAtOnce()
    {
        var hub = new Publisher<int>();
        hub.Complete();
        using PullSubscription<int> reader = hub.OpenReader();

        Assert.Empty(await DrainAsync(reader));
        Assert.Equal(0, hub.ReaderCount);
    }

    [Fact]
    public void Constructor_CapacityOutOfRange_ThrowsWithAllowedRange()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new PublishingOptions(subscriberCapacity: 0));
        Assert.Contains("between 1 and 10,000,000", ex.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentOutOfRangeException>(() => new PublishingOptions(readerCapacity: PublishingOptions.MaxCapacity + 1));
        Assert.Equal(10_000, PublishingOptions.Default.SubscriberCapacity);
        Assert.Equal(10_000, PublishingOptions.Default.ReaderCapacity);
    }

    [Fact]
    public void Subscribe_NullObserver_Throws()
    {
        var hub = new Publisher<int>();
        Assert.Throws<ArgumentNullException>(() => hub.Subscribe(null!));
    }

    private static async Task<List<int>> DrainAsync(PullSubscription<int> reader)
    {
        var items = new List<int>();
        await foreach (int item in reader.ReadAllAsync().WithCancellation(CancellationToken.None).ConfigureAwait(false))
        {
            items.Add(item);
        }

        return items;
    }

    /// <summary>Records what an observer sees; optionally blocks on its first item, throws, or runs an action per item.</summary>
    private sealed class RecordingObserver<T> : IObserver<T>
    {
        private readonly List<T> _items = [];
        private readonly List<string> _log = [];
        private readonly Lock _lock = new();
        private readonly TaskCompletionSource _firstEntered = new(TaskCreationOptions.RunContinuationsAsynchronously);
        private readonly List<(int Count, TaskCompletionSource Signal)> _countWaiters = [];
        private int _inFlight;
        private int _calls;

        public Func<T, bool>? ThrowWhen { get; init; }

        public SemaphoreSlim? BlockOnFirst { get; init; }

        public Action<T>? OnItem { get; init; }

        public Task FirstItemEntered => _firstEntered.Task;

        public bool SawConcurrentCalls { get; private set; }

        public int CompletedCount { get; private set; }

        public int ErrorCount { get; private set; }

        public Exception? LastError { get; private set; }

        public List<T> Items
        {
            get
            {
                lock (_lock)
                {
                    return [.. _items];
                }
            }
        }

        public List<string> Log
        {
            get
            {
                lock (_lock)
                {
                    return [.. _log];
                }
            }
        }

        public Task WaitForCountAsync(int count)
        {
            lock (_lock)
            {
                if (_items.Count >= count)
                {
                    return Task.CompletedTask;
                }

                var signal = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
                _countWaiters.Add((count, signal));
                return signal.Task;
            }
        }

        public void OnNext(T value)
        {
            if (Interlocked.Increment(ref _inFlight) > 1)
            {
                SawConcurrentCalls = true;
            }

            try
            {
                bool first = Interlocked.Increment(ref _calls) == 1;
                lock (_lock)
                {
                    _items.Add(value);
                    _log.Add("N");
                    foreach ((int count, TaskCompletionSource signal) in _countWaiters)
                    {
                        if (_items.Count >= count)
                        {
                            signal.TrySetResult();
                        }
                    }
                }

                if (first && BlockOnFirst is not null)
                {
                    _firstEntered.TrySetResult();
                    BlockOnFirst.Wait();
                }

                OnItem?.Invoke(value);
                if (ThrowWhen is not null && ThrowWhen(value))
                {
                    throw new InvalidOperationException("observer failed on purpose");
                }
            }
            finally
            {
                Interlocked.Decrement(ref _inFlight);
            }
        }

        public void OnCompleted()
        {
            lock (_lock)
            {
                CompletedCount++;
                _log.Add("C");
            }
        }

        public void OnError(Exception error)
        {
            lock (_lock)
            {
                ErrorCount++;
                LastError = error;
                _log.Add("E");
            }
        }
    }
}
