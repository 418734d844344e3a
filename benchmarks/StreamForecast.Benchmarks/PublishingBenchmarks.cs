using System.Reactive.Subjects;
using System.Threading.Channels;
using BenchmarkDotNet.Attributes;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Delivery cost per published item (issue 15, target 1): the engine's publisher with 1 or 2 push subscribers that only
/// count, against a System.Reactive <c>Subject&lt;T&gt;.OnNext</c> to the same number of counting observers (the
/// baseline: a synchronous call on the publishing thread, no buffer, no thread hop). One invocation publishes
/// <see cref="Ops"/> engine-sized items (<c>ForecastUpdate&lt;long&gt;</c>) from one thread and, for the publisher,
/// waits until every subscriber has received every item, so the time per operation is the inverse of the sustained
/// delivery rate. The subscribers' buffers hold a whole invocation, so nothing is dropped and the wait always ends
/// (drops at the default buffer are counted separately, by the <c>drops</c> mode of the benchmark program).
/// <see cref="ChannelPerSubscriber"/> is the design the publisher had before issue 15 (a drop-oldest bounded channel
/// per subscriber, read one item at a time), kept here so that before and after share one run.
/// </summary>
[MemoryDiagnoser]
public class PublishingBenchmarks
{
    private const int Ops = 200_000;

    private readonly ForecastUpdate<long>[] _items = new ForecastUpdate<long>[1024];
    private Subject<ForecastUpdate<long>> _subject = null!;
    private Publisher<ForecastUpdate<long>> _publisher = null!;
    private SeriesPublisher<long> _seriesPublisher = null!;
    private DeliverySubscription[] _seriesSubscriptions = [];
    private CountingObserver[] _observers = [];
    private DeliverySubscription[] _subscriptions = [];
    private Channel<ForecastUpdate<long>>[] _channels = [];
    private Task[] _channelLoops = [];
    private int _remaining;
    private TaskCompletionSource _allDone = new(TaskCreationOptions.RunContinuationsAsynchronously);

    /// <summary>How many subscribers receive each item.</summary>
    [Params(1, 2)]
    public int Subscribers { get; set; }

    /// <summary>Builds the items, the subject and the publisher with its subscribers.</summary>
    [GlobalSetup]
    public void Setup()
    {
        double[] demand = Workload.Demand(_items.Length, seed: 21);
        var start = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero);
        for (int i = 0; i < _items.Length; i++)
        {
            _items[i] = new ForecastUpdate<long>(
                Workload.LongKey(i), i, start.AddSeconds(i), demand[i], false, 100, demand[i] - 100,
                new ForecastPoint(1, 100, 90, 110), new ForecastPoint(1, 100, 90, 110), default, "MA(12)", false);
        }

        _subject = new Subject<ForecastUpdate<long>>();
        _publisher = new Publisher<ForecastUpdate<long>>(new PublishingOptions(subscriberCapacity: Ops));
        _observers = new CountingObserver[Subscribers];
        _subscriptions = new DeliverySubscription[Subscribers];
        _seriesPublisher = new SeriesPublisher<long>(new PublishingOptions(subscriberCapacity: Ops));
        _seriesSubscriptions = new DeliverySubscription[Subscribers];
        for (int s = 0; s < Subscribers; s++)
        {
            _observers[s] = new CountingObserver(this);
            _subject.Subscribe(new CountingObserver(this));
            _subscriptions[s] = _publisher.Subscribe(_observers[s]);

            // The same observers: one benchmark method runs at a time, so each counts one source's items at a time.
            _seriesSubscriptions[s] = (DeliverySubscription)_seriesPublisher.Forecasts.Subscribe(_observers[s]);
        }

