using System.Numerics.Tensors;
using BenchmarkDotNet.Attributes;
using StreamForecast.Forecasting;
using StreamForecast.Internal;

namespace StreamForecast.Benchmarks;

/// <summary>
/// The dot product behind an arbitrary-weight weighted moving average (window · weights, recomputed each period):
/// a plain scalar loop, the library's kernel (<c>VectorMath.Dot</c>, two <see cref="System.Numerics.Vector{T}"/>
/// accumulators once the window holds at least 4 vectors) and <see cref="TensorPrimitives.Dot(ReadOnlySpan{double}, ReadOnlySpan{double})"/>.
/// Also the whole arbitrary-weight forecaster update, which splits the ring into two spans per period.
/// Each invocation computes <see cref="Repeats"/> dot products over the same pre-generated arrays.
/// </summary>
[MemoryDiagnoser]
public class DotProductBenchmarks
{
    private const int Repeats = 1024;

    private double[] _window = [];
    private double[] _weights = [];
    private double[] _data = [];
    private Forecaster _wma = null!;

    /// <summary>The window length n.</summary>
    [Params(3, 8, 16, 52, 365)]
    public int N { get; set; }

    /// <summary>Generates the window, the weights and a warmed arbitrary-weight forecaster.</summary>
    [GlobalSetup]
    public void Setup()
    {
        _window = Workload.Demand(N, seed: 3);
        _weights = Workload.ArbitraryWeights(N, seed: 4);
        _data = Workload.Demand(Repeats, seed: 5);
        _wma = new WeightedMovingAverageOptions(_weights).CreateForecaster();
        for (int i = 0; i < N; i++)
        {
            _wma.Update(_window[i]);
        }
    }

    /// <summary>A plain scalar loop.</summary>
    /// <returns>The sum of the dot products.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Repeats)]
    public double PlainLoop()
    {
        double check = 0;
        double[] a = _window;
        double[] b = _weights;
        for (int r = 0; r < Repeats; r++)
        {
            double sum = 0;
            for (int i = 0; i < a.Length; i++)
            {
                sum += a[i] * b[i];
            }

            check += sum;
        }

        return check;
    }

    /// <summary>The library's <c>VectorMath.Dot</c>.</summary>
    /// <returns>The sum of the dot products.</returns>
    [Benchmark(OperationsPerInvoke = Repeats)]
    public double LibraryVectorKernel()
    {
        double check = 0;
        double[] a = _window;
        double[] b = _weights;
        for (int r = 0; r < Repeats; r++)
        {
            check += VectorMath.Dot(a, b);
        }

        return check;
    }

    /// <summary>System.Numerics.Tensors <c>TensorPrimitives.Dot</c>.</summary>
    /// <returns>The sum of the dot products.</returns>
    [Benchmark(OperationsPerInvoke = Repeats)]
    public double TensorPrimitivesDot()
    {
        double check = 0;
        double[] a = _window;
        double[] b = _weights;
        for (int r = 0; r < Repeats; r++)
        {
            check += TensorPrimitives.Dot(a, b);
        }

        return check;
    }

    /// <summary>The whole arbitrary-weight forecaster: push a value into the ring and recompute the forecast.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Repeats)]
    public double ArbitraryWeightForecasterUpdate()
    {
        double check = 0;
        Forecaster f = _wma;
        double[] data = _data;
        for (int r = 0; r < data.Length; r++)
        {
            f.Update(data[r]);
            check += f.Forecast();
        }

        return check;
    }
}
