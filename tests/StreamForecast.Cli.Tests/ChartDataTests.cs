using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Cli.Tests;

/// <summary>
/// What the chart draws, checked on the data it is drawn from: the window options, the interval clipped at zero under
/// --non-negative, alert markers on their periods, and the x-axis ticks. Invented data.
/// </summary>
public sealed class ChartDataTests
{
    private static readonly TimeZoneInfo s_dublin = TimeZoneInfo.FindSystemTimeZoneById("Europe/Dublin");

    [Fact]
    public async Task Build_LastN_DrawsOnlyTheLastNPeriodsButKeepsTheirForecasts()
    {
        ReplayResult result = await ReplayAsync(Counts(60), nonNegative: false);

        ChartData all = ChartData.Build(result.Forecasts, result.Alerts, ChartWindow.All, s_dublin);
        ChartData last = ChartData.Build(result.Forecasts, result.Alerts, new ChartWindow(null, null, 14), s_dublin);

        Assert.Equal(60, all.PeriodsInSeries);
        Assert.Equal(60, all.Points.Count);
        Assert.Equal(60, last.PeriodsInSeries);
        Assert.Equal(14, last.Points.Count);
        Assert.Equal(all.Points[^14..], last.Points);           // the same periods with the same forecasts: replayed in full, drawn in part
        Assert.All(last.Points, p => Assert.True(p.HasInterval)); // the window's first period still has the forecast made the day before it
        Assert.Equal(new DateTime(2025, 4, 16), last.Points[0].Start);
    }

    [Fact]
    public async Task Build_FromTo_KeepsTheDaysBetweenInclusive()
    {
        ReplayResult result = await ReplayAsync(Counts(60), nonNegative: false);
        PeriodCalendar daily = PeriodCalendar.Daily(s_dublin);

        ChartWindow window = ChartWindow.Parse("2025-03-10", "2025-03-16", null, s_dublin, daily);
        ChartData data = ChartData.Build(result.Forecasts, result.Alerts, window, s_dublin);

        Assert.Equal(7, data.Points.Count);
        Assert.Equal(new DateTime(2025, 3, 10), data.Points[0].Start);
        Assert.Equal(new DateTime(2025, 3, 16), data.Points[^1].Start); // --to with a date includes that whole day
    }

