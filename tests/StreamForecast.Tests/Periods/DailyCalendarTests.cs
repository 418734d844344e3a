using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

/// <summary>Helpers for writing local instants and for the published daylight-saving rules.</summary>
internal static class Dst
{
    /// <summary>A local time written with the offset the zone uses at that moment.</summary>
    public static DateTimeOffset At(int year, int month, int day, int hour, int minute, double offsetHours) =>
        new(year, month, day, hour, minute, 0, TimeSpan.FromHours(offsetHours));

    public static DateTimeOffset Utc(int year, int month, int day, int hour, int minute = 0) =>
        new(year, month, day, hour, minute, 0, TimeSpan.Zero);

    /// <summary>The last Sunday of a month (plain search back from the month's last day).</summary>
    public static DateOnly LastSunday(int year, int month)
    {
        var d = new DateOnly(year, month, DateTime.DaysInMonth(year, month));
        while (d.DayOfWeek != DayOfWeek.Sunday)
        {
            d = d.AddDays(-1);
        }

        return d;
    }

    /// <summary>The n-th Sunday of a month (plain search forward from the 1st).</summary>
    public static DateOnly NthSunday(int year, int month, int n)
    {
        var d = new DateOnly(year, month, 1);
        while (d.DayOfWeek != DayOfWeek.Sunday)
        {
            d = d.AddDays(1);
        }

        return d.AddDays(7 * (n - 1));
    }

    public static string LabelAt(PeriodCalendar calendar, DateTimeOffset instant) => calendar.LabelOf(calendar.PeriodOf(instant)).ToString();
}

public sealed class DailyUtcTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => TimeZoneInfo.Utc;

    protected override bool IsWeekly => false;

    [Fact]
    public void PeriodOf_UnixEpochAndLater_CountsDaysSince1970()
    {
        // Documented origin: period 0 is the day dated 1970-01-01; indices count days (DERIVED via DateOnly.DayNumber).
        Assert.Equal(0, Calendar.PeriodOf(DateTimeOffset.UnixEpoch));
        Assert.Equal(DateTimeOffset.UnixEpoch, Calendar.StartOf(0));
        Assert.Equal(-1, Calendar.PeriodOf(DateTimeOffset.UnixEpoch.AddTicks(-1)));
        long expected = new DateOnly(2026, 12, 1).DayNumber - new DateOnly(1970, 1, 1).DayNumber;
        Assert.Equal(expected, Calendar.PeriodOf(Dst.Utc(2026, 12, 1, 10, 15)));
        Assert.Equal("2026-12-01", Dst.LabelAt(Calendar, Dst.Utc(2026, 12, 1, 23, 59)));
        Assert.Equal("Daily(UTC)", Calendar.Name);
    }
}

