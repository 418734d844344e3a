using Orleans.Concurrency;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// What one applied call produced in one bucket. Outputs are numbered 1, 2, 3, … per bucket, the number stored with the
/// bucket before the output is sent, so a receiver spots repeats (a number seen before) and losses (a number skipped).
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[GenerateSerializer]
[Immutable]
[Alias("StreamForecast.Orleans.BucketOutput`1")]
public sealed class BucketOutput<TKey>
    where TKey : notnull
{
    /// <summary>Creates an output.</summary>
    /// <param name="bucket">The bucket.</param>
    /// <param name="number">The output's number in the bucket: one more than the previous output's.</param>
    /// <param name="sequence">The number of the applied call that produced it (calls without output have numbers too).</param>
    /// <param name="forecasts">Forecast updates, in per-key order.</param>
    /// <param name="alerts">Drift-alert transitions.</param>
    /// <param name="faults">Faults.</param>
    public BucketOutput(int bucket, long number, long sequence, ForecastUpdate<TKey>[] forecasts, DriftAlert<TKey>[] alerts, SeriesFault<TKey>[] faults)
    {
        Bucket = bucket;
        Number = number;
        Sequence = sequence;
        Forecasts = forecasts;
        Alerts = alerts;
        Faults = faults;
    }

    /// <summary>The bucket.</summary>
    [Id(0)]
    public int Bucket { get; }

    /// <summary>The number of the applied call that produced this output.</summary>
    [Id(1)]
    public long Sequence { get; }

    /// <summary>The output's number in the bucket (contiguous: 1, 2, 3, …).</summary>
    [Id(5)]
    public long Number { get; }

    /// <summary>Forecast updates, in per-key order.</summary>
    [Id(2)]
    public ForecastUpdate<TKey>[] Forecasts { get; }

    /// <summary>Drift-alert transitions.</summary>
    [Id(3)]
    public DriftAlert<TKey>[] Alerts { get; }

    /// <summary>Faults.</summary>
    [Id(4)]
    public SeriesFault<TKey>[] Faults { get; }
}
