using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using BenchmarkDotNet.Attributes;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Keyed processing per observation, on one thread and without the channel: the engine's per-key state
/// (<c>SeriesState</c>: bucket into the open period, close the previous one, full step, build and hand over the
/// forecast update), looked up the way a partition does it, against a raw <see cref="Dictionary{TKey, TValue}"/>
/// lookup + the same full step (<see cref="SeriesStep"/>), and against a plain random index into an array of structs
/// (the memory-latency floor). MA(12) with error tracking and a tracking-signal rule, 1-second periods, one observation
/// per key per period, keys in a fresh random order every period.
/// </summary>
/// <typeparam name="TKey">The key type: shop/item strings or scattered longs.</typeparam>
[MemoryDiagnoser]
[GenericTypeArguments(typeof(string))]
[GenericTypeArguments(typeof(long))]
public class KeyedProcessingBenchmarks<TKey>
    where TKey : notnull
{
    /// <summary>Observations per invocation: a whole number of periods at every key count.</summary>
    internal const int Ops = 1_000_000;

    private const int WarmRounds = 14;
    private static readonly long s_t0 = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero).UtcTicks;

    private TKey[] _keys = [];
    private int[] _order = [];
    private double[] _data = [];
    private long _round;

    private Dictionary<TKey, SeriesStep> _raw = null!;
    private Dictionary<TKey, SeriesState<TKey>> _series = null!;
    private SeriesOptions _options = null!;
    private DiscardingOutput<TKey> _sink = null!;
    private MovingAverageSlot[] _slots = [];

    /// <summary>The number of distinct keys.</summary>
    [ParamsSource(nameof(KeyCounts))]
    public int Keys { get; set; }

    /// <summary>1k, 100k and 1M keys; only 1k when STREAMFORECAST_BENCH_SMOKE=1 (the CI dry run, which must stay short).</summary>
    public static IEnumerable<int> KeyCounts =>
        Environment.GetEnvironmentVariable("STREAMFORECAST_BENCH_SMOKE") == "1" ? [1_000] : [1_000, 100_000, 1_000_000];

    /// <summary>Setup for the dictionary baseline.</summary>
    [GlobalSetup(Target = nameof(DictionaryLookupAndStep))]
    public void SetupRaw()
    {
        Common();
        _raw = new Dictionary<TKey, SeriesStep>();
        foreach (TKey key in _keys)
        {
            // Built in key order, so the heap layout has nothing to do with the shuffled order they are used in.
            _raw[key] = new SeriesStep(new MovingAverageOptions(12));
        }

        for (int i = 0; i < WarmRounds; i++)
        {
            DictionaryLookupAndStepRounds(1);
        }
    }

    /// <summary>Setup for the engine's per-key state.</summary>
    [GlobalSetup(Target = nameof(EngineSeriesState))]
    public void SetupSeries()
    {
        Common();
        _options = new SeriesOptions(
            new MovingAverageOptions(12),
            PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1)),
            rules: [new TrackingSignalRuleOptions()]);
        _sink = new DiscardingOutput<TKey>();
        _series = new Dictionary<TKey, SeriesState<TKey>>();
        foreach (TKey key in _keys)
        {
            // Built in key order, so the heap layout has nothing to do with the shuffled order they are used in.
            _series[key] = new SeriesState<TKey>(key, _options, 0);
        }

        for (int i = 0; i < WarmRounds; i++)
        {
            EngineSeriesStateRounds(1);
        }
    }

    /// <summary>Setup for the array-of-structs floor.</summary>
    [GlobalSetup(Target = nameof(RandomArrayOfStructs))]
    public void SetupArray()
    {
        Common();
        _slots = new MovingAverageSlot[Keys];
    }

    /// <summary>Raw dictionary lookup (<c>GetValueRefOrAddDefault</c>) + the full per-period step.</summary>
    /// <returns>A checksum of the step results.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Ops)]
    public double DictionaryLookupAndStep() => DictionaryLookupAndStepRounds(Ops / Keys);

    /// <summary>The engine's keyed path: look the key up as a partition does, map the event time to its period, then
    /// <c>SeriesState.Observe</c> (which closes the previous period and publishes its forecast update to a sink).</summary>
    /// <returns>A checksum of the published forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public double EngineSeriesState() => EngineSeriesStateRounds(Ops / Keys);

    /// <summary>The floor: a random index into an array of structs, each holding an MA(12) ring and its sum.</summary>
    /// <returns>A checksum of the averages.</returns>
    [Benchmark(OperationsPerInvoke = Ops)]
    public double RandomArrayOfStructs()
    {
        double check = 0;
        MovingAverageSlot[] slots = _slots;
        int[] order = _order;
        double[] data = _data;
        for (int i = 0; i < order.Length; i++)
        {
            check += slots[order[i]].Push(data[i & 4095]);
        }

        return check;
    }

    private double DictionaryLookupAndStepRounds(int rounds)
    {
        double check = 0;
        Dictionary<TKey, SeriesStep> raw = _raw;
        TKey[] keys = _keys;
        int[] order = _order;
        double[] data = _data;
        int i = 0;
        for (int r = 0; r < rounds; r++)
        {
            for (int j = 0; j < keys.Length; j++, i++)
            {
                ref SeriesStep? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(raw, keys[order[i]], out bool exists);
                if (!exists)
                {
                    slot = new SeriesStep(new MovingAverageOptions(12));
                }

                check += slot!.Step(data[i & 4095]);
            }
        }

        return check;
    }

    private double EngineSeriesStateRounds(int rounds)
    {
        Dictionary<TKey, SeriesState<TKey>> series = _series;
        SeriesOptions options = _options;
        PeriodCalendar calendar = options.Calendar;
        DiscardingOutput<TKey> sink = _sink;
        TKey[] keys = _keys;
        int[] order = _order;
        double[] data = _data;
        int i = 0;
        for (int r = 0; r < rounds; r++, _round++)
        {
            var time = new DateTimeOffset(s_t0 + (_round * TimeSpan.TicksPerSecond) + (TimeSpan.TicksPerSecond / 2), TimeSpan.Zero);
            for (int j = 0; j < keys.Length; j++, i++)
            {
                // As Partition.Observe: one lookup that adds the series when the key is new, then the period of the event.
                TKey key = keys[order[i]];
                ref SeriesState<TKey>? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(series, key, out bool exists);
                if (!exists)
                {
                    slot = new SeriesState<TKey>(key, options, 0);
                }

                if (!calendar.TryPeriodOf(time, out long period))
                {
                    throw new InvalidOperationException("The benchmark's event times are inside the calendar's range.");
                }

                slot!.Observe(time, period, data[i & 4095], null, 0, sink);
            }
        }

        return sink.Check;
    }

    private void Common()
    {
        _keys = new TKey[Keys];
        for (int i = 0; i < Keys; i++)
        {
            _keys[i] = typeof(TKey) == typeof(string) ? (TKey)(object)Workload.StringKey(i) : (TKey)(object)Workload.LongKey(i);
        }

        _order = Workload.ShuffledRounds(Keys, Ops / Keys, seed: 6);
        _data = Workload.Demand(4096, seed: 7);
        _round = 0;
    }
}

/// <summary>Receives the engine's per-key output and keeps only a checksum (no queue, no subscriber).</summary>
internal sealed class DiscardingOutput<TKey> : ISeriesOutput<TKey>
{
    public SeriesCounters Counters { get; } = new();

    public double Check { get; private set; }

    public void Forecast(in ForecastUpdate<TKey> update) => Check += update.Next.Value;

    public void Alert(in DriftAlert<TKey> alert) => Check += 1;

    public void Fault(in SeriesFault<TKey> fault) => throw new InvalidOperationException(fault.Message);
}

/// <summary>Twelve doubles inline: the ring of an MA(12) inside a struct.</summary>
[InlineArray(12)]
internal struct Ring12
{
    private double _element;
}

/// <summary>An MA(12) state held by value in an array slot: the ring, its sum and the next index.</summary>
internal struct MovingAverageSlot
{
    private Ring12 _ring;
    private double _sum;
    private int _next;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Push(double x)
    {
        int next = _next;
        _sum += x - _ring[next];
        _ring[next] = x;
        _next = next == 11 ? 0 : next + 1;
        return _sum / 12;
    }
}
