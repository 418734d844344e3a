using System.Globalization;
using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

public sealed class IsoWeeklyUtcTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => TimeZoneInfo.Utc;

    protected override bool IsWeekly => true;

    [Fact]
    public void LabelOf_Week53Years_MatchIsoWeekOracle()
    {
        // ISO 8601: 52 or 53 weeks per week-year; 2020 and 2026 have 53, 2021 has 52 (from memory), with
        // System.Globalization.ISOWeek.GetWeeksInYear as the oracle.
        Assert.Equal(53, ISOWeek.GetWeeksInYear(2020));
        Assert.Equal(53, ISOWeek.GetWeeksInYear(2026));
        Assert.Equal(52, ISOWeek.GetWeeksInYear(2021));
        Assert.Equal("2020-W53", Dst.LabelAt(Calendar, Dst.Utc(2020, 12, 31, 12)));
        Assert.Equal("2026-W53", Dst.LabelAt(Calendar, Dst.Utc(2026, 12, 31, 12)));
        Assert.Equal("2021-W52", Dst.LabelAt(Calendar, Dst.Utc(2021, 12, 31, 12)));
    }

    [Fact]
    public void LabelOf_EveryWeek1950To2100_CountsIsoWeeksPerYearAndStartsOnIsoMonday()
    {
        // Oracle: ISOWeek.GetWeeksInYear for the count, ISOWeek.ToDateTime(year, week, Monday) for each week's start.
        var counts = new Dictionary<int, int>();
        long first = Calendar.PeriodOf(new DateTimeOffset(ISOWeek.ToDateTime(1950, 1, DayOfWeek.Monday), TimeSpan.Zero));
        long last = Calendar.PeriodOf(new DateTimeOffset(ISOWeek.ToDateTime(2100, 1, DayOfWeek.Monday), TimeSpan.Zero)) - 1;
        for (long p = first; p <= last; p++)
        {
            PeriodLabel week = Calendar.LabelOf(p);
            counts[week.IsoWeekYear] = counts.GetValueOrDefault(week.IsoWeekYear) + 1;
            Assert.Equal(ISOWeek.ToDateTime(week.IsoWeekYear, week.IsoWeek, DayOfWeek.Monday), week.Start.UtcDateTime);
            Assert.Equal(TimeSpan.FromDays(7), week.Length);
        }

        for (int year = 1950; year < 2100; year++)
        {
            Assert.Equal(ISOWeek.GetWeeksInYear(year), counts[year]);
        }
    }

    [Fact]
    public void PeriodOf_DaysAroundNewYear_BelongToTheIsoWeekYear()
    {
        // ISO 8601: week 1 is the week holding 4 January, so early-January days can belong to the previous
        // week-year and late-December days to the next (from memory; ISOWeek agrees).
        Assert.Equal("2020-W53", Dst.LabelAt(Calendar, Dst.Utc(2021, 1, 1, 0)));
        Assert.Equal(2020, ISOWeek.GetYear(new DateTime(2021, 1, 1)));
        Assert.Equal("2020-W53", Dst.LabelAt(Calendar, Dst.Utc(2021, 1, 3, 23, 59)));
        Assert.Equal("2021-W01", Dst.LabelAt(Calendar, Dst.Utc(2021, 1, 4, 0)));
        Assert.Equal("2026-W53", Dst.LabelAt(Calendar, Dst.Utc(2027, 1, 3, 12)));
        Assert.Equal("2027-W01", Dst.LabelAt(Calendar, Dst.Utc(2027, 1, 4, 0)));
        Assert.Equal("2025-W01", Dst.LabelAt(Calendar, Dst.Utc(2024, 12, 30, 0)));
        Assert.Equal("2026-W49", Dst.LabelAt(Calendar, Dst.Utc(2026, 12, 1, 10)));
        PeriodLabel week = Calendar.LabelOf(Calendar.PeriodOf(Dst.Utc(2021, 1, 1, 0)));
        Assert.Equal(2020, week.IsoWeekYear);
        Assert.Equal(53, week.IsoWeek);
        Assert.Equal(new DateOnly(2020, 12, 28), week.Date);
    }

    [Fact]
    public void PeriodOf_UnixEpoch_IsInPeriodZeroWhichIs1970W01()
    {
        // Documented origin: period 0 is ISO week 1970-W01, Monday 1969-12-29 to Sunday 1970-01-04.
        Assert.Equal(0, Calendar.PeriodOf(DateTimeOffset.UnixEpoch));
        Assert.Equal(Dst.Utc(1969, 12, 29, 0), Calendar.StartOf(0));
        Assert.Equal("1970-W01", Calendar.LabelOf(0).ToString());
        Assert.Equal("1969-W52", Calendar.LabelOf(-1).ToString());
        Assert.Equal(new DateTime(1969, 12, 29), ISOWeek.ToDateTime(1970, 1, DayOfWeek.Monday));
    }
}

public sealed class IsoWeeklyBerlinTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.Berlin;

    protected override bool IsWeekly => true;

    [Fact]
    public void LabelOf_WeeksHoldingEuClockChanges_Are167And169Hours()
    {
        // EU rule (Directive 2000/84/EC, from memory): the changes on Sundays 2026-03-29 and 2026-10-25 fall in ISO
        // weeks 2026-W13 and 2026-W43 (ISOWeek as the oracle for the numbering).
        Assert.Equal(13, ISOWeek.GetWeekOfYear(new DateTime(2026, 3, 29)));
        Assert.Equal(43, ISOWeek.GetWeekOfYear(new DateTime(2026, 10, 25)));
        PeriodLabel spring = Calendar.LabelOf(Calendar.PeriodOf(Dst.At(2026, 3, 29, 12, 0, 2)));
        Assert.Equal("2026-W13", spring.ToString());
        Assert.Equal(TimeSpan.FromHours(167), spring.Length);
        PeriodLabel autumn = Calendar.LabelOf(Calendar.PeriodOf(Dst.At(2026, 10, 25, 12, 0, 1)));
        Assert.Equal("2026-W43", autumn.ToString());
        Assert.Equal(TimeSpan.FromHours(169), autumn.Length);
        Assert.Equal("2026-W13", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 23, 59, 2)));
        Assert.Equal("2026-W14", Dst.LabelAt(Calendar, Dst.At(2026, 3, 30, 0, 0, 2)));
    }
}

public sealed class IsoWeeklyNewYorkBusinessWeekTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.NewYork;

    protected override int DayStartHour => 4;

    protected override bool IsWeekly => true;

    [Fact]
    public void PeriodOf_BeforeFourOnMonday_CountsTowardPreviousWeek()
    {
        Assert.Equal("2026-W49", Dst.LabelAt(Calendar, Dst.At(2026, 12, 7, 3, 59, -5)));
        Assert.Equal("2026-W50", Dst.LabelAt(Calendar, Dst.At(2026, 12, 7, 4, 0, -5)));
        // US rule (from memory): 2026-03-08 is 23 h, inside 2026-W10 (Monday 03-02 04:00 EST to Monday 03-09 04:00 EDT).
        PeriodLabel week = Calendar.LabelOf(Calendar.PeriodOf(Dst.At(2026, 3, 8, 12, 0, -4)));
        Assert.Equal("2026-W10", week.ToString());
        Assert.Equal(Dst.At(2026, 3, 2, 4, 0, -5), week.Start);
        Assert.Equal(Dst.At(2026, 3, 9, 4, 0, -4), week.End);
        Assert.Equal(TimeSpan.FromHours(167), week.Length);
        Assert.Equal("IsoWeekly(America/New_York, from 04:00)", Calendar.Name);
    }
}

public sealed class IsoWeeklyLordHoweTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.LordHowe;

    protected override bool IsWeekly => true;

    [Fact]
    public void LabelOf_WeekHoldingHalfHourFallBack_Is168AndAHalfHours()
    {
        // Lord Howe Island (from memory): clocks go back 30 minutes on Sunday 2026-04-05, in ISO week 2026-W14.
        PeriodLabel week = Calendar.LabelOf(Calendar.PeriodOf(Dst.At(2026, 4, 1, 12, 0, 11)));
        Assert.Equal("2026-W14", week.ToString());
        Assert.Equal(TimeSpan.FromHours(168.5), week.Length);
    }
}

public sealed class IsoWeeklyKolkataTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.Kolkata;

    protected override bool IsWeekly => true;

    [Fact]
    public void StartOf_IndiaStandardTime_WeekStartsSundayAt1830Utc()
    {
        // UTC+05:30 all year (common practice): Monday 00:00 IST is Sunday 18:30 UTC.
        PeriodLabel week = Calendar.LabelOf(Calendar.PeriodOf(Dst.Utc(2026, 12, 1, 10)));
        Assert.Equal("2026-W49", week.ToString());
        Assert.Equal(Dst.Utc(2026, 11, 29, 18, 30), week.Start);
        Assert.Equal(TimeSpan.FromDays(7), week.Length);
    }
}
