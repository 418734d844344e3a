using BenchmarkDotNet.Attributes;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Tracking;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Where the per-period step's time goes, for MA(n): each method adds one part to the previous one — the forecaster
/// alone, + error statistics (<see cref="TrackedForecaster.Update"/>), + the tracking-signal rule check, + the next
/// forecast with its interval (the full step of <see cref="SeriesStep"/>). Baseline: the bare ring buffer.
/// </summary>
[MemoryDiagnoser]
public class StepBreakdownBenchmarks
{
    private const int Steps = 4096;

    private double[] _data = [];
    private BareRing _ring = null!;
    private Forecaster _forecaster = null!;
    private TrackedForecaster _tracked = null!;
    private TrackedForecaster _trackedWithRule = null!;
    private DriftRule _rule = null!;
    private SeriesStep _full = null!;

    /// <summary>The window length n.</summary>
    [Params(12, 365)]
    public int N { get; set; }

    /// <summary>Generates the input and warms every contender.</summary>
    [GlobalSetup]
    public void Setup()
    {
        _data = Workload.Demand(Steps, seed: 10);
        var method = new MovingAverageOptions(N);
        _ring = new BareRing(N);
        _forecaster = method.CreateForecaster();
        _tracked = new TrackedForecaster(method);
        _trackedWithRule = new TrackedForecaster(method);
        _rule = new TrackingSignalRuleOptions().CreateRule();
        _full = new SeriesStep(method);
        for (int i = 0; i < N + 16; i++)
        {
            double x = _data[i % Steps];
            _ring.Push(x);
            _forecaster.Update(x);
            _tracked.Update(x);
            _trackedWithRule.Update(x);
            _full.Step(x);
        }
    }

    /// <summary>The floor: a bare ring buffer with an uncompensated rolling sum.</summary>
    /// <returns>A checksum.</returns>
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

    /// <summary>The forecaster alone: update and read the forecast.</summary>
    /// <returns>A checksum.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double Forecaster()
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

    /// <summary>+ error statistics: score the period's forecast and update every error sum.</summary>
    /// <returns>A checksum.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double TrackedUpdate()
    {
        double check = 0;
        TrackedForecaster t = _tracked;
        double[] data = _data;
        for (int i = 0; i < data.Length; i++)
        {
            check += t.Update(data[i]).Error;
        }

        return check;
    }

    /// <summary>+ the tracking-signal rule check.</summary>
    /// <returns>A checksum.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double TrackedUpdateAndRule()
    {
        double check = 0;
        TrackedForecaster t = _trackedWithRule;
        DriftRule rule = _rule;
        double[] data = _data;
        for (int i = 0; i < data.Length; i++)
        {
            PeriodScore score = t.Update(data[i]);
            if (score.IsScored)
            {
                ErrorTracker e = t.Tracker;
                check += (int)rule.Evaluate(new DriftInput(score.Error, e.Sigma, e.TrackingSignal, e.TriggSignal)).Kind;
            }
        }

        return check;
    }

    /// <summary>+ the next forecast with its interval: the full step.</summary>
    /// <returns>A checksum.</returns>
    [Benchmark(OperationsPerInvoke = Steps)]
    public double FullStep()
    {
        double check = 0;
        SeriesStep step = _full;
        double[] data = _data;
        for (int i = 0; i < data.Length; i++)
        {
            check += step.Step(data[i]);
        }

        return check;
    }
}
