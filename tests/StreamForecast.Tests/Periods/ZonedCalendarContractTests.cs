using StreamForecast.Periods;

namespace StreamForecast.Tests.Periods;

/// <summary>
/// The contract for local calendars, plus a check of every period start against a plain minute-by-minute scan of
/// the zone's wall clock (<see cref="PeriodReference.FirstInstantShowing"/>), with the period index derived from the
/// documented origin.
/// </summary>
public abstract class ZonedCalendarContractTests : PeriodCalendarContractTests
{
    protected abstract TimeZoneInfo Zone { get; }

    protected virtual int DayStartHour => 0;

    protected abstract bool IsWeekly { get; }

    protected override PeriodCalendar CreateCalendar() =>
        IsWeekly ? PeriodCalendar.IsoWeekly(Zone, DayStartHour) : PeriodCalendar.Daily(Zone, DayStartHour);

    /// <summary>The local date a period is named after, from the documented origin (DERIVED, independent of the calendar).</summary>
    protected DateOnly DateOf(long period) => IsWeekly ? PeriodReference.WeeklyMonday(period) : PeriodReference.DailyDate(period);

    /// <summary>The period index of a local date, from the documented origin.</summary>
    protected long PeriodIndexOf(DateOnly date) => IsWeekly
        ? Math.DivRem(date.DayNumber - new DateOnly(1969, 12, 29).DayNumber, 7).Quotient
        : date.DayNumber - PeriodReference.EpochDayNumber;

    /// <summary>The expected start of a period: the first instant the wall clock reaches its date at the start hour.</summary>
    protected DateTimeOffset ReferenceStart(long period) =>
        PeriodReference.FirstInstantShowing(Zone, DateOf(period).ToDateTime(new TimeOnly(DayStartHour, 0)));

    [Fact]
    public void StartOf_EveryPeriodOf2026_MatchesWallClockScan()
    {
        long first = PeriodIndexOf(new DateOnly(2026, 1, 1));
        long last = PeriodIndexOf(new DateOnly(2026, 12, 31));
        for (long p = first; p <= last; p++)
        {
            Assert.Equal(ReferenceStart(p), Calendar.StartOf(p));
            Assert.Equal(DateOf(p), Calendar.LabelOf(p).Date);
        }
    }

    [Fact]
    public void StartOf_RandomPeriods1970To2100_MatchWallClockScan()
    {
        var rng = new Random(1970);
        long first = PeriodIndexOf(new DateOnly(1970, 1, 5));
        long last = PeriodIndexOf(new DateOnly(2100, 1, 1));
        for (int i = 0; i < 60; i++)
        {
            long p = first + (long)(rng.NextDouble() * (last - first));
            Assert.Equal(ReferenceStart(p), Calendar.StartOf(p));
            Assert.Equal(ReferenceStart(p + 1), Calendar.EndOf(p));
        }
    }

    [Fact]
    public void PeriodOf_EveryHalfHourAroundClockChanges_MatchesScannedBounds()
    {
        // For instants within two days of each clock change 2020–2030, the period is the one whose scanned bounds
        // hold the instant.
        var starts = new Dictionary<long, DateTimeOffset>();
        DateTimeOffset Start(long p) => starts.TryGetValue(p, out DateTimeOffset s) ? s : starts[p] = ReferenceStart(p);
        foreach (long transition in PeriodReference.TransitionsNear(Zone))
        {
            var t = new DateTimeOffset(transition, TimeSpan.Zero);
            if (t.Year is < 2020 or > 2030)
            {
                continue;
            }

            for (var x = t.AddDays(-2); x < t.AddDays(2); x = x.AddMinutes(30))
            {
                long p = Calendar.PeriodOf(x);
                Assert.True(Start(p) <= x && x < Start(p + 1), $"{x:O} → {p} ({Calendar.LabelOf(p)})");
            }
        }
    }
}