        _channels = new Channel<ForecastUpdate<long>>[Subscribers];
        _channelLoops = new Task[Subscribers];
        for (int s = 0; s < Subscribers; s++)
        {
            _channels[s] = Channel.CreateBounded<ForecastUpdate<long>>(new BoundedChannelOptions(Ops)
            {
                FullMode = BoundedChannelFullMode.DropOldest,
                SingleReader = true,
                SingleWriter = false,
                AllowSynchronousContinuations = false,
            });
            ChannelReader<ForecastUpdate<long>> reader = _channels[s].Reader;
            IObserver<ForecastUpdate<long>> observer = _observers[s];
            _channelLoops[s] = Task.Run(async () =>
            {
                while (await reader.WaitToReadAsync().ConfigureAwait(false))
                {
                    while (reader.TryRead(out ForecastUpdate<long> item))
                    {
                        observer.OnNext(item);
                    }
                }
            });
        }
    }

    /// <summary>Completes the publisher and checks that nothing was dropped.</summary>
    [GlobalCleanup]
    public void Cleanup()
    {
        _publisher.Complete();
        _publisher.Completion.GetAwaiter().GetResult();
        _seriesPublisher.CompleteAsync().GetAwaiter().GetResult();
        foreach (Channel<ForecastUpdate<long>> c in _channels)
        {
            c.Writer.TryComplete();
        }

        Task.WaitAll(_channelLoops);
        foreach (DeliverySubscription s in _subscriptions.Concat(_seriesSubscriptions))
        {
            if (s.DroppedCount != 0)
            {
                throw new InvalidOperationException($"Subscriber {s.Id} dropped {s.DroppedCount} items.");
            }
        }
    }

    /// <summary><c>Subject&lt;T&gt;.OnNext</c> to the counting observers, on this thread.</summary>
    /// <returns>A checksum.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Ops)]
    public long SubjectOnNext()
    {
        Subject<ForecastUpdate<long>> subject = _subject;
        ForecastUpdate<long>[] items = _items;
        for (int i = 0; i < Ops; i++)
        {
            subject.OnNext(items[i & 1023]);
        }

        return _subject.HasObservers ? Ops : 0;
    }

    /// <summary>The publisher: <c>TryPublish</c> on this thread, delivery by each subscriber's loop; waits for the last item.</summary>
    /// <returns>The number of items the first subscriber received so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public async Task<long> PublisherPush()
    {
        Task done = ExpectAll();
        Publisher<ForecastUpdate<long>> publisher = _publisher;
        ForecastUpdate<long>[] items = _items;
        for (int i = 0; i < Ops; i++)
        {
            publisher.TryPublish(in items[i & 1023]);
        }

        await done.ConfigureAwait(false);
        return _observers[0].Received;
    }

    /// <summary>
    /// The publisher as the engine's partition loop drives it: <c>TryPublishDeferred</c> (a sleeping subscriber is woken
    /// after 256 waiting items (a quarter of a smaller buffer), not per item) and <c>WakeSubscribers</c> once the run of items ends, as the loop does when
    /// its queue runs empty.
    /// </summary>
    /// <returns>The number of items the first subscriber received so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public async Task<long> PublisherPushDeferred()
    {
        Task done = ExpectAll();
        Publisher<ForecastUpdate<long>> publisher = _publisher;
        ForecastUpdate<long>[] items = _items;
        for (int i = 0; i < Ops; i++)
        {
            publisher.TryPublishDeferred(in items[i & 1023]);
        }

        publisher.WakeSubscribers();
        await done.ConfigureAwait(false);
        return _observers[0].Received;
    }

    /// <summary>
    /// <c>SeriesPublisher.Forecast(span)</c> in batches of 128 updates (the order of a cluster bucket's output at batch
    /// 4,000): each sleeping subscriber is woken once per batch, not per update.
    /// </summary>
    /// <returns>The number of items the first subscriber received so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public async Task<long> SeriesPublisherBatches()
    {
        Task done = ExpectAll();
        SeriesPublisher<long> publisher = _seriesPublisher;
        ForecastUpdate<long>[] items = _items;
        for (int i = 0; i < Ops; i += 128)
        {
            publisher.Forecast(items.AsSpan(i & 1023, Math.Min(128, Ops - i)));
        }

        await done.ConfigureAwait(false);
        return _observers[0].Received;
    }

    /// <summary>The previous design: <c>TryWrite</c> into each subscriber's drop-oldest bounded channel, one reader task each.</summary>
    /// <returns>The number of items the first subscriber received so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public async Task<long> ChannelPerSubscriber()
    {
        Task done = ExpectAll();
        Channel<ForecastUpdate<long>>[] channels = _channels;
        ForecastUpdate<long>[] items = _items;
        for (int i = 0; i < Ops; i++)
        {
            for (int s = 0; s < channels.Length; s++)
            {
                channels[s].Writer.TryWrite(items[i & 1023]);
            }
        }

        await done.ConfigureAwait(false);
        return _observers[0].Received;
    }

    private Task ExpectAll()
    {
        var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        Volatile.Write(ref _allDone, done);
        Volatile.Write(ref _remaining, Subscribers);
        foreach (CountingObserver o in _observers)
        {
            o.Expect(Ops);
        }

        return done.Task;
    }

    private void ObserverDone()
    {
        if (Interlocked.Decrement(ref _remaining) == 0)
        {
            Volatile.Read(ref _allDone).TrySetResult();
        }
    }

    private sealed class CountingObserver(PublishingBenchmarks owner) : IObserver<ForecastUpdate<long>>
    {
        private long _received;
        private long _target = long.MaxValue;

        public long Received => Volatile.Read(ref _received);

        // Called before the items of an invocation are published; the subscriber's buffer hand-off orders it.
        public void Expect(long count) => Volatile.Write(ref _target, Volatile.Read(ref _received) + count);

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<long> value)
        {
            long n = _received + 1;
            Volatile.Write(ref _received, n);
            if (n == Volatile.Read(ref _target))
            {
                owner.ObserverDone();
            }
        }
    }
}
