using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace StreamForecast.Periods;

/// <summary>
/// Local days or ISO weeks in a time zone. Create through <see cref="PeriodCalendar.Daily"/> or
/// <see cref="PeriodCalendar.IsoWeekly"/>.
/// </summary>
/// <remarks>
/// <para>Terms: the <i>wall time</i> of an instant is what the zone's clock shows, as <see cref="DateTime"/> ticks;
/// the <i>offset</i> is wall time minus UTC. A period starts at the first instant whose wall time reaches its local
/// start (date at the start hour) — the rule documented on <see cref="PeriodCalendar"/>.</para>
/// <para>Thread safety: the only mutable state is the one-entry lookup cache, written under a version stamp
/// (a sequence lock): a writer makes the stamp odd, writes, then makes it even again; a reader uses an entry only
/// if it saw the same even stamp before and after reading it. All accesses are volatile, so no reader can combine
/// fields from two different writes.</para>
/// </remarks>
internal sealed class ZonedCalendar : PeriodCalendar
{
    private const long TicksPerDay = TimeSpan.TicksPerDay;

    // TimeZoneInfo reports offsets within ±14 h, so every instant whose wall time is t lies within 14 h of t; a ±16 h
    // window around t holds all of them.
    private const long SearchWindow = 16 * TimeSpan.TicksPerHour;

    // DateOnly.DayNumber of 1970-01-01: local days are counted from the Unix epoch.
    private const long EpochDayNumber = 719_162;

    // The first and last local dates a supported period may start on or end on. The week-long margins keep every
    // internal conversion (one period beyond the supported range, ±16 h) inside DateTime's range.
    private static readonly long s_firstDay = new DateOnly(1, 1, 10).DayNumber - EpochDayNumber;
    private static readonly long s_lastDay = new DateOnly(9999, 12, 22).DayNumber - EpochDayNumber;

    private readonly TimeZoneInfo _zone;
    private readonly long _daysPerPeriod;

    // Weekly: days from Monday 1969-12-29 (the start of 1970-W01) to 1970-01-01. Daily: 0.
    private readonly long _dayShift;
    private readonly long _startHourTicks;
    private readonly bool _hasConstantOffset;
    private readonly long _constantOffsetTicks;

    // The last period resolved: [_cacheStart, _cacheEnd) in UTC ticks is period _cachePeriod. Starts empty.
    private int _cacheVersion;
    private long _cacheStart = long.MaxValue;
    private long _cacheEnd = long.MinValue;
    private long _cachePeriod;

    public ZonedCalendar(PeriodKind kind, TimeZoneInfo zone, int dayStartHour)
        : base(kind, zone, dayStartHour, TimeSpan.FromDays(kind == PeriodKind.IsoWeekly ? 7 : 1),
            ZonedName(kind == PeriodKind.IsoWeekly ? "IsoWeekly" : "Daily", zone, dayStartHour))
    {
        Debug.Assert(kind is PeriodKind.Daily or PeriodKind.IsoWeekly);
        _zone = zone;
        _daysPerPeriod = kind == PeriodKind.IsoWeekly ? 7 : 1;
        _dayShift = kind == PeriodKind.IsoWeekly ? 3 : 0;
        _startHourTicks = dayStartHour * TimeSpan.TicksPerHour;

        // A zone without adjustment rules never changes its offset (UTC, Etc/GMT+5...): pure arithmetic suffices.
        _hasConstantOffset = zone.GetAdjustmentRules().Length == 0;
        _constantOffsetTicks = zone.BaseUtcOffset.Ticks;

        long first = -PeriodMath.FloorDiv(-(s_firstDay + _dayShift), _daysPerPeriod); // first p with FirstDay(p) ≥ s_firstDay
        long pastLast = PeriodMath.FloorDiv(s_lastDay + _dayShift, _daysPerPeriod);   // last p with FirstDay(p) ≤ s_lastDay
        SetRange(first, pastLast - 1);
    }

    private protected override long PeriodOfCore(long utcTicks)
    {
        if (_hasConstantOffset)
        {
            return PeriodOfWallTime(utcTicks + _constantOffsetTicks);
        }

        int version = Volatile.Read(ref _cacheVersion);
        long start = Volatile.Read(ref _cacheStart);
        long end = Volatile.Read(ref _cacheEnd);
        long period = Volatile.Read(ref _cachePeriod);
        if (utcTicks >= start && utcTicks < end && (version & 1) == 0 && Volatile.Read(ref _cacheVersion) == version)
        {
            return period;
        }

        return ResolvePeriod(utcTicks);
    }

    private protected override DateTimeOffset StartOfCore(long period)
    {
        long utc = StartTicks(period, out long offset);
        return offset % TimeSpan.TicksPerMinute == 0
            ? new DateTimeOffset(utc + offset, new TimeSpan(offset))
            : new DateTimeOffset(utc, TimeSpan.Zero);
    }

