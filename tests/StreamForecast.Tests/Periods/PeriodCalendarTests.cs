using System.Globalization;
using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

public sealed class PeriodCalendarTests
{
    [Fact]
    public void FixedInterval_InvalidLength_ThrowsWithAllowedLengths()
    {
        TimeSpan[] invalid =
        [
            TimeSpan.Zero, TimeSpan.FromSeconds(-1), TimeSpan.FromMilliseconds(500), TimeSpan.FromMilliseconds(1500),
            TimeSpan.FromMinutes(7), TimeSpan.FromHours(5), TimeSpan.FromHours(25), TimeSpan.FromDays(2),
            TimeSpan.MaxValue, TimeSpan.MinValue, TimeSpan.FromTicks(1),
        ];
        foreach (TimeSpan length in invalid)
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => PeriodCalendar.FixedInterval(length));
            Assert.Equal("length", ex.ParamName);
            Assert.Contains("divides 24 hours", ex.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void FixedInterval_WholeSecondLengths_AcceptedExactlyWhenTheyDivideADay()
    {
        // Plain arithmetic as the reference: 86,400 has 96 divisors.
        int accepted = 0;
        for (int seconds = 1; seconds <= 86_400; seconds++)
        {
            bool divides = 86_400 % seconds == 0;
            if (divides)
            {
                accepted++;
                Assert.Equal(TimeSpan.FromSeconds(seconds), PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(seconds)).NominalLength);
            }
            else if (seconds < 2000 || seconds % 997 == 0)
            {
                Assert.Throws<ArgumentOutOfRangeException>(() => PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(seconds)));
            }
        }

