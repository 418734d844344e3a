using System.Runtime.InteropServices;
using System.Threading.Channels;
using BenchmarkDotNet.Attributes;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// End to end at 100k and 1M long keys (1k only when STREAMFORECAST_BENCH_SMOKE=1, the CI dry run): post → bounded channel → period bucketing → forecast → observable subscriber, with 1
/// and 2 partitions, against the raw single-thread dictionary lookup + full step (the baseline) and a bounded
/// channel hop with one writer and one reader (the ingestion floor). One invocation posts <see cref="Ops"/>
/// observations (10 periods of every key, a fresh random key order each period) and waits until the subscriber has
/// received every forecast they close, so the time per operation is the inverse of the sustained throughput.
/// </summary>
[MemoryDiagnoser]
public class EngineThroughputBenchmarks
{
    private const int Ops = 1_000_000;
    private const int WarmRounds = 14;
    private static readonly long s_t0 = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero).UtcTicks;

    /// <summary>How many keys: 100k and 1M; only 1k when STREAMFORECAST_BENCH_SMOKE=1 (the CI dry run, which must stay short).</summary>
    public static IEnumerable<int> KeyCounts =>
        Environment.GetEnvironmentVariable("STREAMFORECAST_BENCH_SMOKE") == "1" ? [1_000] : [100_000, 1_000_000];

    /// <summary>The number of keys; <see cref="Ops"/> observations per invocation are <see cref="Ops"/> ÷ keys periods of every key.</summary>
    [ParamsSource(nameof(KeyCounts))]
    public int Keys { get; set; }

    private long[] _keys = [];
    private int[] _order = [];
    private double[] _data = [];
    private long _round;

    private Dictionary<long, SeriesStep> _raw = null!;
    private Channel<Observation<long>> _channel = null!;
    private Task _channelReader = Task.CompletedTask;
    private ForecastEngine<long>? _engine;
    private IDisposable? _subscription;

    // Written by the benchmark thread before posting, read by the consumer; the channel write orders them.
    private long _received;
    private long _target;
    private TaskCompletionSource _done = new(TaskCreationOptions.RunContinuationsAsynchronously);

    /// <summary>Setup for the baseline.</summary>
    [GlobalSetup(Target = nameof(DictionaryLookupAndStep))]
    public void SetupRaw()
    {
        Common();
        _raw = new Dictionary<long, SeriesStep>();
        foreach (long key in _keys)
        {
            // Built in key order, so the heap layout has nothing to do with the shuffled order they are used in.
            _raw[key] = new SeriesStep(new MovingAverageOptions(12));
        }

        for (int i = 0; i < WarmRounds; i++)
        {
            RawRound(i % (Ops / Keys));
        }
    }

    /// <summary>Setup for the channel hop: one reader task that counts what it reads.</summary>
    [GlobalSetup(Target = nameof(BoundedChannelHop))]
    public void SetupChannel()
    {
        Common();
        _channel = Channel.CreateBounded<Observation<long>>(new BoundedChannelOptions(16_384)
        {
            SingleReader = true,
            SingleWriter = true,
            FullMode = BoundedChannelFullMode.Wait,
        });
        ChannelReader<Observation<long>> reader = _channel.Reader;
        _channelReader = Task.Run(async () =>
        {
            double sum = 0;
            while (await reader.WaitToReadAsync().ConfigureAwait(false))
            {
                while (reader.TryRead(out Observation<long> o))
                {
                    sum += o.Quantity;
                    Arrived();
                }
            }

            return sum;
        });
    }

    /// <summary>Setup for the engine with one partition.</summary>
    [GlobalSetup(Target = nameof(EngineOnePartition))]
    public void SetupOne() => SetupEngine(1);

    /// <summary>Setup for the engine with two partitions.</summary>
    [GlobalSetup(Target = nameof(EngineTwoPartitions))]
    public void SetupTwo() => SetupEngine(2);

    /// <summary>Stops the channel reader or the engine and checks that the subscriber lost nothing.</summary>
    [GlobalCleanup]
    public void Cleanup()
    {
        _channel?.Writer.TryComplete();
        _channelReader.GetAwaiter().GetResult();
        if (_engine is not null)
        {
            EngineCounters c = _engine.GetCounters();
            _subscription?.Dispose();
            _engine.DisposeAsync().AsTask().GetAwaiter().GetResult();
            if (c.SubscriberDrops != 0 || c.Rejected != 0)
            {
                throw new InvalidOperationException($"The run lost data: {c.SubscriberDrops} subscriber drops, {c.Rejected} rejected.");
            }
        }
    }

    /// <summary>Raw dictionary lookup + full step on the benchmark thread (no channel, no publishing).</summary>
    /// <returns>A checksum of the step results.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Ops)]
    public double DictionaryLookupAndStep()
    {
        double check = 0;
        for (int r = 0; r < Ops / Keys; r++)
        {
            check += RawRound(r);
        }

        return check;
    }

    /// <summary>Write every observation into a bounded channel; one reader task counts them.</summary>
    /// <returns>The number of items read so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public async Task<long> BoundedChannelHop()
    {
        Task done = Expect(Ops);
        ChannelWriter<Observation<long>> writer = _channel.Writer;
        for (int i = 0; i < Ops; i++)
        {
            var o = Make(i);
            if (!writer.TryWrite(o))
            {
                await writer.WriteAsync(o).ConfigureAwait(false);
            }
        }

        _round += Ops / Keys;
        await done.ConfigureAwait(false);
        return Volatile.Read(ref _received);
    }

    /// <summary>The engine with one partition, one subscriber.</summary>
    /// <returns>The number of forecasts received so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public Task<long> EngineOnePartition() => PostAllAsync();

    /// <summary>The engine with two partitions, one subscriber.</summary>
    /// <returns>The number of forecasts received so far.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public Task<long> EngineTwoPartitions() => PostAllAsync();

    private async Task<long> PostAllAsync()
    {
        // Each observation of period r closes the key's period r − 1: one forecast update per observation.
        Task done = Expect(Ops);
        ForecastEngine<long> engine = _engine!;
        for (int i = 0; i < Ops; i++)
        {
            var o = Make(i);
            if (!engine.TryPost(o))
            {
                await engine.PostAsync(o).ConfigureAwait(false);
            }
        }

        _round += Ops / Keys;
        await done.ConfigureAwait(false);
        return Volatile.Read(ref _received);
    }

    private void SetupEngine(int partitions)
    {
        Common();
        var series = new SeriesOptions(
            new MovingAverageOptions(12),
            PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1)),
            rules: [new TrackingSignalRuleOptions()]);
        _engine = new ForecastEngine<long>(new ForecastEngineOptions<long>(
            series,
            partitions: partitions,
            publishing: new PublishingOptions(subscriberCapacity: 2_000_000)));
        _subscription = _engine.Forecasts.Subscribe(new CountingObserver(this));

        // Warm every series past the MA(12) window: the first period of each key closes nothing.
        Task done = Expect((long)(WarmRounds - 1) * Keys);
        for (int r = 0; r < WarmRounds; r++)
        {
            for (int j = 0; j < Keys; j++)
            {
                // Period _round; the first period in key order, so the engine builds its series in key order and the
                // heap layout has nothing to do with the shuffled order they are used in.
                var o = r == 0 ? new Observation<long>(_keys[j], Make(j).Timestamp, 100) : Make(j);
                if (!_engine.TryPost(o))
                {
                    _engine.PostAsync(o).AsTask().GetAwaiter().GetResult();
                }
            }

            _round++;
        }

        done.GetAwaiter().GetResult();
    }

    private double RawRound(int block)
    {
        double check = 0;
        Dictionary<long, SeriesStep> raw = _raw;
        int start = block * Keys;
        for (int i = start; i < start + Keys; i++)
        {
            ref SeriesStep? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(raw, _keys[_order[i]], out bool exists);
            if (!exists)
            {
                slot = new SeriesStep(new MovingAverageOptions(12));
            }

            check += slot!.Step(_data[i & 4095]);
        }

        return check;
    }

    private Observation<long> Make(int i)
    {
        long round = _round + (i / Keys);
        var time = new DateTimeOffset(s_t0 + (round * TimeSpan.TicksPerSecond) + (TimeSpan.TicksPerSecond / 2), TimeSpan.Zero);
        return new Observation<long>(_keys[_order[i]], time, _data[i & 4095]);
    }

    private Task Expect(long count)
    {
        var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        Volatile.Write(ref _done, done);
        Volatile.Write(ref _target, Volatile.Read(ref _received) + count);
        return done.Task;
    }

    private void Arrived()
    {
        // Only the single consumer writes _received.
        long n = _received + 1;
        Volatile.Write(ref _received, n);
        if (n == Volatile.Read(ref _target))
        {
            Volatile.Read(ref _done).TrySetResult();
        }
    }

    private void Common()
    {
        _keys = new long[Keys];
        for (int i = 0; i < Keys; i++)
        {
            _keys[i] = Workload.LongKey(i);
        }

        _order = Workload.ShuffledRounds(Keys, Ops / Keys, seed: 8);
        _data = Workload.Demand(4096, seed: 9);
        _round = 0;
    }

    private sealed class CountingObserver(EngineThroughputBenchmarks owner) : IObserver<ForecastUpdate<long>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<long> value) => owner.Arrived();
    }
}
