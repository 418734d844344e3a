using BenchmarkDotNet.Attributes;
using Microsoft.Extensions.DependencyInjection;
using Orleans.Serialization;
using StreamForecast.Orleans;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// The cost of one bucket output in the Orleans cluster (issue 15, target 4): written and read in the compact form a
/// bucket stores it in (<c>BucketOutputWriter</c> / <c>BucketOutputReader</c>), against Orleans' field-by-field
/// serialization through the surrogates (what the bucket stored before, and what a subscriber's message still costs on
/// each side). The output is shaped like the cluster benchmark's: 83 updates of one period, string keys, MA(12) with
/// error statistics; invented values.
/// </summary>
[MemoryDiagnoser]
public class StoredOutputBenchmarks
{
    private readonly Serializer _serializer = new ServiceCollection().AddSerializer().BuildServiceProvider().GetRequiredService<Serializer>();
    private readonly BucketOutputWriter<string> _writer = new(SnapshotKeyCodecs.Utf8String);
    private BucketOutput<string> _output = null!;
    private byte[] _compact = [];
    private byte[] _orleans = [];

    /// <summary>Builds the output and both encoded forms.</summary>
    [GlobalSetup]
    public void Setup()
    {
        double[] demand = Workload.Demand(83 * 14, seed: 5);
        var start = new DateTimeOffset(2024, 1, 1, 13, 0, 0, TimeSpan.Zero);
        var forecasts = new ForecastUpdate<string>[83];
        for (int i = 0; i < forecasts.Length; i++)
        {
            int d = i * 14;
            var next = new ForecastPoint(1, demand[d], demand[d] - demand[d + 1], demand[d] + demand[d + 1]);
            var errors = new ErrorSummary(
                40, demand[d + 2] - 100, demand[d + 3] / 10, demand[d + 4] / 10, demand[d + 5], demand[d + 6] / 50, demand[d + 7] / 9,
                demand[d + 8] / 100, demand[d + 9] / 40, demand[d + 10] / 200, demand[d + 11] / 8);
            forecasts[i] = new ForecastUpdate<string>(
                Workload.StringKey(i * 12), 13, start, demand[d + 12], false, demand[d + 13], demand[d + 12] - demand[d + 13], next, next, errors, "MA(12)", false);
        }

        _output = new BucketOutput<string>(5, 40, 81, forecasts, [], []);
        _compact = _writer.Write(_output);
        _orleans = _serializer.SerializeToArray(_output);
    }

    /// <summary>Orleans serialization through the surrogates (the stored form before; each message today).</summary>
    /// <returns>The bytes.</returns>
    [Benchmark(Baseline = true)]
    public byte[] OrleansWrite() => _serializer.SerializeToArray(_output);

    /// <summary>The compact stored form.</summary>
    /// <returns>The bytes.</returns>
    [Benchmark]
    public byte[] CompactWrite() => _writer.Write(_output);

    /// <summary>Orleans deserialization.</summary>
    /// <returns>The output.</returns>
    [Benchmark]
    public BucketOutput<string> OrleansRead() => _serializer.Deserialize<BucketOutput<string>>(_orleans)!;

    /// <summary>Reading the compact form.</summary>
    /// <returns>The output.</returns>
    [Benchmark]
    public BucketOutput<string> CompactRead() => BucketOutputReader.Read(_compact, SnapshotKeyCodecs.Utf8String);
}
