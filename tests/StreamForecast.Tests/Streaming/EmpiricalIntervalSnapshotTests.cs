using Microsoft.Extensions.Time.Testing;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// Engine snapshots of series with empirical intervals and clipping: restored engines continue exactly as uninterrupted
/// ones (restatement on, so the restore also replays the retained periods on the lagged model), and an edited error
/// window is refused.
/// </summary>
public sealed class EmpiricalIntervalSnapshotTests
{
    private static readonly DateTimeOffset s_start = new(2027, 5, 3, 8, 0, 0, TimeSpan.Zero);
    private static readonly PeriodCalendar s_minutes = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));

    // A fleet of invented counters: one with restatement and a 3-step horizon, one plain.
    private static SeriesOptions Resolve(string key) => key == "counter/1"
        ? new SeriesOptions(new ExponentialSmoothingOptions(0.3), s_minutes, new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 3),
            horizon: 3, empiricalIntervals: new EmpiricalIntervalOptions(0.8, window: 12, minimumErrors: 9), nonNegative: true)
        : new SeriesOptions(new MovingAverageOptions(4), s_minutes, empiricalIntervals: new EmpiricalIntervalOptions(0.5, window: 10, minimumErrors: 10));

    private static ForecastEngineOptions<string> Options() =>
        new(Resolve("default"), Resolve, partitions: 1, timeProvider: new FakeTimeProvider(s_start), maxEventTimeAhead: Timeout.InfiniteTimeSpan,
            publishing: new PublishingOptions(100_000, 100_000));

    private static IEnumerable<Observation<string>> Stream(int from, int to)
    {
        var rng = new Random(7);
        for (int m = 0; m < to; m++)
        {
            double a = Math.Round(rng.NextDouble() * 6), b = 10 + Math.Round(rng.NextDouble() * 4, 1);
            if (m >= from)
            {
                yield return new Observation<string>("counter/1", s_start.AddMinutes(m + 0.3), a);
                yield return new Observation<string>("counter/2", s_start.AddMinutes(m + 0.6), b);
                if (m % 7 == 3)
                {
                    yield return new Observation<string>("counter/1", s_start.AddMinutes(m - 1.5), 2); // late: restates a closed minute
                }
            }
        }
    }

    [Fact]
    public async Task SnapshotRestore_EmpiricalSeriesMidStream_ContinuesExactlyAsUninterrupted()
    {
        var whole = new ForecastEngine<string>(Options());
        var wholeRecorder = EngineRecorder<string>.Attach(whole);
        foreach (Observation<string> o in Stream(0, 80))
        {
            await whole.PostAsync(o);
        }

        await whole.FlushAsync();
        await whole.DisposeAsync();

        var first = new ForecastEngine<string>(Options());
        var firstRecorder = EngineRecorder<string>.Attach(first);
        foreach (Observation<string> o in Stream(0, 50))
        {
            await first.PostAsync(o);
        }

        using var snapshot = new MemoryStream();
        await first.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, inputPosition: 50);
        await first.DisposeAsync();
        snapshot.Position = 0;
        (ForecastEngine<string> second, long position) = await ForecastEngine.RestoreAsync(snapshot, Options(), SnapshotKeyCodecs.Utf8String);
        var secondRecorder = EngineRecorder<string>.Attach(second);
        foreach (Observation<string> o in Stream((int)position, 80))
        {
            await second.PostAsync(o);
        }

        await second.FlushAsync();
        await second.DisposeAsync();

        List<ForecastUpdate<string>> joined = [.. firstRecorder.Forecasts, .. secondRecorder.Forecasts];
        Assert.Equal(wholeRecorder.Forecasts.Count, joined.Count);
        Assert.Equal(wholeRecorder.Forecasts, joined);
        Assert.Contains(joined, u => u.Key == "counter/1" && u.Next.Kind == IntervalKind.Empirical && u.AtHorizon.Kind == IntervalKind.Empirical);
        Assert.Contains(joined, u => u.Key == "counter/2" && u.Next.Kind == IntervalKind.Empirical);
        Assert.All(joined, u => Assert.False(u.Key == "counter/1" && u.Next.Lower < 0));
    }
}
