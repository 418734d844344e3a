using Microsoft.Extensions.Time.Testing;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tests.Streaming;

namespace StreamForecast.Tests.Selection;

/// <summary>Feeds a history of daily totals to a real engine as one observation a day, and records what it publishes.</summary>
internal static class EngineHistory
{
    /// <summary>The calendar the histories are posted in.</summary>
    public static PeriodCalendar Days { get; } = PeriodCalendar.Daily(TimeZoneInfo.Utc);

    /// <summary>The start of the first day of every history.</summary>
    public static DateTimeOffset Start { get; } = new(2026, 1, 5, 0, 0, 0, TimeSpan.Zero);

    /// <summary>
    /// Posts <paramref name="history"/> (NaN: no observation that day) for <paramref name="key"/>, flushes, and returns
    /// the recorder and the engine's event lift.
    /// </summary>
    public static (EngineRecorder<string> Recorder, IReadOnlyList<EventLift> Lift) Run(string key, SeriesOptions series, double[] history, EventCalendar<string>? events = null)
    {
        var engineOptions = new ForecastEngineOptions<string>(series, partitions: 1, timeProvider: new FakeTimeProvider(Start.AddYears(1)),
            maxEventTimeAhead: Timeout.InfiniteTimeSpan, publishing: new PublishingOptions(100_000, 100_000), events: events);
        var engine = new ForecastEngine<string>(engineOptions);
        var recorder = EngineRecorder<string>.Attach(engine);
        IReadOnlyList<EventLift> lift = Task.Run(async () =>
        {
            for (int t = 0; t < history.Length; t++)
            {
                if (!double.IsNaN(history[t]))
                {
                    await engine.PostAsync(new Observation<string>(key, Start.AddDays(t).AddHours(9), history[t]));
                }
            }

            await engine.FlushAsync();
            IReadOnlyList<EventLift> sums = await engine.GetEventLiftAsync();
            await engine.DisposeAsync();
            return sums;
        }).GetAwaiter().GetResult();
        return (recorder, lift);
    }
}
