using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Demo;

/// <summary>
/// The demo's engine set-up without any console output (the tests run it too): the bakeries' time zone and first day,
/// the sale events, the engine options and the known-event calendar with the Mill Lane sourdough promotion.
/// </summary>
internal static class DemoSetup
{
    /// <summary>The bakeries' time zone.</summary>
    public static readonly TimeZoneInfo Zone = TimeZoneInfo.FindSystemTimeZoneById("Europe/Dublin");

    /// <summary>The first day of the invented data (a Monday).</summary>
    public static readonly DateOnly FirstDay = new(2025, 1, 6);

    /// <summary>The series the promotion runs for.</summary>
    public const string PromotionKey = "Mill Lane/sourdough loaf";

    /// <summary>The start of local day <paramref name="day"/> (counting from <see cref="FirstDay"/>) in the bakeries' zone.</summary>
    public static DateTimeOffset DayStart(int day)
    {
        DateTime local = FirstDay.AddDays(day).ToDateTime(TimeOnly.MinValue);
        return new DateTimeOffset(local, Zone.GetUtcOffset(local));
    }

    /// <summary>
    /// The two-for-one week of the Mill Lane sourdough loaf, declared as a promotion before the run. The bakery plans it,
    /// so it is known in advance; the dip after it (customers stocked up) is declared too, as a kind of its own, so
    /// neither is scored as forecast error. Both are kept out of the model: it learns from its own forecasts those days.
    /// </summary>
    public static IReadOnlyList<KnownEvent<string>> PromotionEvents() =>
    [
        KnownEvent.ForSeries(PromotionKey, EventKind.Promotion, DayStart(BakeryScenario.PromotionStart), DayStart(BakeryScenario.PromotionStart + 7)),
        KnownEvent.ForSeries(PromotionKey, EventKind.Named("after-promotion dip"), DayStart(BakeryScenario.PromotionStart + 7), DayStart(BakeryScenario.PromotionStart + 11)),
    ];

    /// <summary>The demo's known-event calendar; series are grouped by bakery (the key part before '/').</summary>
    public static EventCalendar<string> PromotionCalendar() => new(PromotionEvents(), EventGroups.ByKeyPrefix('/'));

    /// <summary>The engine options of the replay: shop days, lateness, two drift rules, each series on its tuned method, and the known events.</summary>
    public static ForecastEngineOptions<string> Options(IReadOnlyDictionary<string, ForecasterOptions> methods, EventCalendar<string>? events)
    {
        // Shop days in local time, with events allowed 3 hours late; a late sale restates up to 2 closed days.
        // Two rules whose false-alarm rate does not grow with the length of the series: a CUSUM on standardized errors
        // (h = 5: about one false alarm per 465 in-control days, Montgomery) and Trigg's smoothed signal at 0.7 (above
        // its simulated 99% point for β = 0.1). A cumulative RSFE/MAD signal drifts like √n on unbiased errors, so
        // its limits need calibrating per method before it is used for paging.
        DriftRuleOptions[] rules =
        [
            new CusumRuleOptions(decisionInterval: 5, warmUpPeriods: 28, periodsToClear: 7),
            new TriggSignalRuleOptions(limit: 0.7, warmUpPeriods: 28, periodsToClear: 7),
        ];
        SeriesOptions Make(ForecasterOptions method) => new(
            method,
            PeriodCalendar.Daily(Zone),
            new LatenessPolicy(TimeSpan.FromHours(3), restatementPeriods: 2),
            GapPolicy.Zero,
            tracking: new Tracking.ErrorTrackerOptions(seasonLength: 7),
            rules: [.. rules],
            horizon: 7,
            empiricalIntervals: new Tracking.EmpiricalIntervalOptions(0.8), // from each series' own last 100 errors
            nonNegative: true); // sales cannot go below zero: forecasts and bounds are clipped at 0 by the library

        var perKey = methods.ToDictionary(kv => kv.Key, kv => Make(kv.Value), StringComparer.Ordinal);
        return new ForecastEngineOptions<string>(
            Make(new MovingAverageOptions(7)),
            seriesOverrides: key => perKey.GetValueOrDefault(key),
            keyComparer: StringComparer.Ordinal,
            partitions: 2,
            timeProvider: new FixedClock(new DateTimeOffset(2027, 1, 31, 0, 0, 0, TimeSpan.Zero)),
            publishing: new PublishingOptions(subscriberCapacity: 200_000),
            events: events);
    }

    /// <summary>Splits each day's total into a few sales between 07:00 and 19:00 local time; a few arrive late or twice.</summary>
    public static List<Observation<string>> Events(IReadOnlyList<BakerySeries> series, int fromDay)
    {
        var rng = new Random(7);
        var byTime = new List<(DateTimeOffset Arrival, Observation<string> Event)>();
        foreach (BakerySeries s in series)
        {
            for (int d = fromDay; d < s.Daily.Length; d++)
            {
                int units = (int)s.Daily[d];
                DateTime day = FirstDay.AddDays(d).ToDateTime(TimeOnly.MinValue);
                int sales = Math.Min(units, 1 + rng.Next(6));
                for (int k = 0; k < sales; k++)
                {
                    int quantity = k == sales - 1 ? units - ((sales - 1) * (units / sales)) : units / sales;
                    DateTime local = day.AddHours(7).AddMinutes(rng.Next(12 * 60));
                    var when = new DateTimeOffset(local, Zone.GetUtcOffset(local));
                    var sale = new Observation<string>(s.Key, when, quantity, $"{s.Key}#{d}#{k}");
                    double r = rng.NextDouble();
                    DateTimeOffset arrival = r < 0.01 ? when.AddHours(2)       // a till that syncs late, within the lateness
                        : r < 0.013 ? when.AddHours(20)                          // synced next day: restates the closed day
                        : when;
                    byTime.Add((arrival, sale));
                    if (rng.NextDouble() < 0.005)
                    {
                        byTime.Add((arrival.AddMinutes(1), sale)); // redelivered: ignored by event id
                    }
                }
            }
        }

        return byTime.OrderBy(e => e.Arrival).Select(e => e.Event).ToList();
    }

    /// <summary>The demo replays history, so the engine's clock (used for its future-time check) stands after the data.</summary>
    internal sealed class FixedClock(DateTimeOffset now) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => now;
    }
}
