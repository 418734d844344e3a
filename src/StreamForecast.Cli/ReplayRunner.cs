using System.Collections.Immutable;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Cli;

/// <summary>The settings of one replay through the engine.</summary>
internal sealed record ReplaySettings(
    PeriodCalendar Calendar,
    LatenessPolicy Lateness,
    ForecasterOptions DefaultMethod,
    IReadOnlyDictionary<string, ForecasterOptions> TunedMethods,
    IReadOnlyList<DriftRuleOptions> Rules,
    int SeasonLength,
    int Horizon,
    Func<ForecasterOptions, ForecasterOptions?> ReferenceOf,
    EmpiricalIntervalOptions? EmpiricalIntervals = null,
    bool NonNegative = false,
    IReadOnlyList<KnownEvent<string>>? Events = null);

/// <summary>What a replay produced.</summary>
internal sealed record ReplayResult(
    List<ForecastUpdate<string>> Forecasts,
    List<DriftAlert<string>> Alerts,
    List<SeriesFault<string>> Faults,
    EngineCounters Counters,
    IReadOnlyList<EventLift> Lift);

/// <summary>
/// Posts observations, in file order, through a <see cref="ForecastEngine{TKey}"/> and collects what it publishes. The
/// data is history: the engine's clock stands at the last event and no event is refused for being ahead of it (so no
/// time arithmetic can leave the calendar's range, which the reader has checked every row against). After the last
/// event the engine is advanced to the end of the last period so every period is closed.
/// </summary>
internal static class ReplayRunner
{
    public static async Task<ReplayResult> RunAsync(IReadOnlyList<Observation<string>> rows, ReplaySettings settings, IProgressSink progress, CancellationToken cancellationToken)
    {
        DateTimeOffset last = DateTimeOffset.MinValue;
        foreach (Observation<string> row in rows)
        {
            if (row.Timestamp > last)
            {
                last = row.Timestamp;
            }
        }

        SeriesOptions Make(ForecasterOptions method) => new(
            method,
            settings.Calendar,
            settings.Lateness,
            GapPolicy.Zero,
            tracking: new ErrorTrackerOptions(seasonLength: settings.SeasonLength),
            rules: [.. settings.Rules],
            horizon: settings.Horizon,
            referenceMethod: settings.ReferenceOf(method),
            empiricalIntervals: settings.EmpiricalIntervals,
            nonNegative: settings.NonNegative);

        Dictionary<string, SeriesOptions> perKey = settings.TunedMethods.ToDictionary(kv => kv.Key, kv => Make(kv.Value), StringComparer.Ordinal);
        var options = new ForecastEngineOptions<string>(
            Make(settings.DefaultMethod),
            seriesOverrides: key => perKey.GetValueOrDefault(key),
            keyComparer: StringComparer.Ordinal,
            timeProvider: new FixedClock(last),
            maxEventTimeAhead: Timeout.InfiniteTimeSpan,
            publishing: new PublishingOptions(subscriberCapacity: 10_000_000),
            events: settings.Events is { Count: > 0 } known ? new EventCalendar<string>(known, EventGroups.ByKeyPrefix(CsvLayout.KeySeparator[0])) : null);

        var forecasts = new Collector<ForecastUpdate<string>>();
        var alerts = new Collector<DriftAlert<string>>();
        var faults = new Collector<SeriesFault<string>>();
        var engine = new ForecastEngine<string>(options);
        IReadOnlyList<EventLift> lift = [];
        using (engine.Forecasts.Subscribe(forecasts))
        using (engine.Alerts.Subscribe(alerts))
        using (engine.Faults.Subscribe(faults))
        {
            try
            {
                progress.Start(rows.Count);
                for (int i = 0; i < rows.Count; i++)
                {
                    await engine.PostAsync(rows[i], cancellationToken).ConfigureAwait(false);
                    if ((i & 4095) == 0)
                    {
                        progress.Report(i);
                    }
                }

                progress.Report(rows.Count);
                if (rows.Count > 0)
                {
                    long lastPeriod = settings.Calendar.PeriodOf(last);
                    await engine.AdvanceAsync(settings.Calendar.EndOf(lastPeriod), cancellationToken).ConfigureAwait(false);
                }

                lift = await engine.GetEventLiftAsync(cancellationToken).ConfigureAwait(false);
            }
            finally
            {
                await engine.DisposeAsync().ConfigureAwait(false);
            }
        }

        return new ReplayResult(forecasts.Items(), alerts.Items(), faults.Items(), engine.GetCounters(), lift);
    }

    private sealed class Collector<T> : IObserver<T>
    {
        private readonly List<T> _items = [];

        public List<T> Items()
        {
            lock (_items)
            {
                return [.. _items];
            }
        }

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(T value)
        {
            lock (_items)
            {
                _items.Add(value);
            }
        }
    }

    private sealed class FixedClock(DateTimeOffset now) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => now;
    }
}