public sealed class DailyBerlinTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.Berlin;

    protected override bool IsWeekly => false;

    [Fact]
    public void LabelOf_EuClockChangeDays2026_Are23And25HoursLong()
    {
        // EU summer time (Directive 2000/84/EC, Arts. 2–3, from memory): from 01:00 UTC on the last Sunday of March
        // to 01:00 UTC on the last Sunday of October; Berlin is UTC+1 in winter and UTC+2 in summer (common practice).
        Assert.Equal(new DateOnly(2026, 3, 29), Dst.LastSunday(2026, 3));
        Assert.Equal(new DateOnly(2026, 10, 25), Dst.LastSunday(2026, 10));

        PeriodLabel spring = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 3, 29)));
        Assert.Equal("2026-03-29", spring.ToString());
        Assert.Equal(TimeSpan.FromHours(23), spring.Length);
        Assert.Equal(Dst.Utc(2026, 3, 28, 23), spring.Start);
        Assert.Equal(Dst.Utc(2026, 3, 29, 22), spring.End);
        Assert.Equal(TimeSpan.FromHours(1), spring.Start.Offset);
        Assert.Equal(TimeSpan.FromHours(2), spring.End.Offset);

        PeriodLabel autumn = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 25)));
        Assert.Equal("2026-10-25", autumn.ToString());
        Assert.Equal(TimeSpan.FromHours(25), autumn.Length);
        Assert.Equal(Dst.Utc(2026, 10, 24, 22), autumn.Start);
        Assert.Equal(Dst.Utc(2026, 10, 25, 23), autumn.End);
    }

    [Fact]
    public void LabelOf_EveryDay2020To2030_Is24HoursExceptOnEuChangeDays()
    {
        // DERIVED from the EU rule above: 23 h on the last Sunday of March, 25 h on the last Sunday of October.
        for (var d = new DateOnly(2020, 1, 1); d.Year <= 2030; d = d.AddDays(1))
        {
            int hours = d == Dst.LastSunday(d.Year, 3) ? 23 : d == Dst.LastSunday(d.Year, 10) ? 25 : 24;
            Assert.Equal(TimeSpan.FromHours(hours), Calendar.LabelOf(PeriodIndexOf(d)).Length);
        }
    }

    [Fact]
    public void PeriodOf_EventsAroundSpringForward_GoToTheirLocalDay()
    {
        // 2026-03-29: clocks jump from 02:00 CET (+1) to 03:00 CEST (+2) at 01:00 UTC (EU rule, from memory).
        Assert.Equal("2026-03-28", Dst.LabelAt(Calendar, Dst.At(2026, 3, 28, 23, 59, 1)));
        Assert.Equal("2026-03-29", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 0, 30, 1)));
        Assert.Equal("2026-03-29", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 1, 59, 1)));
        Assert.Equal("2026-03-29", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 3, 0, 2)));
        Assert.Equal("2026-03-29", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 23, 59, 2)));
        Assert.Equal("2026-03-30", Dst.LabelAt(Calendar, Dst.At(2026, 3, 30, 0, 0, 2)));
    }

    [Fact]
    public void PeriodOf_EventsAroundFallBack_GoToTheirLocalDay()
    {
        // 2026-10-25: clocks go back from 03:00 CEST (+2) to 02:00 CET (+1) at 01:00 UTC, so 02:30 happens twice.
        Assert.Equal("2026-10-24", Dst.LabelAt(Calendar, Dst.At(2026, 10, 24, 23, 59, 2)));
        Assert.Equal("2026-10-25", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 0, 30, 2)));
        Assert.Equal("2026-10-25", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 2, 30, 2)));
        Assert.Equal("2026-10-25", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 2, 30, 1)));
        Assert.Equal("2026-10-25", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 3, 0, 1)));
        Assert.Equal("2026-10-25", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 23, 59, 1)));
        Assert.Equal("2026-10-26", Dst.LabelAt(Calendar, Dst.At(2026, 10, 26, 0, 0, 1)));
    }
}

public sealed class DailyBerlinBusinessDayTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.Berlin;

    protected override int DayStartHour => 4;

    protected override bool IsWeekly => false;

    [Fact]
    public void PeriodOf_SaleBeforeFourLocal_CountsTowardPreviousBusinessDay()
    {
        // A business day starting at 04:00 (common practice for late-opening shops): the day labelled D runs 04:00–04:00.
        Assert.Equal("2026-12-01", Dst.LabelAt(Calendar, Dst.At(2026, 12, 1, 4, 0, 1)));
        Assert.Equal("2026-12-01", Dst.LabelAt(Calendar, Dst.At(2026, 12, 2, 1, 30, 1)));
        Assert.Equal("2026-12-01", Dst.LabelAt(Calendar, Dst.At(2026, 12, 2, 3, 59, 1).AddSeconds(59)));
        Assert.Equal("2026-12-02", Dst.LabelAt(Calendar, Dst.At(2026, 12, 2, 4, 0, 1)));
        Assert.Equal("Daily(Europe/Berlin, from 04:00)", Calendar.Name);
    }

    [Fact]
    public void LabelOf_BusinessDayHoldingSpringForward_Is23Hours()
    {
        // The jump at 02:00 on 2026-03-29 lies inside business day 2026-03-28 (04:00 CET to 04:00 CEST).
        PeriodLabel day = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 3, 28)));
        Assert.Equal(Dst.At(2026, 3, 28, 4, 0, 1), day.Start);
        Assert.Equal(Dst.At(2026, 3, 29, 4, 0, 2), day.End);
        Assert.Equal(TimeSpan.FromHours(23), day.Length);
        Assert.Equal("2026-03-28", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 1, 30, 1)));
        Assert.Equal("2026-03-28", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 3, 30, 2)));
        Assert.Equal("2026-03-29", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 4, 0, 2)));
    }

    [Fact]
    public void LabelOf_BusinessDayHoldingFallBack_Is25Hours()
    {
        PeriodLabel day = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 24)));
        Assert.Equal(Dst.At(2026, 10, 24, 4, 0, 2), day.Start);
        Assert.Equal(Dst.At(2026, 10, 25, 4, 0, 1), day.End);
        Assert.Equal(TimeSpan.FromHours(25), day.Length);
        Assert.Equal("2026-10-24", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 2, 30, 1)));
    }
}

public sealed class DailyBerlinFromTwoTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.Berlin;

    protected override int DayStartHour => 2;

    protected override bool IsWeekly => false;

    [Fact]
    public void StartOf_StartHourSkippedBySpringForward_MovesToTheJump()
    {
        // 02:00 on 2026-03-29 does not exist in Berlin (EU rule, from memory): the day starts at the jump, 03:00 CEST.
        PeriodLabel day = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 3, 29)));
        Assert.Equal(Dst.Utc(2026, 3, 29, 1), day.Start);
        Assert.Equal(Dst.At(2026, 3, 29, 3, 0, 2), day.Start);
        Assert.Equal(TimeSpan.FromHours(23), day.Length);
        Assert.Equal(TimeSpan.FromHours(24), Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 3, 28))).Length);
        Assert.Equal("2026-03-28", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 1, 59, 1)));
        Assert.Equal("2026-03-29", Dst.LabelAt(Calendar, Dst.At(2026, 3, 29, 3, 0, 2)));
    }

    [Fact]
    public void StartOf_StartHourRepeatedByFallBack_TakesTheEarlierInstant()
    {
        // 02:00 on 2026-10-25 happens at 00:00 UTC (CEST) and 01:00 UTC (CET): the day starts at the earlier one.
        PeriodLabel day = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 25)));
        Assert.Equal(Dst.Utc(2026, 10, 25, 0), day.Start);
        Assert.Equal(TimeSpan.FromHours(25), day.Length);
        Assert.Equal(TimeSpan.FromHours(24), Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 24))).Length);
        Assert.Equal("2026-10-25", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 2, 30, 1)));
        Assert.Equal("2026-10-24", Dst.LabelAt(Calendar, Dst.At(2026, 10, 25, 1, 59, 2)));
    }
}

