using BenchmarkDotNet.Running;

// Run all:      dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- --filter '*'
// Quick check:  dotnet run -c Release --project benchmarks/StreamForecast.Benchmarks -- --filter '*' --job Dry
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);

/// <summary>Entry point holder for the benchmark switcher.</summary>
internal sealed partial class Program;
