using System.Globalization;
using Spectre.Console;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Demo;

/// <summary>
/// Replays the bakeries' sales as individual timestamped sale events through the streaming engine: each series runs
/// the method tuned for it on the first year, shop days are local days in the bakeries' time zone, a few events arrive
/// late or twice, and halfway through the engine is checkpointed, stopped and restored as after a restart. The second
/// year's drift-alert transitions are printed in date order with the demo's planted stories (<see cref="StoryTimeline"/>).
/// </summary>
internal static class EngineReplay
{
    /// <summary>The engine counters of the whole replay, and every forecast update and alert transition of the charted series.</summary>
    public sealed record ReplayOutcome(EngineCounters Counters, List<ForecastUpdate<string>> ChartUpdates, List<DriftAlert<string>> ChartAlerts, IReadOnlyList<EventLift> Lift);

    private static readonly TimeZoneInfo s_zone = DemoSetup.Zone;
    private static readonly DateOnly s_firstDay = DemoSetup.FirstDay;

    /// <summary>
    /// Replays every day through the engine, so each series' method and error statistics have a year of history
    /// before the days that are shown; alerts and chart points are reported from <paramref name="showFromDay"/> on.
    /// </summary>
    public static async Task<ReplayOutcome> RunAsync(IReadOnlyList<BakerySeries> series, IReadOnlyDictionary<string, ForecasterOptions> methods, int showFromDay, TextWriter log, string chartKey)
    {
        const int fromDay = 0;
        DateTime shownLocal = s_firstDay.AddDays(showFromDay).ToDateTime(TimeOnly.MinValue);
        var showFrom = new DateTimeOffset(shownLocal, s_zone.GetUtcOffset(shownLocal));
        var chartUpdates = new List<ForecastUpdate<string>>();
        var chartAlerts = new List<DriftAlert<string>>();
        List<Observation<string>> events = DemoSetup.Events(series, fromDay);
        ForecastEngineOptions<string> options = DemoSetup.Options(methods, DemoSetup.PromotionCalendar());
        string checkpoints = Path.Combine(Path.GetTempPath(), "streamforecast-demo-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture));
        using var store = new FileCheckpointStore(checkpoints);
        try
        {
            var (engine, position) = await ForecastEngine.RestoreAsync(store, options, SnapshotKeyCodecs.Utf8String);
            int half = events.Count / 2;
            var shown = new List<DriftAlert<string>>();
            using (engine.Alerts.Subscribe(new KeyRecorder<DriftAlert<string>>(a => a.PeriodStart >= showFrom, shown)))
            using (engine.Forecasts.Subscribe(new KeyRecorder<ForecastUpdate<string>>(u => u.Key == chartKey && u.PeriodStart >= showFrom, chartUpdates)))
            using (engine.Alerts.Subscribe(new KeyRecorder<DriftAlert<string>>(a => a.Key == chartKey && a.PeriodStart >= showFrom, chartAlerts)))
            {
                for (int i = (int)position; i < half; i++)
                {
                    await engine.PostAsync(events[i]);
                }

                await engine.SaveCheckpointAsync(store, SnapshotKeyCodecs.Utf8String, inputPosition: half);
                await engine.DisposeAsync();
            }

            EngineCounters first = engine.GetCounters();

            var checkpoint = (events[half - 1].Timestamp, string.Create(CultureInfo.InvariantCulture,
                $"-- checkpoint saved at event {half:N0} of {events.Count:N0} ({events[half - 1].Timestamp:yyyy-MM-dd HH:mm}); engine stopped and restored from it --"));
            (engine, position) = await ForecastEngine.RestoreAsync(store, options, SnapshotKeyCodecs.Utf8String);
            var latest = new Dictionary<string, ForecastUpdate<string>>(StringComparer.Ordinal);
            IReadOnlyList<EventLift> lift;
            using (engine.Alerts.Subscribe(new KeyRecorder<DriftAlert<string>>(a => a.PeriodStart >= showFrom, shown)))
            using (engine.Forecasts.Subscribe(new LatestForecast(latest)))
            using (engine.Forecasts.Subscribe(new KeyRecorder<ForecastUpdate<string>>(u => u.Key == chartKey && u.PeriodStart >= showFrom, chartUpdates)))
            using (engine.Alerts.Subscribe(new KeyRecorder<DriftAlert<string>>(a => a.Key == chartKey && a.PeriodStart >= showFrom, chartAlerts)))
            {
                for (int i = (int)position; i < events.Count; i++)
                {
                    await engine.PostAsync(events[i]);
                }

                // The shops' last day is over: close it everywhere, including series with no sale that day.
                DateTime end = s_firstDay.AddDays(series[0].Daily.Length).ToDateTime(TimeOnly.MinValue);
                await engine.AdvanceAsync(new DateTimeOffset(end, s_zone.GetUtcOffset(end)));
                lift = await engine.GetEventLiftAsync();
                await engine.DisposeAsync();
            }

            lock (shown)
            {
                StoryTimeline.Print(log, [.. shown], checkpoint, series.Select(s => s.Key).ToHashSet(StringComparer.Ordinal), lift);
            }

            PrintLatest(latest);
            lock (chartUpdates)
            {
                lock (chartAlerts)
                {
                    return new ReplayOutcome(Sum(first, engine.GetCounters()), [.. chartUpdates], [.. chartAlerts], lift);
                }
            }
        }
        finally
        {
            Directory.Delete(checkpoints, recursive: true);
        }
    }

    private static EngineCounters Sum(EngineCounters a, EngineCounters b) => new(
        a.Observations + b.Observations, a.Late + b.Late, a.Restated + b.Restated, a.Duplicates + b.Duplicates, a.Dropped + b.Dropped,
        a.Rejected + b.Rejected, a.PeriodsClosed + b.PeriodsClosed, a.GapPeriods + b.GapPeriods, a.RejectedActuals + b.RejectedActuals,
        a.AlertsRaised + b.AlertsRaised, a.AlertsEscalated + b.AlertsEscalated, a.AlertsCleared + b.AlertsCleared, a.Evictions + b.Evictions,
        b.ActiveSeries, b.QueueDepth, a.SubscriberDrops + b.SubscriberDrops, a.SubscriberFaults + b.SubscriberFaults);

    private static void PrintLatest(Dictionary<string, ForecastUpdate<string>> latest)
    {
        var table = new Table().Title("Forecasts after the last day (80% empirical intervals from each series' recent errors, clipped at 0 sales); advisory");
        table.AddColumns("Series", "Method", "Last day", "Actual", "Next day", "Interval", "In 7 days", "RSFE/MAD", "Trigg");
        foreach (var (key, u) in latest.OrderBy(kv => kv.Key, StringComparer.Ordinal))
        {
            table.AddRow(
                Markup.Escape(key),
                Markup.Escape(DemoFormat.Method(u.Method)),
                u.PeriodStart.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture),
                F(u.Actual),
                F(u.Next.Value),
                $"{F(u.Next.Lower)} – {F(u.Next.Upper)} ({u.Next.Kind.ToString().ToLowerInvariant()})",
                F(u.AtHorizon.Value),
                F(u.Errors.TrackingSignal),
                u.Errors.TriggSignal.ToString("0.00", CultureInfo.InvariantCulture));
        }

        AnsiConsole.Write(table);
    }

    private static string F(double value) => double.IsFinite(value) ? value.ToString("0.0", CultureInfo.InvariantCulture) : "n/a";

    private sealed class LatestForecast(Dictionary<string, ForecastUpdate<string>> latest) : IObserver<ForecastUpdate<string>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value)
        {
            lock (latest)
            {
                latest[value.Key] = value;
            }
        }
    }

    /// <summary>Keeps the items of one series (the charted one).</summary>
    private sealed class KeyRecorder<T>(Func<T, bool> wanted, List<T> items) : IObserver<T>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(T value)
        {
            if (wanted(value))
            {
                lock (items)
                {
                    items.Add(value);
                }
            }
        }
    }
}