    private protected override DateOnly DateOfCore(long period) =>
        DateOnly.FromDayNumber((int)(FirstDay(period) + EpochDayNumber));

    /// <summary>The local day (days since 1970-01-01) on which <paramref name="period"/> starts.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private long FirstDay(long period) => (period * _daysPerPeriod) - _dayShift;

    /// <summary>The period whose local start (date at the start hour) is the latest one at or before a wall time.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private long PeriodOfWallTime(long wallTicks)
    {
        long day = PeriodMath.FloorDiv(wallTicks - PeriodMath.UnixEpochTicks - _startHourTicks, TicksPerDay);
        return PeriodMath.FloorDiv(day + _dayShift, _daysPerPeriod);
    }

    /// <summary>The UTC ticks at which <paramref name="period"/> starts, and the zone's offset there.</summary>
    private long StartTicks(long period, out long offset)
    {
        long wall = PeriodMath.UnixEpochTicks + (FirstDay(period) * TicksPerDay) + _startHourTicks;
        if (_hasConstantOffset)
        {
            offset = _constantOffsetTicks;
            return wall - offset;
        }

        return FirstReaching(wall, out offset);
    }

    /// <summary>
    /// The period of an instant the cache did not hold: estimate it from the wall time, then check it against the
    /// true bounds and step to the neighbour if a clock change put the estimate off. The estimate is off by at most
    /// one period for ordinary clock changes, so the steps are bounded. Stores the result in the cache.
    /// </summary>
    private long ResolvePeriod(long utcTicks)
    {
        long period = PeriodOfWallTime(utcTicks + OffsetAt(utcTicks));
        long start = StartTicks(period, out _);
        long end;
        if (utcTicks < start)
        {
            do
            {
                end = start;
                period--;
                start = StartTicks(period, out _);
            }
            while (utcTicks < start);
        }
        else
        {
            end = StartTicks(period + 1, out _);
            while (utcTicks >= end)
            {
                period++;
                start = end;
                end = StartTicks(period + 1, out _);
            }
        }

        int version = Volatile.Read(ref _cacheVersion);
        if ((version & 1) == 0 && Interlocked.CompareExchange(ref _cacheVersion, version + 1, version) == version)
        {
            Volatile.Write(ref _cacheStart, start);
            Volatile.Write(ref _cacheEnd, end);
            Volatile.Write(ref _cachePeriod, period);
            Volatile.Write(ref _cacheVersion, version + 2);
        }

        return period;
    }

    /// <summary>
    /// The first instant (UTC ticks) at which the zone's wall clock reaches or passes <paramref name="wallTicks"/>:
    /// the instant that shows it, the earlier of two when the clocks fall back over it, and the instant of the jump
    /// when the clocks spring forward over it.
    /// </summary>
    /// <remarks>
    /// Let e and l be the offsets 16 hours before and after the wall time. With at most one clock change in that
    /// window (true of every daylight-saving rule), the answer is a = t − e when the clock still shows e there;
    /// otherwise b = t − l when the clock shows l there; otherwise t lies in a forward jump. The jump is at a when t
    /// is the first skipped wall time (the usual case), and is otherwise found by bisection between b and a (at most
    /// about fifty offset look-ups). Zones with two changes within 32 hours (some early history) fall back to a
    /// bisection over the whole window.
    /// </remarks>
    private long FirstReaching(long wallTicks, out long offset)
    {
        long early = OffsetAt(wallTicks - SearchWindow);
        long a = wallTicks - early;
        long atA = OffsetAt(a);
        if (atA == early)
        {
            offset = early;
            return a;
        }

        long late = OffsetAt(wallTicks + SearchWindow);
        long b = wallTicks - late;
        long atB = OffsetAt(b);
        if (atB == late)
        {
            offset = late;
            return b;
        }

        // The wall clock has not reached t at lo and has at hi; bisect for the first instant where it has.
        long lo = wallTicks - SearchWindow;
        long hi = wallTicks + SearchWindow;
        if (b < a && b + atB < wallTicks && a + atA >= wallTicks)
        {
            // t lies in a forward jump between b and a. Usually t is the first skipped wall time (clocks that jump at
            // 02:00 and a start hour of 2), and then the jump happens exactly at a.
            if (a - 1 + OffsetAt(a - 1) < wallTicks)
            {
                offset = atA;
                return a;
            }

            lo = b;
            hi = a;
        }

        while (hi - lo > 1)
        {
            long mid = lo + ((hi - lo) / 2);
            if (mid + OffsetAt(mid) >= wallTicks)
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        offset = OffsetAt(hi);
        return hi;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private long OffsetAt(long utcTicks) => _zone.GetUtcOffset(new DateTime(utcTicks, DateTimeKind.Utc)).Ticks;
}