    [Fact]
    public void Parse_LastWithFrom_UsageError()
    {
        var e = Assert.Throws<UsageException>(() => ChartWindow.Parse("2025-03-10", null, 7, s_dublin, PeriodCalendar.Daily(s_dublin)));
        Assert.Contains("either --last or --from/--to", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_ToBeforeFrom_UsageError()
    {
        var e = Assert.Throws<UsageException>(() => ChartWindow.Parse("2025-03-10", "2025-03-09T12:00", null, s_dublin, PeriodCalendar.Daily(s_dublin)));
        Assert.Contains("the window is empty", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_DayMonthDate_UsageErrorNamingTheOption()
    {
        var e = Assert.Throws<UsageException>(() => ChartWindow.Parse("10/03/2025", null, null, s_dublin, PeriodCalendar.Daily(s_dublin)));
        Assert.StartsWith("--from 10/03/2025:", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Build_NonNegative_IntervalNeverBelowZero_WithoutIt_ReachesBelow()
    {
        // Small counts with zeros: an interval of about ±1.3 σ around a forecast near 1 reaches below 0 unless clipped.
        double[] counts = Counts(60);

        ChartData plain = ChartData.Build((await ReplayAsync(counts, nonNegative: false)).Forecasts, [], ChartWindow.All, s_dublin);
        ChartData clipped = ChartData.Build((await ReplayAsync(counts, nonNegative: true)).Forecasts, [], ChartWindow.All, s_dublin);

        Assert.True(plain.ActualsNonNegative);
        Assert.True(plain.BandBelowZero > 0, "the unclipped interval should reach below 0 on these counts");
        Assert.Equal(0, clipped.BandBelowZero);
        Assert.Contains(clipped.Points, p => p.HasInterval && p.Lower == 0); // clipped, not merely lucky
        Assert.All(clipped.Points.Where(p => p.HasInterval), p => Assert.True(p.Forecast >= 0));
        // Clipping moves only what was below zero: the upper bounds are the same.
        Assert.Equal(plain.Points.Where(p => p.HasInterval).Select(p => p.Upper), clipped.Points.Where(p => p.HasInterval).Select(p => p.Upper));
    }

    [Fact]
    public async Task Build_Alerts_MarkedOnTheActualOfTheirPeriodWithDirectionAndRule()
    {
        double[] counts = Counts(60);
        for (int d = 40; d < 60; d++)
        {
            counts[d] += 12; // a lasting shift up: actuals run above the forecast
        }

        ReplayResult result = await ReplayAsync(counts, nonNegative: true);
        ChartData data = ChartData.Build(result.Forecasts, result.Alerts, ChartWindow.All, s_dublin);

        ChartMarker raised = data.Markers.First(m => m.Kind == DriftTransitionKind.Raised && m.Start >= new DateTime(2025, 4, 10));
        Assert.Equal(DriftDirection.UnderForecast, raised.Direction);
        Assert.True(raised.Start <= new DateTime(2025, 4, 13), $"raised on {raised.Start:yyyy-MM-dd}, late for a shift of about ten σ");
        Assert.StartsWith("CUSUM", raised.RuleName, StringComparison.Ordinal);
        ChartPoint at = data.Points.Single(p => p.Start == raised.Start);
        Assert.Equal(at.Actual, raised.Y);
    }

    [Fact]
    public void Choose_DailyYear_MonthlyTicksAtTheFirstOfTheMonth()
    {
        var first = new DateTime(2026, 1, 5);
        var last = new DateTime(2027, 1, 3);

        TimeTicks.Step step = TimeTicks.Choose(first, last, TimeSpan.FromDays(1), TimeTicks.MaxTicks(1250, intraday: false));
        List<DateTime> ticks = TimeTicks.Positions(first, last, step);

        Assert.Equal(1, step.Months);
        Assert.Equal(new DateTime(2026, 2, 1), ticks[0]);
        Assert.All(ticks, t => Assert.Equal(1, t.Day));
        Assert.Equal("2026-02-01", TimeTicks.Label(ticks[0]));
        Assert.True(ticks.Count <= TimeTicks.MaxTicks(1250, intraday: false));
    }

    [Fact]
    public void Choose_SixtyDaysOfHours_WholeDaysWithDateLabels_TwoDaysOfHours_HourLabels()
    {
        // 1,440 hourly periods (60 days): ticks on midnights, labelled with the date only.
        var first = new DateTime(2025, 3, 1);
        TimeTicks.Step longStep = TimeTicks.Choose(first, first.AddHours(1439), TimeSpan.FromHours(1), TimeTicks.MaxTicks(1250, intraday: true));
        List<DateTime> longTicks = TimeTicks.Positions(first, first.AddHours(1439), longStep);
        Assert.True(longStep.Length >= TimeSpan.FromDays(7) || longStep.Months > 0, longStep.ToString());
        Assert.All(longTicks, t => Assert.Equal(TimeSpan.Zero, t.TimeOfDay));
        Assert.InRange(longTicks.Count, 3, TimeTicks.MaxTicks(1250, intraday: true));

        // 48 hourly periods: ticks every few hours, with the time.
        TimeTicks.Step shortStep = TimeTicks.Choose(first, first.AddHours(47), TimeSpan.FromHours(1), TimeTicks.MaxTicks(1250, intraday: true));
        List<DateTime> shortTicks = TimeTicks.Positions(first, first.AddHours(47), shortStep);
        Assert.True(shortStep.Length < TimeSpan.FromDays(1), shortStep.ToString());
        Assert.Contains(shortTicks, t => TimeTicks.Label(t) == "2025-03-01 06:00" || TimeTicks.Label(t) == "2025-03-01 12:00");
        Assert.Contains("2025-03-02", shortTicks.Select(TimeTicks.Label)); // midnight shows the date alone
    }

    [Fact]
    public void PeriodNoun_CalendarsAndIntervals_UnitForTheAxis()
    {
        Assert.Equal("day", ChartCommand.PeriodNoun(PeriodCalendar.Daily(s_dublin)));
        Assert.Equal("week", ChartCommand.PeriodNoun(PeriodCalendar.IsoWeekly(s_dublin)));
        Assert.Equal("hour", ChartCommand.PeriodNoun(PeriodCalendar.FixedInterval(TimeSpan.FromHours(1))));
        Assert.Equal("15 min", ChartCommand.PeriodNoun(PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(15))));
    }

    /// <summary>Invented small daily counts (0 to 3, a few zeros) from 2025-03-01, one value a day.</summary>
    private static double[] Counts(int days)
    {
        var random = new Random(5);
        return [.. Enumerable.Range(0, days).Select(_ => (double)random.Next(0, 4))];
    }

    private static Task<ReplayResult> ReplayAsync(double[] daily, bool nonNegative)
    {
        PeriodCalendar calendar = PeriodCalendar.Daily(s_dublin);
        var rows = new List<Observation<string>>();
        for (int d = 0; d < daily.Length; d++)
        {
            DateTime noon = new DateTime(2025, 3, 1, 12, 0, 0).AddDays(d);
            rows.Add(new Observation<string>("north/bun", new DateTimeOffset(noon, s_dublin.GetUtcOffset(noon)), daily[d], null));
        }

        var settings = new ReplaySettings(
            calendar, new LatenessPolicy(TimeSpan.Zero), new ExponentialSmoothingOptions(0.3), new Dictionary<string, ForecasterOptions>(),
            [new CusumRuleOptions(decisionInterval: 5)], SeasonLength: 1, Horizon: 1, ReferenceOf: _ => null, NonNegative: nonNegative);
        return ReplayRunner.RunAsync(rows, settings, new NoProgress(), CancellationToken.None);
    }

    private sealed class NoProgress : IProgressSink
    {
        public void Start(long total)
        {
        }

        public void Report(long done)
        {
        }
    }
}
