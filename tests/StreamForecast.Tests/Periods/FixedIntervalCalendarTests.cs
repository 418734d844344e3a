using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

public sealed class FixedIntervalOneSecondTests : FixedIntervalContractTests
{
    protected override TimeSpan Length => TimeSpan.FromSeconds(1);

    [Fact]
    public void PeriodOf_SubSecondInstants_ShareTheirWholeSecond()
    {
        // One-second intervals are Unix time in whole seconds (rounded down), as DateTimeOffset.ToUnixTimeSeconds gives.
        var x = new DateTimeOffset(2026, 12, 1, 10, 15, 7, TimeSpan.Zero);
        Assert.Equal(x.ToUnixTimeSeconds(), Calendar.PeriodOf(x.AddMilliseconds(999.9999)));
        Assert.Equal(-1, Calendar.PeriodOf(DateTimeOffset.UnixEpoch.AddTicks(-1)));
        Assert.Equal("2026-12-01T10:15:07Z", Calendar.LabelOf(Calendar.PeriodOf(x.AddMilliseconds(500))).ToString());
    }
}

public sealed class FixedIntervalFifteenMinuteTests : FixedIntervalContractTests
{
    protected override TimeSpan Length => TimeSpan.FromMinutes(15);

    [Fact]
    public void LabelOf_InstantsInAQuarterHour_ShowItsUtcStart()
    {
        Assert.Equal("2026-12-01T10:15:00Z", Dst.LabelAt(Calendar, Dst.Utc(2026, 12, 1, 10, 20)));
        Assert.Equal("2026-12-01T10:15:00Z", Dst.LabelAt(Calendar, Dst.At(2026, 12, 1, 11, 29, 1)));
        Assert.Equal("1969-12-31T23:45:00Z", Dst.LabelAt(Calendar, Dst.Utc(1969, 12, 31, 23, 59)));
        Assert.Equal("FixedInterval(00:15:00)", Calendar.Name);
        Assert.Equal(96, Calendar.PeriodOf(Dst.Utc(1970, 1, 2, 0)));
    }

    [Fact]
    public void PeriodOf_AcrossEuClockChange_IgnoresLocalTime()
    {
        // Elapsed time: the hour Berlin skips on 2026-03-29 (EU rule, from memory) still holds four intervals.
        long before = Calendar.PeriodOf(Dst.At(2026, 3, 29, 1, 59, 1));
        long after = Calendar.PeriodOf(Dst.At(2026, 3, 29, 3, 0, 2));
        Assert.Equal(1, after - before);
        Assert.Equal(TimeSpan.FromMinutes(15), Calendar.LabelOf(after).Length);
    }
}

public sealed class FixedIntervalOneDayTests : FixedIntervalContractTests
{
    protected override TimeSpan Length => TimeSpan.FromDays(1);

    [Fact]
    public void PeriodOf_DayIntervals_MatchUtcDailyCalendar()
    {
        // 24-hour intervals are UTC days: the same indices as Daily(UTC) (both count from 1970-01-01).
        PeriodCalendar daily = PeriodCalendar.Daily(TimeZoneInfo.Utc);
        var rng = new Random(24);
        for (int i = 0; i < 500; i++)
        {
            var x = new DateTimeOffset(1900, 1, 1, 0, 0, 0, TimeSpan.Zero).AddDays(rng.NextDouble() * 80_000);
            Assert.Equal(daily.PeriodOf(x), Calendar.PeriodOf(x));
            Assert.Equal(daily.StartOf(daily.PeriodOf(x)), Calendar.StartOf(Calendar.PeriodOf(x)));
        }

        Assert.NotEqual(daily, Calendar);
    }
}