        Assert.Equal(96, accepted);
    }

    [Fact]
    public void DailyAndIsoWeekly_InvalidArguments_Throw()
    {
        Assert.Throws<ArgumentNullException>(() => PeriodCalendar.Daily(null!));
        Assert.Throws<ArgumentNullException>(() => PeriodCalendar.IsoWeekly(null!, 4));
        foreach (int hour in new[] { -1, 24, int.MinValue, int.MaxValue })
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => PeriodCalendar.Daily(Zones.Berlin, hour));
            Assert.Equal("dayStartHour", ex.ParamName);
            Assert.Contains("from 0 (midnight) to 23", ex.Message, StringComparison.Ordinal);
            Assert.Throws<ArgumentOutOfRangeException>(() => PeriodCalendar.IsoWeekly(Zones.Berlin, hour));
        }
    }

    [Fact]
    public void Properties_EachFactory_DescribeTheCalendar()
    {
        PeriodCalendar fixedCalendar = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(5));
        Assert.Equal(PeriodKind.FixedInterval, fixedCalendar.Kind);
        Assert.Equal(TimeZoneInfo.Utc, fixedCalendar.Zone);
        Assert.Equal(0, fixedCalendar.DayStartHour);
        Assert.Equal("FixedInterval(00:05:00)", fixedCalendar.Name);
        Assert.Equal("FixedInterval(1.00:00:00)", PeriodCalendar.FixedInterval(TimeSpan.FromDays(1)).Name);

        PeriodCalendar daily = PeriodCalendar.Daily(Zones.Berlin, 4);
        Assert.Equal(PeriodKind.Daily, daily.Kind);
        Assert.Same(Zones.Berlin, daily.Zone);
        Assert.Equal(4, daily.DayStartHour);
        Assert.Equal(TimeSpan.FromDays(1), daily.NominalLength);
        Assert.Equal("Daily(Europe/Berlin, from 04:00)", daily.Name);
        Assert.Equal("Daily(Europe/Berlin)", PeriodCalendar.Daily(Zones.Berlin).Name);

        PeriodCalendar weekly = PeriodCalendar.IsoWeekly(Zones.NewYork);
        Assert.Equal(PeriodKind.IsoWeekly, weekly.Kind);
        Assert.Equal(TimeSpan.FromDays(7), weekly.NominalLength);
        Assert.Equal("IsoWeekly(America/New_York)", weekly.Name);
    }

    [Fact]
    public void Equals_SameDefinition_IsEqualAndOtherwiseNot()
    {
        PeriodCalendar berlin = PeriodCalendar.Daily(Zones.Berlin);
        Assert.Equal(berlin, PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin")));
        Assert.Equal(berlin.GetHashCode(), PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin")).GetHashCode());
        Assert.Equal(PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(15)), PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(900)));
        Assert.NotEqual(berlin, PeriodCalendar.Daily(Zones.Berlin, 4));
        Assert.NotEqual(berlin, PeriodCalendar.IsoWeekly(Zones.Berlin));
        Assert.NotEqual(berlin, PeriodCalendar.Daily(Zones.NewYork));
        Assert.NotEqual(PeriodCalendar.Daily(TimeZoneInfo.Utc), PeriodCalendar.FixedInterval(TimeSpan.FromDays(1)));
        Assert.False(berlin.Equals(null));
        Assert.False(berlin.Equals("Daily(Europe/Berlin)"));
    }

    [Fact]
    public void FindSystemTimeZoneById_InvariantGlobalizationBuild_StillReadsIanaZones()
    {
        // The build sets InvariantGlobalization=true; that switch affects cultures, not the zone database, which
        // .NET on Linux reads from /usr/share/zoneinfo. Offsets: EU rule (from memory), CET +1 / CEST +2.
        Assert.True(AppContext.TryGetSwitch("System.Globalization.Invariant", out bool invariant) && invariant);
        Assert.Equal(string.Empty, CultureInfo.CurrentCulture.Name);
        Assert.Equal(TimeSpan.FromHours(1), Zones.Berlin.GetUtcOffset(Dst.Utc(2026, 1, 15, 12)));
        Assert.Equal(TimeSpan.FromHours(2), Zones.Berlin.GetUtcOffset(Dst.Utc(2026, 7, 15, 12)));
        Assert.Equal(TimeSpan.FromHours(5.5), Zones.Kolkata.GetUtcOffset(Dst.Utc(2026, 7, 15, 12)));
        Assert.Equal(TimeSpan.FromHours(11), Zones.LordHowe.GetUtcOffset(Dst.Utc(2026, 1, 15, 12)));
    }

    [Fact]
    public void Daily_ZoneThatSkippedADate_HasAnEmptyPeriodAndNoGapInIndices()
    {
        // Samoa moved west of the date line at the end of 2011: Thursday 29 December was followed by Saturday
        // 31 December, so 2011-12-30 never happened in Pacific/Apia (from memory; the zone database agrees).
        PeriodCalendar calendar = PeriodCalendar.Daily(Zones.Apia);
        long skipped = new DateOnly(2011, 12, 30).DayNumber - PeriodReference.EpochDayNumber;
        Assert.Equal(calendar.StartOf(skipped), calendar.EndOf(skipped));
        Assert.Equal(TimeSpan.Zero, calendar.LabelOf(skipped).Length);
        Assert.Equal(skipped + 1, calendar.PeriodOf(calendar.StartOf(skipped)));
        Assert.Equal(calendar.EndOf(skipped - 1), calendar.StartOf(skipped + 1));
        Assert.Equal("2011-12-29", Dst.LabelAt(calendar, calendar.StartOf(skipped).AddTicks(-1)));
        Assert.Equal("2011-12-31", Dst.LabelAt(calendar, calendar.StartOf(skipped)));
    }

    [Fact]
    public void PeriodOf_SameInstantWrittenWithDifferentOffsets_GivesSamePeriod()
    {
        PeriodCalendar calendar = PeriodCalendar.Daily(Zones.Berlin, 4);
        DateTimeOffset instant = Dst.Utc(2026, 3, 29, 1, 30);
        foreach (int minutes in new[] { -840, -300, 0, 60, 120, 330, 840 })
        {
            Assert.Equal(calendar.PeriodOf(instant), calendar.PeriodOf(instant.ToOffset(TimeSpan.FromMinutes(minutes))));
        }
    }
}
