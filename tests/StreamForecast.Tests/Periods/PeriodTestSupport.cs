using System.Collections.Concurrent;
using FsCheck;
using FsCheck.Fluent;

namespace StreamForecast.Tests.Periods;

/// <summary>The IANA time zones the period tests use, read from the machine's zone database.</summary>
public static class Zones
{
    public static TimeZoneInfo Berlin { get; } = TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin");

    public static TimeZoneInfo NewYork { get; } = TimeZoneInfo.FindSystemTimeZoneById("America/New_York");

    /// <summary>Lord Howe Island: +10:30 standard time, +11:00 in summer, a 30-minute shift.</summary>
    public static TimeZoneInfo LordHowe { get; } = TimeZoneInfo.FindSystemTimeZoneById("Australia/Lord_Howe");

    /// <summary>India: +05:30 all year since 1945.</summary>
    public static TimeZoneInfo Kolkata { get; } = TimeZoneInfo.FindSystemTimeZoneById("Asia/Kolkata");

    public static TimeZoneInfo Apia { get; } = TimeZoneInfo.FindSystemTimeZoneById("Pacific/Apia");

    /// <summary>
    /// An invented zone (UTC+0 in winter, UTC+2 in summer) whose clocks fall back two hours, from 04:00 to 02:00 on
    /// the last Sunday of October, so a start hour of 3 lies strictly inside the repeated local hours.
    /// </summary>
    public static TimeZoneInfo TwoHourShift { get; } = TimeZoneInfo.CreateCustomTimeZone(
        "Test/TwoHourShift", TimeSpan.Zero, "Two-hour shift (test)", "Standard (test)", "Summer (test)",
        [
            TimeZoneInfo.AdjustmentRule.CreateAdjustmentRule(
                new DateTime(2000, 1, 1), new DateTime(2099, 12, 31), TimeSpan.FromHours(2),
                TimeZoneInfo.TransitionTime.CreateFloatingDateRule(new DateTime(1, 1, 1, 2, 0, 0), 3, 5, DayOfWeek.Sunday),
                TimeZoneInfo.TransitionTime.CreateFloatingDateRule(new DateTime(1, 1, 1, 4, 0, 0), 10, 5, DayOfWeek.Sunday)),
        ]);
}

/// <summary>Plain, separately written references for period bounds, and instant generators.</summary>
public static class PeriodReference
{
    /// <summary>DateOnly.DayNumber of 1970-01-01, the documented origin of daily period indices.</summary>
    public const int EpochDayNumber = 719_162;

    private static readonly ConcurrentDictionary<string, long[]> s_transitions = new(StringComparer.Ordinal);

    /// <summary>The local date a daily period is named after, from the documented origin (period 0 = 1970-01-01).</summary>
    public static DateOnly DailyDate(long period) => DateOnly.FromDayNumber((int)(EpochDayNumber + period));

    /// <summary>The Monday a weekly period starts on, from the documented origin (period 0 = 1970-W01, Monday 1969-12-29).</summary>
    public static DateOnly WeeklyMonday(long period) => new DateOnly(1969, 12, 29).AddDays((int)(7 * period));

    /// <summary>
    /// The first whole UTC minute at which <paramref name="zone"/>'s wall clock (TimeZoneInfo.ConvertTimeFromUtc)
    /// reads <paramref name="localStart"/> or later: the rule documented on PeriodCalendar, found by scanning forward
    /// from 15 hours before, first in 15-minute steps, then minute by minute. Valid where clock changes fall on
    /// whole minutes and the clocks never fall back within 15 minutes of reaching the time (every zone tested).
    /// </summary>
    public static DateTimeOffset FirstInstantShowing(TimeZoneInfo zone, DateTime localStart)
    {
        var utc = DateTime.SpecifyKind(localStart.AddHours(-15), DateTimeKind.Utc);
        utc = new DateTime(utc.Ticks - (utc.Ticks % TimeSpan.TicksPerMinute), DateTimeKind.Utc);
        while (TimeZoneInfo.ConvertTimeFromUtc(utc.AddMinutes(15), zone) < localStart)
        {
            utc = utc.AddMinutes(15);
        }

        while (TimeZoneInfo.ConvertTimeFromUtc(utc, zone) < localStart)
        {
            utc = utc.AddMinutes(1);
        }

        return new DateTimeOffset(utc);
    }

    /// <summary>A uniformly drawn UTC tick count in [<paramref name="from"/>, <paramref name="to"/>).</summary>
    public static Gen<long> Ticks(long from, long to) =>
        Gen.Zip(Gen.Choose(0, int.MaxValue), Gen.Choose(0, int.MaxValue),
            (hi, lo) => from + (long)(((((ulong)hi) << 31) | (uint)lo) % (ulong)(to - from)));

    /// <summary>A uniformly drawn whole number in [<paramref name="from"/>, <paramref name="to"/>].</summary>
    public static Gen<long> Whole(long from, long to) => Ticks(from, to + 1);

    /// <summary>
    /// Coarse UTC instants (ticks) between 1960 and 2060 at which <paramref name="zone"/>'s offset changes, found by
    /// comparing offsets three hours apart. Empty for zones with a constant offset.
    /// </summary>
    public static long[] TransitionsNear(TimeZoneInfo zone) => s_transitions.GetOrAdd(zone.Id, _ =>
    {
        var found = new List<long>();
        var t = new DateTime(1960, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        var end = new DateTime(2060, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        TimeSpan previous = zone.GetUtcOffset(t);
        for (; t < end; t = t.AddHours(3))
        {
            TimeSpan offset = zone.GetUtcOffset(t);
            if (offset != previous)
            {
                found.Add(t.Ticks);
                previous = offset;
            }
        }

        return [.. found];
    });
}
