using System.Reactive.Linq;
using System.Reactive.Subjects;
using BenchmarkDotNet.Attributes;
using MathNet.Numerics.Statistics;
using StreamForecast.Forecasting;

namespace StreamForecast.Benchmarks;

/// <summary>
/// What every window benchmark shares: the pre-generated series, the floor (a bare ring buffer) as the baseline,
/// StreamForecast's moving average and its full per-period step. Each invocation processes <see cref="Steps"/>
/// periods; every state is sized once in the setup and stays bounded (ring buffers), so nothing grows across iterations.
/// </summary>
[MemoryDiagnoser]
public abstract class WindowBenchmarkBase
{
    /// <summary>Periods processed per invocation.</summary>
    protected const int Steps = 4096;

    private BareRing _ring = null!;
    private Forecaster _ours = null!;
    private SeriesStep _step = null!;

    /// <summary>The window length n.</summary>
    public abstract int N { get; set; }

    /// <summary>The pre-generated series.</summary>
    protected double[] Data { get; private set; } = [];

    /// <summary>Generates the input and warms every contender with one window of data.</summary>
    [GlobalSetup]
    public void Setup()
    {
        Data = Workload.Demand(Steps, seed: 1);
        _ring = new BareRing(N);
        _ours = new MovingAverageOptions(N).CreateForecaster();
        _step = new SeriesStep(new MovingAverageOptions(N));
        for (int i = 0; i < N; i++)
        {
            double x = Data[i % Steps];
            _ring.Push(x);
            _ours.Update(x);
            _step.Step(x);
        }

        SetupBaselines();
    }

    /// <summary>The floor: a bare ring buffer with an uncompensated rolling sum.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Steps)]
    public double BareRingBuffer()
    {
        double check = 0;
        BareRing ring = _ring;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            check += ring.Push(data[i]);
        }

        return check;
    }

    /// <summary>StreamForecast's moving average: update and read the forecast.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double StreamForecastMovingAverage()
    {
        double check = 0;
        Forecaster ours = _ours;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            ours.Update(data[i]);
            check += ours.Forecast();
        }

        return check;
    }

    /// <summary>StreamForecast's full per-period step with a moving average (see <see cref="SeriesStep"/>).</summary>
    /// <returns>A checksum of the step results.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double StreamForecastFullStep()
    {
        double check = 0;
        SeriesStep step = _step;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            check += step.Step(data[i]);
        }

        return check;
    }

    /// <summary>Creates the baselines of the derived class.</summary>
    protected abstract void SetupBaselines();
}

/// <summary>Moving average against recomputing the window from scratch each period (a plain loop and LINQ).</summary>
public class MovingAverageBenchmarks : WindowBenchmarkBase
{
    private double[] _window = [];
    private int _windowNext;
    private List<double> _history = [];

    /// <inheritdoc/>
    [Params(3, 12, 52, 365)]
    public override int N { get; set; }

    /// <summary>Recompute the window mean with a plain loop every period.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double PlainLoopRecompute()
    {
        double check = 0;
        double[] window = _window;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            window[_windowNext] = data[i];
            _windowNext = _windowNext + 1 == window.Length ? 0 : _windowNext + 1;
            double sum = 0;
            for (int j = 0; j < window.Length; j++)
            {
                sum += window[j];
            }

            check += sum / window.Length;
        }

        return check;
    }

    /// <summary>Recompute the window mean with LINQ (<c>Skip/Take/Average</c>) over the history every period.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double LinqRecompute()
    {
        double check = 0;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            _history.Add(data[i]);
            check += _history.Skip(_history.Count - N).Take(N).Average();
        }

        _history.RemoveRange(0, Steps); // keep only the last n: the history does not grow across invocations
        return check;
    }

    /// <inheritdoc/>
    protected override void SetupBaselines()
    {
        _window = new double[N];
        _history = new List<double>(N + Steps);
        for (int i = 0; i < N; i++)
        {
            _window[i] = Data[i % Steps];
            _history.Add(Data[i % Steps]);
        }
    }
}

/// <summary>Moving average against System.Reactive's <c>Buffer(n, 1).Select(b =&gt; b.Average())</c>, one value per period.</summary>
public class ReactiveBufferBenchmarks : WindowBenchmarkBase
{
    private Subject<double> _source = null!;
    private IDisposable? _subscription;
    private double _rxCheck;

    /// <inheritdoc/>
    [Params(3, 12, 52)]
    public override int N { get; set; }

    /// <summary>Push each value through <c>Buffer(n, 1).Select(Average)</c> into a subscriber.</summary>
    /// <returns>A checksum of the averages.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double RxBufferAverage()
    {
        Subject<double> source = _source;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            source.OnNext(data[i]);
        }

        return _rxCheck;
    }

    /// <summary>Ends the Rx subscription.</summary>
    [GlobalCleanup]
    public void Cleanup() => _subscription?.Dispose();

    /// <inheritdoc/>
    protected override void SetupBaselines()
    {
        _source = new Subject<double>();

        // Buffer(n, 1) keeps at most n open buffers of at most n values: bounded state across iterations.
        _subscription = _source.Buffer(N, 1).Select(b => b.Average()).Subscribe(v => _rxCheck += v);
        for (int i = 0; i < N; i++)
        {
            _source.OnNext(Data[i % Steps]);
        }
    }
}

/// <summary>Moving average against MathNet.Numerics <c>MovingStatistics</c> (push, then read the mean).</summary>
public class MathNetMovingStatisticsBenchmarks : WindowBenchmarkBase
{
    private MovingStatistics _stats = null!;

    /// <inheritdoc/>
    [Params(12, 52)]
    public override int N { get; set; }

    /// <summary>MathNet's moving statistics: push a value and read the mean.</summary>
    /// <returns>A checksum of the means.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double MathNetMovingStatistics()
    {
        double check = 0;
        MovingStatistics stats = _stats;
        double[] data = Data;
        for (int i = 0; i < data.Length; i++)
        {
            stats.Push(data[i]);
            check += stats.Mean;
        }

        return check;
    }

    /// <inheritdoc/>
    protected override void SetupBaselines()
    {
        _stats = new MovingStatistics(N);
        for (int i = 0; i < N; i++)
        {
            _stats.Push(Data[i % Steps]);
        }
    }
}
