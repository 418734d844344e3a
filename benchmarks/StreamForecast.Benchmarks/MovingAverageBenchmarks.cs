using BenchmarkDotNet.Attributes;
using StreamForecast.Forecasting;

namespace StreamForecast.Benchmarks;

/// <summary>
/// One moving-average update plus reading the next forecast, against the floor (a bare ring-buffer rolling sum)
/// and against recomputing the window from scratch each period (a plain loop and LINQ).
/// Each invocation processes <see cref="Steps"/> periods of a pre-generated series; state is sized once.
/// </summary>
[MemoryDiagnoser]
public class MovingAverageBenchmarks
{
    private const int Steps = 4096;

    private double[] _data = [];
    private Forecaster _ours = null!;
    private double[] _ring = [];
    private double _ringSum;
    private int _ringNext;
    private List<double> _history = [];

    /// <summary>The window length n.</summary>
    [Params(3, 12, 52, 365)]
    public int N { get; set; }

    /// <summary>Generates the input and warms every contender.</summary>
    [GlobalSetup]
    public void Setup()
    {
        var rng = new Random(1);
        _data = new double[Steps];
        for (int i = 0; i < Steps; i++)
        {
            _data[i] = 100 + (rng.NextDouble() * 20);
        }

        _ours = new MovingAverageOptions(N).CreateForecaster();
        _ring = new double[N];
        _history = new List<double>(N + Steps);
        for (int i = 0; i < N; i++)
        {
            _ours.Update(_data[i]);
            _ring[i] = _data[i];
            _ringSum += _data[i];
            _history.Add(_data[i]);
        }
    }

    /// <summary>The floor: a bare ring buffer with an uncompensated rolling sum.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Steps)]
    public double BareRingBuffer()
    {
        double check = 0;
        double[] ring = _ring;
        for (int i = 0; i < Steps; i++)
        {
            double x = _data[i];
            _ringSum += x - ring[_ringNext];
            ring[_ringNext] = x;
            _ringNext = _ringNext + 1 == ring.Length ? 0 : _ringNext + 1;
            check += _ringSum / ring.Length;
        }

        return check;
    }

    /// <summary>StreamForecast's moving average: update and read the forecast.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double StreamForecastMovingAverage()
    {
        double check = 0;
        for (int i = 0; i < Steps; i++)
        {
            _ours.Update(_data[i]);
            check += _ours.Forecast();
        }

        return check;
    }

    /// <summary>Recompute the window mean with a plain loop every period.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double PlainLoopRecompute()
    {
        double check = 0;
        double[] ring = _ring;
        for (int i = 0; i < Steps; i++)
        {
            ring[_ringNext] = _data[i];
            _ringNext = _ringNext + 1 == ring.Length ? 0 : _ringNext + 1;
            double sum = 0;
            for (int j = 0; j < ring.Length; j++)
            {
                sum += ring[j];
            }

            check += sum / ring.Length;
        }

        return check;
    }

    /// <summary>Recompute the window mean with LINQ (<c>Skip/Take/Average</c>) over the history every period.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double LinqRecompute()
    {
        double check = 0;
        for (int i = 0; i < Steps; i++)
        {
            _history.Add(_data[i]);
            check += _history.Skip(_history.Count - N).Take(N).Average();
        }

        _history.RemoveRange(0, Steps); // keep only the last n: state does not grow across invocations
        return check;
    }
}