/// <summary>The contract for fixed intervals, with whole Unix seconds (DateTimeOffset.ToUnixTimeSeconds) as the oracle.</summary>
public abstract class FixedIntervalContractTests : PeriodCalendarContractTests
{
    protected abstract TimeSpan Length { get; }

    protected override PeriodCalendar CreateCalendar() => PeriodCalendar.FixedInterval(Length);

    [Fact]
    public void PeriodOf_RandomInstants_IsFloorOfUnixSecondsOverLength()
    {
        long seconds = (long)Length.TotalSeconds;
        var rng = new Random(86_400);
        long from = Calendar.SupportedStart.UtcTicks;
        long span = Calendar.SupportedEnd.UtcTicks - from;
        for (int i = 0; i < 2000; i++)
        {
            var x = new DateTimeOffset(from + (long)(rng.NextDouble() * span), TimeSpan.Zero);
            long unix = x.ToUnixTimeSeconds(); // BCL: whole seconds since 1970-01-01T00:00:00Z, rounded down
            long expected = unix >= 0 ? unix / seconds : -((-unix + seconds - 1) / seconds);
            Assert.Equal(expected, Calendar.PeriodOf(x));
            Assert.Equal(DateTimeOffset.FromUnixTimeSeconds(expected * seconds), Calendar.StartOf(expected));
        }
    }

    [Fact]
    public void PeriodOf_UnixEpoch_IsPeriodZero()
    {
        // Documented origin: period 0 starts at 1970-01-01T00:00:00Z; the instant before it is in period −1.
        Assert.Equal(0, Calendar.PeriodOf(DateTimeOffset.UnixEpoch));
        Assert.Equal(DateTimeOffset.UnixEpoch, Calendar.StartOf(0));
        Assert.Equal(-1, Calendar.PeriodOf(DateTimeOffset.UnixEpoch.AddTicks(-1)));
        Assert.Equal(DateTimeOffset.UnixEpoch - Length, Calendar.StartOf(-1));
        Assert.Equal(DateTimeOffset.UnixEpoch + Length, Calendar.EndOf(0));
    }

    [Fact]
    public void StartOf_EveryUtcMidnight_StartsAnInterval()
    {
        // The length divides 24 h, so UTC midnights before and after 1970 are interval starts (alignment).
        for (var day = new DateTimeOffset(1969, 12, 1, 0, 0, 0, TimeSpan.Zero); day.Year < 1971; day = day.AddDays(13))
        {
            long p = Calendar.PeriodOf(day);
            Assert.Equal(day, Calendar.StartOf(p));
            Assert.Equal(0, (day - DateTimeOffset.UnixEpoch).Ticks % Length.Ticks);
        }
    }

    [Fact]
    public void PeriodOf_InstantsBefore1970_HaveNegativeIndicesRoundedDown()
    {
        long perDay = 86_400 / (long)Length.TotalSeconds;
        Assert.Equal(-1, Calendar.PeriodOf(new DateTimeOffset(1969, 12, 31, 23, 59, 59, TimeSpan.Zero)));
        Assert.Equal(-perDay * 365, Calendar.PeriodOf(new DateTimeOffset(1969, 1, 1, 0, 0, 0, TimeSpan.Zero)));
        Assert.Equal(-perDay * 365, Calendar.PeriodOf(new DateTimeOffset(1969, 1, 1, 0, 0, 0, TimeSpan.Zero).Add(Length).AddTicks(-1)));
    }

    [Fact]
    public void SupportedRange_FixedInterval_IsAllOfDateTimeOffsetButTheLastInterval()
    {
        // Documented: from DateTimeOffset.MinValue up to 10000-01-01T00:00Z minus one interval (that end cannot be represented).
        Assert.Equal(DateTimeOffset.MinValue, Calendar.SupportedStart);
        Assert.Equal(new DateTimeOffset(DateTime.MaxValue.Ticks + 1 - Length.Ticks, TimeSpan.Zero), Calendar.SupportedEnd);
        Assert.Equal(Calendar.MinPeriod, Calendar.PeriodOf(DateTimeOffset.MinValue));
    }
}
