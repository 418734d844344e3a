using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class SeriesStateTests
{
    private sealed class CountingOutput : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public double Sink;

        public void Alert(in DriftAlert<string> alert) => Sink += 1;

        public void Fault(in SeriesFault<string> fault)
        {
        }

        public void Forecast(in ForecastUpdate<string> update) => Sink += double.IsFinite(update.Next.Value) ? update.Next.Value : 0;
    }

    private sealed class ListOutput : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public void Alert(in DriftAlert<string> alert)
        {
        }

        public void Fault(in SeriesFault<string> fault)
        {
        }

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);
    }

    private static readonly DateTimeOffset s_start = new(2027, 1, 1, 0, 0, 0, TimeSpan.Zero);

    [Fact]
    public void Observe_ManyUniqueEventIds_RemembersOnlyThoseOfOpenOrRestatablePeriods()
    {
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));
        var options = new SeriesOptions(new NaiveOptions(), calendar, new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 1), duplicateWindow: 100_000);
        var state = new SeriesState<string>("sensor", options, 0);
        var output = new ListOutput();
        for (int i = 0; i < 10_000; i++)
        {
            DateTimeOffset t = s_start.AddSeconds(20 * i); // three events a minute
            state.Observe(t, calendar.PeriodOf(t), 1, $"msg-{i}", 0, output);
        }

        // Open: up to 4 minutes (2 minutes of lateness, the current one, one partly passed); restatable: 1 more.
        Assert.InRange(state.RememberedIds, 1, 3 * 6);

        // A repeat of a recent event is still recognised; a repeat of an old one is simply late.
        DateTimeOffset recent = s_start.AddSeconds(20 * 9_999);
        state.Observe(recent, calendar.PeriodOf(recent), 1, "msg-9999", 0, output);
        Assert.Equal(1, output.Counters.Duplicates);
        state.Observe(s_start, calendar.PeriodOf(s_start), 1, "msg-0", 0, output);
        Assert.Equal(1, output.Counters.Late);
    }

    [Fact]
    public void OpenCapacity_DailyCalendarWithDaylightSaving_CoversTheLatenessWindow()
    {
        // A 23-hour day is shorter than nominal: the ring must still hold every open period.
        var berlin = PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin"));
        Assert.True(SeriesState<string>.OpenCapacity(berlin, TimeSpan.FromDays(3)) >= 5);
        Assert.Equal(2, SeriesState<string>.OpenCapacity(PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), TimeSpan.Zero));
    }

    [Fact]
    public void Observe_SteadyStateWithRulesAndZonedDays_DoesNotAllocate()
    {
        // The engine's per-observation work on the owner loop: bucketing, closing periods, the full forecast step,
        // drift rules, building the published update. (Publishing itself is measured in PublisherTests.)
        var calendar = PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin"));
        var options = new SeriesOptions(
            new MovingAverageOptions(12), calendar, new LatenessPolicy(TimeSpan.FromHours(6), restatementPeriods: 2),
            rules: [new TrackingSignalRuleOptions(), new CusumRuleOptions()], horizon: 7);
        var state = new SeriesState<string>("harbour/rye", options, 0);
        var output = new CountingOutput();
        var rng = new Random(3);
        DateTimeOffset t = s_start;
        void Run(int events)
        {
            for (int i = 0; i < events; i++)
            {
                t = t.AddHours(4);
                state.Observe(t, calendar.PeriodOf(t), 10 + rng.Next(5), null, 0, output);
            }
        }

        Run(2_000);
        Infrastructure.Allocations.AssertNone(() =>
        {
            Run(6_000);
            return output.Sink;
        });
        Assert.True(output.Counters.PeriodsClosed > 1_000);
    }
}
