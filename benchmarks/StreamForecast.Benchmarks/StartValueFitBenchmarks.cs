using BenchmarkDotNet.Attributes;
using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Benchmarks;

/// <summary>
/// The time to fit Holt-Winters to one monthly history of 336 periods (28 seasons of 12), with the start from the first two
/// seasons (the fitter's default) and with the start level, trend and indices fitted with the weights
/// (<c>fitStartValues: true</c>). The history is invented: a chain of bakeries' monthly flour orders, a level of 400 rising by
/// 0.8 a month, a yearly swing of ±30 and noise (fixed seed).
/// </summary>
[MemoryDiagnoser]
public class StartValueFitBenchmarks
{
    private double[] _history = [];

    /// <summary>Additive or multiplicative seasonality.</summary>
    [Params(Seasonality.Additive, Seasonality.Multiplicative)]
    public Seasonality Seasonality { get; set; }

    /// <summary>Generates the history.</summary>
    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(23);
        _history = new double[336];
        for (int t = 0; t < _history.Length; t++)
        {
            _history[t] = 400 + (0.8 * t) + (30 * Math.Sin(2 * Math.PI * t / 12)) + (10 * (random.NextDouble() - 0.5));
        }
    }

    /// <summary>Weights only; start from the first two seasons.</summary>
    /// <returns>The fit, so the work is not removed.</returns>
    [Benchmark(Baseline = true)]
    public FittedMethod FixedStart() => MethodFitter.FitHoltWinters(_history, 12, Seasonality);

    /// <summary>Weights and start values together.</summary>
    /// <returns>The fit, so the work is not removed.</returns>
    [Benchmark]
    public FittedMethod FittedStart() => MethodFitter.FitHoltWinters(_history, 12, Seasonality, fitStartValues: true);
}