public sealed class DailyNewYorkTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.NewYork;

    protected override bool IsWeekly => false;

    [Fact]
    public void LabelOf_UsClockChangeDays2026_Are23And25HoursLong()
    {
        // US daylight saving time (Energy Policy Act of 2005 §110, amending 15 U.S.C. §260a; from memory): from 02:00
        // local on the second Sunday of March to 02:00 local on the first Sunday of November; New York is UTC−5 / −4.
        Assert.Equal(new DateOnly(2026, 3, 8), Dst.NthSunday(2026, 3, 2));
        Assert.Equal(new DateOnly(2026, 11, 1), Dst.NthSunday(2026, 11, 1));

        PeriodLabel spring = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 3, 8)));
        Assert.Equal(TimeSpan.FromHours(23), spring.Length);
        Assert.Equal(Dst.Utc(2026, 3, 8, 5), spring.Start);
        Assert.Equal(Dst.Utc(2026, 3, 9, 4), spring.End);

        PeriodLabel autumn = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 11, 1)));
        Assert.Equal(TimeSpan.FromHours(25), autumn.Length);
        Assert.Equal(Dst.Utc(2026, 11, 1, 4), autumn.Start);
        Assert.Equal(Dst.Utc(2026, 11, 2, 5), autumn.End);
    }

    [Fact]
    public void LabelOf_EveryDay2020To2030_Is24HoursExceptOnUsChangeDays()
    {
        // DERIVED from the US rule above.
        for (var d = new DateOnly(2020, 1, 1); d.Year <= 2030; d = d.AddDays(1))
        {
            int hours = d == Dst.NthSunday(d.Year, 3, 2) ? 23 : d == Dst.NthSunday(d.Year, 11, 1) ? 25 : 24;
            Assert.Equal(TimeSpan.FromHours(hours), Calendar.LabelOf(PeriodIndexOf(d)).Length);
        }
    }

    [Fact]
    public void PeriodOf_EventsAroundClockChanges_GoToTheirLocalDay()
    {
        Assert.Equal("2026-03-07", Dst.LabelAt(Calendar, Dst.At(2026, 3, 7, 23, 59, -5)));
        Assert.Equal("2026-03-08", Dst.LabelAt(Calendar, Dst.At(2026, 3, 8, 0, 30, -5)));
        Assert.Equal("2026-03-08", Dst.LabelAt(Calendar, Dst.At(2026, 3, 8, 1, 59, -5)));
        Assert.Equal("2026-03-08", Dst.LabelAt(Calendar, Dst.At(2026, 3, 8, 3, 0, -4)));
        Assert.Equal("2026-03-09", Dst.LabelAt(Calendar, Dst.At(2026, 3, 9, 0, 0, -4)));
        Assert.Equal("2026-11-01", Dst.LabelAt(Calendar, Dst.At(2026, 11, 1, 1, 30, -4)));
        Assert.Equal("2026-11-01", Dst.LabelAt(Calendar, Dst.At(2026, 11, 1, 1, 30, -5)));
        Assert.Equal("2026-11-01", Dst.LabelAt(Calendar, Dst.At(2026, 11, 1, 23, 59, -5)));
        Assert.Equal("2026-10-31", Dst.LabelAt(Calendar, Dst.At(2026, 10, 31, 23, 59, -4)));
    }
}

public sealed class DailyNewYorkFromTwoTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.NewYork;

    protected override int DayStartHour => 2;

    protected override bool IsWeekly => false;

    [Fact]
    public void StartOf_StartHourAtClockChanges_FollowsTheDocumentedRule()
    {
        // 02:00 on 2026-03-08 is skipped (US rule, from memory): the day starts at the jump, 03:00 EDT = 07:00 UTC.
        Assert.Equal(Dst.Utc(2026, 3, 8, 7), Calendar.StartOf(PeriodIndexOf(new DateOnly(2026, 3, 8))));
        // On 2026-11-01 the hour 01:00–02:00 repeats and 02:00 EST happens once, at 07:00 UTC; 2026-10-31 is 25 h.
        Assert.Equal(Dst.Utc(2026, 11, 1, 7), Calendar.StartOf(PeriodIndexOf(new DateOnly(2026, 11, 1))));
        Assert.Equal(TimeSpan.FromHours(25), Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 31))).Length);
        Assert.Equal("2026-10-31", Dst.LabelAt(Calendar, Dst.At(2026, 11, 1, 1, 30, -5)));
    }
}

public sealed class DailyLordHoweTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.LordHowe;

    protected override bool IsWeekly => false;

    [Fact]
    public void LabelOf_HalfHourClockChangeDays2026_Are24AndAHalfAnd23AndAHalfHours()
    {
        // Lord Howe Island (from memory): UTC+10:30, and UTC+11 from 02:00 on the first Sunday of October until 02:00
        // on the first Sunday of April, when clocks go back to 01:30 — a 30-minute shift.
        Assert.Equal(new DateOnly(2026, 4, 5), Dst.NthSunday(2026, 4, 1));
        Assert.Equal(new DateOnly(2026, 10, 4), Dst.NthSunday(2026, 10, 1));
        PeriodLabel autumn = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 4, 5)));
        Assert.Equal(TimeSpan.FromHours(24.5), autumn.Length);
        Assert.Equal(Dst.At(2026, 4, 5, 0, 0, 11), autumn.Start);
        PeriodLabel spring = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 4)));
        Assert.Equal(TimeSpan.FromHours(23.5), spring.Length);
        Assert.Equal("2026-04-05", Dst.LabelAt(Calendar, Dst.At(2026, 4, 5, 1, 45, 11)));
        Assert.Equal("2026-04-05", Dst.LabelAt(Calendar, Dst.At(2026, 4, 5, 1, 45, 10.5)));
    }
}

public sealed class DailyLordHoweFromTwoTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.LordHowe;

    protected override int DayStartHour => 2;

    protected override bool IsWeekly => false;

    [Fact]
    public void StartOf_StartHourInsideHalfHourGap_MovesToTheJump()
    {
        // On 2026-10-04 clocks jump from 02:00 (+10:30) to 02:30 (+11) (from memory): the day starts at 02:30 +11.
        PeriodLabel day = Calendar.LabelOf(PeriodIndexOf(new DateOnly(2026, 10, 4)));
        Assert.Equal(Dst.At(2026, 10, 4, 2, 30, 11), day.Start);
        Assert.Equal(TimeSpan.FromHours(23.5), day.Length);
    }
}

public sealed class DailyKolkataTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.Kolkata;

    protected override bool IsWeekly => false;

    [Fact]
    public void PeriodOf_IndiaStandardTime_ChangesDayAt1830Utc()
    {
        // India Standard Time is UTC+05:30 all year, with no daylight saving time since 1945 (common practice).
        Assert.Equal("2026-12-01", Dst.LabelAt(Calendar, new DateTimeOffset(2026, 12, 1, 18, 29, 59, TimeSpan.Zero)));
        Assert.Equal("2026-12-02", Dst.LabelAt(Calendar, Dst.Utc(2026, 12, 1, 18, 30)));
        for (var d = new DateOnly(2026, 1, 1); d.Year == 2026; d = d.AddDays(1))
        {
            Assert.Equal(TimeSpan.FromHours(24), Calendar.LabelOf(PeriodIndexOf(d)).Length);
        }
    }
}

public sealed class DailyConstantPlusFourteenTests : ZonedCalendarContractTests
{
    // Etc/GMT-14 is UTC+14 with no changes (POSIX sign convention): the constant-offset path at the largest offset.
    protected override TimeZoneInfo Zone => TimeZoneInfo.FindSystemTimeZoneById("Etc/GMT-14");

    protected override int DayStartHour => 23;

    protected override bool IsWeekly => false;
}

public sealed class DailyTwoHourShiftTests : ZonedCalendarContractTests
{
    protected override TimeZoneInfo Zone => Zones.TwoHourShift;

    protected override int DayStartHour => 3;

    protected override bool IsWeekly => false;

    [Fact]
    public void PeriodOf_StartHourInsideTwoHourRepeat_StaysMonotonicAndTakesEarlierInstant()
    {
        // Invented zone (test data): clocks fall back from 04:00 (+2) to 02:00 (+0) at 02:00 UTC on 2026-10-25, so
        // 03:00 happens at 01:00 UTC and again at 03:00 UTC. The day starts at the earlier instant, and the repeated
        // wall times 02:00–02:59 (02:00–03:00 UTC) stay in 2026-10-25 although their wall clock reads before 03:00.
        long day = PeriodIndexOf(new DateOnly(2026, 10, 25));
        Assert.Equal(Dst.Utc(2026, 10, 25, 1), Calendar.StartOf(day));
        Assert.Equal(TimeSpan.FromHours(24), Calendar.LabelOf(day - 1).Length);
        Assert.Equal(TimeSpan.FromHours(26), Calendar.LabelOf(day).Length);
        Assert.Equal(day, Calendar.PeriodOf(Dst.Utc(2026, 10, 25, 2, 30)));
        long previous = long.MinValue;
        for (var x = Dst.Utc(2026, 10, 24, 22); x < Dst.Utc(2026, 10, 25, 6); x = x.AddMinutes(1))
        {
            long p = Calendar.PeriodOf(x);
            Assert.True(p >= previous, $"{x:O}");
            Assert.Equal(x >= Dst.Utc(2026, 10, 25, 1) ? day : day - 1, p);
            previous = p;
        }
    }
}
