using System.Collections.Immutable;
using BenchmarkDotNet.Attributes;
using StreamForecast.Selection;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Issue 15, target 5: <see cref="SeriesTuner.TuneMany{TKey}"/> over invented two-year daily histories
/// (<see cref="TuningWorkload"/>, season 7, today's default candidates) on one worker (the baseline) and on two, and on two
/// with fitted Holt-Winters start values (<see cref="TuningOptions.FitStartValues"/>). One invocation tunes every series, so
/// series per second = <see cref="Series"/> / mean time, and the two-worker ratio is the scaling from one core to two.
/// </summary>
[MemoryDiagnoser]
public class TuningBenchmarks
{
    private KeyValuePair<string, double[]>[] _histories = [];

    /// <summary>The number of series tuned per invocation.</summary>
    [ParamsSource(nameof(SeriesCounts))]
    public int Series { get; set; }

    /// <summary>
    /// 1,000 series, or STREAMFORECAST_TUNING_SERIES when set (at a high load average an in-process run of 1,000 series
    /// exceeds BenchmarkDotNet's in-process time limit); only 4 when STREAMFORECAST_BENCH_SMOKE=1 (the CI dry run, which must
    /// stay short).
    /// </summary>
    public static IEnumerable<int> SeriesCounts => TuningWorkload.Smoke
        ? [4]
        : [int.Parse(Environment.GetEnvironmentVariable("STREAMFORECAST_TUNING_SERIES") ?? "1000", System.Globalization.CultureInfo.InvariantCulture)];

    /// <summary>Generates the histories.</summary>
    [GlobalSetup]
    public void Setup() => _histories = TuningWorkload.Generate(Series);

    /// <summary>Today's candidates on one worker.</summary>
    /// <returns>The results, so the work is not removed.</returns>
    [Benchmark(Baseline = true)]
    public ImmutableArray<KeyValuePair<string, TuningResult>> OneWorker() => SeriesTuner.TuneMany(_histories, TuningWorkload.Options(1));

    /// <summary>Today's candidates on two workers.</summary>
    /// <returns>The results, so the work is not removed.</returns>
    [Benchmark]
    public ImmutableArray<KeyValuePair<string, TuningResult>> TwoWorkers() => SeriesTuner.TuneMany(_histories, TuningWorkload.Options(2));

    /// <summary>With fitted Holt-Winters start values, on two workers.</summary>
    /// <returns>The results, so the work is not removed.</returns>
    [Benchmark]
    public ImmutableArray<KeyValuePair<string, TuningResult>> TwoWorkersFittedStarts() =>
        SeriesTuner.TuneMany(_histories, TuningWorkload.Options(2, fitStartValues: true));
}
