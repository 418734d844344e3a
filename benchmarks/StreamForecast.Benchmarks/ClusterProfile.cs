using System.Diagnostics;
using System.Globalization;

namespace StreamForecast.Benchmarks;

/// <summary>
/// The <see cref="ClusterThroughputBenchmarks"/> workload as a plain program, to profile (for example under
/// <c>dotnet-trace collect --profile cpu-sampling</c>): one cluster case, a number of rounds at one batch size, and the
/// time per observation of the rounds after the warm-up.
/// </summary>
internal static class ClusterProfile
{
    /// <summary>Runs <paramref name="rounds"/> invocations of one case.</summary>
    /// <param name="store">sqlite, postgresql or engine.</param>
    /// <param name="batch">The batch size (1,000 or 4,000).</param>
    /// <param name="rounds">Invocations after the setup's warm-up.</param>
    /// <returns>0.</returns>
    public static int Run(string store, int batch, int rounds)
    {
        var bench = new ClusterThroughputBenchmarks { Batch = batch };
        Action invoke;
        switch (store)
        {
            case "sqlite":
                bench.SetupCluster();
                invoke = bench.ThreeSiloCluster;
                break;
            case "postgresql":
                bench.SetupClusterPostgreSql();
                invoke = bench.ThreeSiloClusterPostgreSql;
                break;
            default:
                bench.SetupEngine();
                invoke = bench.SingleProcessEngine;
                break;
        }

        try
        {
            using var process = Process.GetCurrentProcess();
            process.Refresh();
            TimeSpan cpuBefore = process.TotalProcessorTime;
            long allocatedBefore = GC.GetTotalAllocatedBytes(precise: true);
            var watch = Stopwatch.StartNew();
            for (int r = 0; r < rounds; r++)
            {
                invoke();
            }

            double perObservation = watch.Elapsed.TotalMicroseconds / ((double)rounds * 4_000);
            double allocated = (GC.GetTotalAllocatedBytes(precise: true) - allocatedBefore) / ((double)rounds * 4_000);
            process.Refresh();
            double cpuPerRound = (process.TotalProcessorTime - cpuBefore).TotalMilliseconds / rounds;
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{store} batch {batch}: {perObservation:F2} µs per observation over {rounds} rounds; process CPU {cpuPerRound:F1} ms per round; {allocated:F0} B allocated per observation (every thread)"));
            if (bench.AverageStoredStateBytes() is > 0 and double stateBytes)
            {
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"bucket state stored per write: {stateBytes:F0} B on average (the rows the store keeps)"));
            }
        }
        finally
        {
            bench.Cleanup();
        }

        return 0;
    }
}
