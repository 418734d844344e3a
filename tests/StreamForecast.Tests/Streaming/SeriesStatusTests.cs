using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// <see cref="ForecastEngine{TKey}.GetSeriesStatusAsync"/>: what it reports is what the engine last published for each
/// series (behaviour checks on invented data, with the engine's own published updates and alerts as the reference).
/// </summary>
public sealed class SeriesStatusTests
{
    private static readonly DateTimeOffset s_origin = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    [Fact]
    public async Task GetSeriesStatusAsync_AfterPeriodsClose_MatchesEachSeriesLastUpdateAndItsOpenEpisodes()
    {
        var engine = new ForecastEngine<string>(Options(partitions: 3));
        var recorder = EngineRecorder<string>.Attach(engine);
        foreach (Observation<string> o in Stream())
        {
            await engine.PostAsync(o);
        }

        await engine.FlushAsync();
        IReadOnlyList<SeriesStatus<string>> statuses = await engine.GetSeriesStatusAsync();
        await engine.DisposeAsync(); // every published item delivered

        Assert.Equal(4, statuses.Count);
        foreach (SeriesStatus<string> status in statuses)
        {
            ForecastUpdate<string> last = recorder.Forecasts.Last(u => u.Key == status.Key);
            Assert.Equal(last.Period + 1, status.OpenPeriod);
            Assert.Equal(last.PeriodStart.AddHours(1), status.OpenPeriodStart);
            Assert.Equal(last.Actual, status.LastActual);
            Assert.Equal(last.Next, status.Next);
            Assert.Equal(last.AtHorizon, status.AtHorizon);
            Assert.Equal(last.Errors, status.Errors);
            Assert.Equal(last.Method, status.Method);

            // An episode is open when the series' last transition on the rule was not a clear.
            DriftAlert<string>? lastAlert = recorder.Alerts.LastOrDefault(a => a.Key == status.Key);
            if (lastAlert is { } a && a.Transition.Kind != DriftTransitionKind.Cleared)
            {
                DriftEpisodeStatus episode = Assert.Single(status.OpenEpisodes);
                Assert.Equal(a.Transition.EpisodeId, episode.EpisodeId);
                Assert.Equal(a.Transition.Direction, episode.Direction);
                Assert.Equal(a.Transition.Severity, episode.Severity);
                Assert.Equal(a.RuleName, episode.RuleName);
            }
            else
            {
                Assert.Empty(status.OpenEpisodes);
            }
        }

        // The stepping series raised an episode that is still open.
        Assert.Single(statuses.Single(s => s.Key == "step").OpenEpisodes);
    }

    [Fact]
    public async Task GetSeriesStatusAsync_AfterSnapshotAndRestore_ReportsTheSameSeries()
    {
        await using var engine = new ForecastEngine<string>(Options(partitions: 2));
        foreach (Observation<string> o in Stream())
        {
            await engine.PostAsync(o);
        }

        using var snapshot = new MemoryStream();
        await engine.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, 0);
        snapshot.Position = 0;
        (ForecastEngine<string> restored, _) = await ForecastEngine.RestoreAsync(snapshot, Options(partitions: 3), SnapshotKeyCodecs.Utf8String);
        await using (restored)
        {
            Assert.Equal(Describe(await engine.GetSeriesStatusAsync()), Describe(await restored.GetSeriesStatusAsync()));
        }
    }

    [Fact]
    public async Task GetSeriesStatusAsync_SeriesWithoutAClosedPeriod_HasNoActualAndNoForecast()
    {
        await using var engine = new ForecastEngine<string>(Options(partitions: 1));
        await engine.PostAsync(new Observation<string>("new", s_origin, 4));

        SeriesStatus<string> status = Assert.Single(await engine.GetSeriesStatusAsync());

        Assert.True(double.IsNaN(status.LastActual));
        Assert.False(status.Next.IsValid);
        Assert.Equal(s_origin, status.OpenPeriodStart);
    }

    [Fact]
    public async Task GetSeriesStatusAsync_AfterComplete_Throws()
    {
        var engine = new ForecastEngine<string>(Options(partitions: 1));
        await engine.DisposeAsync();

        await Assert.ThrowsAsync<InvalidOperationException>(() => engine.GetSeriesStatusAsync());
    }

    private static ForecastEngineOptions<string> Options(int partitions) => new(
        new SeriesOptions(
            new ExponentialSmoothingOptions(alpha: 0.3),
            PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)),
            rules: [new TrackingSignalRuleOptions(limit: 3, warmUpPeriods: 2)],
            horizon: 2),
        keyComparer: StringComparer.Ordinal,
        partitions: partitions,
        timeProvider: new FakeTimeProvider(s_origin.AddDays(10)),
        publishing: new PublishingOptions(subscriberCapacity: 100_000, readerCapacity: 100_000));

    // Invented: two steady series, one that steps up every hour (its forecasts fall behind, so it alerts), one that
    // steps up for a while then settles (its alert clears).
    private static IEnumerable<Observation<string>> Stream()
    {
        for (int h = 0; h < 30; h++)
        {
            DateTimeOffset t = s_origin.AddHours(h).AddMinutes(10);
            yield return new("steady-a", t, 10 + (h % 3));
            yield return new("steady-b", t, 20 - (h % 2));
            yield return new("step", t, 10 + (5 * h));
            yield return new("settles", t, h < 10 ? 10 + (4 * h) : 50 + (h % 2));
        }
    }

    private static List<string> Describe(IReadOnlyList<SeriesStatus<string>> statuses) =>
        [.. statuses.OrderBy(s => s.Key, StringComparer.Ordinal).Select(s =>
            $"{s.Key} {s.OpenPeriod} {s.OpenPeriodStart:o} {s.LastActual:R} {s.Next} {s.AtHorizon} {s.Errors} {s.Method} " +
            string.Join(",", s.OpenEpisodes.Select(e => e.ToString())))];
}
