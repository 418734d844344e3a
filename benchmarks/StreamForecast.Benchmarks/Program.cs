using BenchmarkDotNet.Running;
using StreamForecast.Benchmarks;

// Full run (one class at a time, see benchmarks/README.md):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- --filter '*PerPeriodStep*' --job short
// Quick check that everything builds and runs:
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- --filter '*' --job Dry
// Bytes per series at 1M series (heap before and after building the states):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- memory
// The keyed paths as a plain program, for valgrind (see benchmarks/README.md):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- keyed-sim <engine|dictionary> <keys> <rounds>
// Updates a no-op push subscriber loses at the engine's full rate (default buffer, one partition; issue 15 target 1):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- drops [observations] [keys]
// Series per second of SeriesTuner.TuneMany on invented two-year daily histories, 1 and 2 workers (issue 15 target 5):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- tune-rate [series] [fit-starts|today] [workers, e.g. 1,2]
// The EngineThroughputBenchmarks workload (one partition) as a plain program, for valgrind (see benchmarks/README.md):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- engine-instructions <keys> <rounds> [warm rounds]
// The ClusterThroughputBenchmarks workload as a plain program, to profile (issue 15 target 4):
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- cluster-profile <sqlite|postgresql|engine> <batch> <rounds>
// Charts from the result CSVs of a run:
//   dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- chart <results folder> <output folder>
if (args.Length > 0 && args[0] == "memory")
{
    return await MemoryFootprint.RunAsync(args.Length > 1 ? int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 1_000_000).ConfigureAwait(false);
}

if (args.Length > 0 && args[0] == "drops")
{
    return await SubscriberDrops.RunAsync(
        args.Length > 1 ? int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 10_000_000,
        args.Length > 2 ? int.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture) : 2_000_000).ConfigureAwait(false);
}

if (args.Length == 4 && args[0] == "keyed-sim")
{
    return KeyedSimulation.Run(args[1], int.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture), int.Parse(args[3], System.Globalization.CultureInfo.InvariantCulture));
}

if (args.Length > 0 && args[0] == "tune-rate")
{
    return TuningRate.Run(
        args.Length > 1 ? int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 1_000,
        args.Length > 2 && args[2] == "fit-starts",
        args.Length > 3 ? [.. args[3].Split(',').Select(a => int.Parse(a, System.Globalization.CultureInfo.InvariantCulture))] : [1, 2]);
}

if (args.Length is 3 or 4 && args[0] == "engine-instructions")
{
    return await EngineInstructions.RunAsync(
        int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture),
        int.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture),
        args.Length > 3 ? int.Parse(args[3], System.Globalization.CultureInfo.InvariantCulture) : 1).ConfigureAwait(false);
}

if (args.Length == 4 && args[0] == "cluster-profile")
{
    return ClusterProfile.Run(args[1], int.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture), int.Parse(args[3], System.Globalization.CultureInfo.InvariantCulture));
}

if (args.Length > 0 && args[0] == "chart")
{
    return Charts.Render(args.Length > 1 ? args[1] : "BenchmarkDotNet.Artifacts/results", args.Length > 2 ? args[2] : "benchmarks");
}

BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
return 0;

/// <summary>Entry point holder for the benchmark switcher.</summary>
internal sealed partial class Program;
