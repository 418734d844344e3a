using System.Collections.Immutable;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Orleans;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.ClusterNode;

/// <summary>
/// What every node and every client of the sample cluster must agree on: the series rules and the bucket layout. An
/// invented fleet of sensors reporting readings keyed by sensor name; hourly totals forecast by a 4-hour moving average,
/// with a tracking-signal rule and a CUSUM rule on the errors.
/// </summary>
public static class ClusterNodeSetup
{
    /// <summary>The series rules the buckets run (and a single-process engine would run on the same input).</summary>
    /// <returns>New engine options.</returns>
    public static ForecastEngineOptions<string> EngineOptions() => new(
        new SeriesOptions(
            new MovingAverageOptions(4),
            PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)),
            lateness: new LatenessPolicy(TimeSpan.FromMinutes(90), restatementPeriods: 2),
            rules: ImmutableArray.Create<DriftRuleOptions>(new TrackingSignalRuleOptions(), new CusumRuleOptions()),
            duplicateWindow: 64),
        keyComparer: StringComparer.Ordinal,
        partitions: 2);

    /// <summary>The bucket layout and the client's retry policy; the bucket count must be the same on every node and client.</summary>
    /// <returns>New cluster options.</returns>
    public static ForecastClusterOptions ClusterOptions() => new(
        bucketCount: 16,
        retryDelay: TimeSpan.FromMilliseconds(100),
        maxRetryDelay: TimeSpan.FromSeconds(1),
        maxAttempts: 60);
}
