using System.Collections.Immutable;
using System.Diagnostics;
using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Issue 15, target 5, as one wall-clock run (the <c>tune-rate</c> mode): <see cref="SeriesTuner.TuneMany{TKey}"/> over the
/// invented two-year daily histories of <see cref="TuningWorkload"/> on 1 and 2 workers, printing series per second, the
/// load average before and after, the average backtest RMSE and MASE (one step ahead) of the chosen methods, and a
/// fingerprint of every chosen method and score, so a faster build can be checked to choose exactly the same. The
/// BenchmarkDotNet classes (<see cref="TuningBenchmarks"/>, <see cref="CandidateFamilyBenchmarks"/>) are the measurement of
/// record; this mode is the quick check while changing the code.
/// </summary>
internal static class TuningRate
{
    public static int Run(int count, bool fitStartValues, int[] degrees)
    {
        KeyValuePair<string, double[]>[] histories = TuningWorkload.Generate(count);
        SeriesTuner.TuneMany(histories[..Math.Min(4, count)], TuningWorkload.Options(2, fitStartValues)); // JIT warm-up
        string fingerprint = "";
        foreach (int degree in degrees)
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"load average before: {LoadAverage()}"));
            TimeSpan cpu = Process.GetCurrentProcess().TotalProcessorTime;
            var clock = Stopwatch.StartNew();
            ImmutableArray<KeyValuePair<string, TuningResult>> results = SeriesTuner.TuneMany(histories, TuningWorkload.Options(degree, fitStartValues));
            clock.Stop();
            cpu = Process.GetCurrentProcess().TotalProcessorTime - cpu;
            (double rmse, double mase) = TuningWorkload.AverageChosenError(results);
            string print = Fingerprint(results);
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{count} series, fitStartValues={fitStartValues}, {degree} worker(s): {clock.Elapsed.TotalSeconds:F2} s, {count / clock.Elapsed.TotalSeconds:F1} series/s, CPU {cpu.TotalMilliseconds / count:F2} ms per series; average chosen RMSE {rmse:R}, MASE {mase:R}; fingerprint {print}; load average after: {LoadAverage()}"));
            if (fingerprint.Length > 0 && fingerprint != print)
            {
                Console.WriteLine("the fingerprints differ between worker counts");
                return 1;
            }

            fingerprint = print;
        }

        if (!fitStartValues)
        {
            PrintEvaluations(Math.Min(count, 100));
        }


        return 0;
    }

    /// <summary>
    /// Objective evaluations (runs of a forecaster over the fitting window) per fit, averaged over the regular-sales series
    /// among the first <paramref name="count"/>: a count that does not depend on the machine's load.
    /// </summary>
    private static void PrintEvaluations(int count)
    {
        (string Name, Func<double[], FittedMethod> Fit)[] families =
        [
            ("exponential smoothing", w => MethodFitter.FitExponentialSmoothing(w)),
            ("Holt", w => MethodFitter.FitHolt(w)),
            ("Holt damped", w => MethodFitter.FitHolt(w, damped: true)),
            ("Holt-Winters additive", w => MethodFitter.FitHoltWinters(w, 7)),
            ("Holt-Winters additive damped", w => MethodFitter.FitHoltWinters(w, 7, damped: true)),
            ("Holt-Winters multiplicative", w => MethodFitter.FitHoltWinters(w, 7, Seasonality.Multiplicative)),
            ("Holt-Winters multiplicative damped", w => MethodFitter.FitHoltWinters(w, 7, Seasonality.Multiplicative, damped: true)),
        ];
        foreach ((string name, Func<double[], FittedMethod> fit) in families)
        {
            long evaluations = 0;
            int fits = 0;
            for (int i = 0; i < count; i++)
            {
                if (i % 8 != 7)
                {
                    evaluations += fit(TuningWorkload.Series(i)[..(TuningWorkload.Days / 2)]).Evaluations;
                    fits++;
                }
            }

            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{name}: {(double)evaluations / fits:F1} evaluations per fit ({fits} fits)"));
        }
    }

    private static string Fingerprint(ImmutableArray<KeyValuePair<string, TuningResult>> results)
    {
        ulong hash = 14695981039346656037; // FNV-1a, 64 bits: the same in every process
        var methods = new Dictionary<string, int>();
        foreach (KeyValuePair<string, TuningResult> pair in results)
        {
            string name = pair.Value.Method.ToString() ?? "";
            foreach (char c in name + "|" + BitConverter.DoubleToInt64Bits(pair.Value.Chosen.Score).ToString(CultureInfo.InvariantCulture))
            {
                hash = (hash ^ c) * 1099511628211;
            }
            methods[pair.Value.Method.GetType().Name] = methods.GetValueOrDefault(pair.Value.Method.GetType().Name) + 1;
        }

        var parts = new List<string>();
        foreach (KeyValuePair<string, int> m in methods.OrderBy(m => m.Key, StringComparer.Ordinal))
        {
            parts.Add($"{m.Key}×{m.Value}");
        }

        return string.Create(CultureInfo.InvariantCulture, $"{hash:X16} ({string.Join(", ", parts)})");
    }

    private static string LoadAverage() =>
        File.Exists("/proc/loadavg") ? string.Join(' ', File.ReadAllText("/proc/loadavg").Split(' ').Take(3)) : "n/a";
}
