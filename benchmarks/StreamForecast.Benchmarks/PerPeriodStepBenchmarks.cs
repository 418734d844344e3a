using BenchmarkDotNet.Attributes;
using StreamForecast.Forecasting;

namespace StreamForecast.Benchmarks;

/// <summary>
/// One full per-period step of a series (forecast scored, error statistics, tracking signal, alert rule check, next
/// forecast with its interval) against the bare ring-buffer update, for the moving average and the linearly weighted
/// average at n = 3 … 365. The step should cost the same at every n. State is sized once; each invocation processes
/// <see cref="Steps"/> periods.
/// </summary>
[MemoryDiagnoser]
public class PerPeriodStepBenchmarks
{
    private const int Steps = 4096;

    private double[] _data = [];
    private BareRing _ring = null!;
    private Forecaster _forecaster = null!;
    private SeriesStep _step = null!;

    /// <summary>The average: "MA" (moving average) or "LinearWMA" (weights n … 1).</summary>
    [Params("MA", "LinearWMA")]
    public string Average { get; set; } = "MA";

    /// <summary>The window length n.</summary>
    [Params(3, 12, 52, 365)]
    public int N { get; set; }

    /// <summary>Generates the input and warms every contender past the window length and the rule's warm-up.</summary>
    [GlobalSetup]
    public void Setup()
    {
        _data = Workload.Demand(Steps, seed: 2);
        _ring = new BareRing(N);
        _forecaster = Workload.Method(Average, N).CreateForecaster();
        _step = new SeriesStep(Workload.Method(Average, N));
        for (int i = 0; i < N + 16; i++)
        {
            double x = _data[i % Steps];
            _ring.Push(x);
            _forecaster.Update(x);
            _step.Step(x);
        }
    }

    /// <summary>The floor: a bare ring buffer with an uncompensated rolling sum.</summary>
    /// <returns>A checksum of the averages.</returns>
    [Benchmark(Baseline = true, OperationsPerInvoke = Steps)]
    public double BareRingBuffer()
    {
        double check = 0;
        BareRing ring = _ring;
        double[] data = _data;
        for (int i = 0; i < data.Length; i++)
        {
            check += ring.Push(data[i]);
        }

        return check;
    }

    /// <summary>The forecaster alone: update, then read the next forecast.</summary>
    /// <returns>A checksum of the forecasts.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double ForecasterOnly()
    {
        double check = 0;
        Forecaster f = _forecaster;
        double[] data = _data;
        for (int i = 0; i < data.Length; i++)
        {
            f.Update(data[i]);
            check += f.Forecast();
        }

        return check;
    }

    /// <summary>The full per-period step (see <see cref="SeriesStep"/>).</summary>
    /// <returns>A checksum of the step results.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double FullStep()
    {
        double check = 0;
        SeriesStep step = _step;
        double[] data = _data;
        for (int i = 0; i < data.Length; i++)
        {
            check += step.Step(data[i]);
        }

        return check;
    }
}
