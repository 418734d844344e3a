using StreamForecast.Internal;

namespace StreamForecast.Periods;

/// <summary>
/// The lateness rules for closing periods by event time: how long after an instant events for it may still arrive
/// (<see cref="AllowedLateness"/>), and how many closed periods may still be corrected by late events
/// (<see cref="RestatementPeriods"/>). Pure functions over a <see cref="PeriodCalendar"/> and the latest event time
/// seen; no clocks are read.
/// </summary>
/// <remarks>
/// <para><b>Watermark.</b> Given the latest event time seen, <c>maxEventTime</c>, the watermark is
/// <c>maxEventTime − AllowedLateness</c>: the claim that no more events earlier than it are expected. A period
/// closes when the watermark reaches its end: period <c>p</c> is closed exactly when
/// <c>calendar.EndOf(p) ≤ watermark</c>, so with zero lateness the first event of a new period closes the previous
/// one. The last closed period is therefore <c>calendar.PeriodOf(watermark) − 1</c>.</para>
/// <para><b>Late events.</b> An event is late when its period is already closed. It is inside the restatement
/// horizon when its period is among the <see cref="RestatementPeriods"/> most recently closed ones, that is
/// <c>period ≥ lastClosed − RestatementPeriods + 1</c>; with 0 no closed period is restated.</para>
/// <para><b>Defaults.</b> <c>default(LatenessPolicy)</c> is valid: zero lateness and no restatement.</para>
/// <para><b>Cost.</b> <see cref="Classify(long, long)"/> is integer comparison; the overloads that take instants
/// cost one or two <see cref="PeriodCalendar.PeriodOf"/> lookups. Nothing allocates.</para>
/// <para><b>Thread safety.</b> An immutable value; safe to share.</para>
/// </remarks>
public readonly record struct LatenessPolicy
{
    /// <summary>Creates a lateness policy.</summary>
    /// <param name="allowedLateness">How far behind the latest event time an event may be and still count as on
    /// time; zero or more. <see cref="TimeSpan.Zero"/> closes a period as soon as an event of a later period arrives.</param>
    /// <param name="restatementPeriods">How many of the most recently closed periods late events may still restate;
    /// zero (the default) or more.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="allowedLateness"/> or
    /// <paramref name="restatementPeriods"/> is negative.</exception>
    public LatenessPolicy(TimeSpan allowedLateness, int restatementPeriods = 0)
    {
        if (allowedLateness < TimeSpan.Zero)
        {
            ThrowHelper.ThrowOutOfRange(nameof(allowedLateness), allowedLateness, "the allowed lateness is a duration of zero or more");
        }

        if (restatementPeriods < 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(restatementPeriods), restatementPeriods, "the restatement horizon counts closed periods and must be zero or more");
        }

        AllowedLateness = allowedLateness;
        RestatementPeriods = restatementPeriods;
    }

    /// <summary>How far behind the latest event time the watermark trails. Zero or more; default zero.</summary>
    public TimeSpan AllowedLateness { get; }

    /// <summary>How many of the most recently closed periods late events may still restate. Zero or more; default zero.</summary>
    public int RestatementPeriods { get; }

    /// <summary>The watermark for the latest event time seen: <c>maxEventTime − AllowedLateness</c>.</summary>
    /// <param name="maxEventTime">The latest event time seen so far.</param>
    /// <returns>The watermark in UTC (offset zero), or <see cref="DateTimeOffset.MinValue"/> when the subtraction
    /// would go below it.</returns>
    public DateTimeOffset WatermarkOf(DateTimeOffset maxEventTime)
    {
        long ticks = maxEventTime.UtcTicks - AllowedLateness.Ticks;
        return ticks <= 0 ? DateTimeOffset.MinValue : new DateTimeOffset(ticks, TimeSpan.Zero);
    }

    /// <summary>The last period the watermark has closed: the latest <c>p</c> with <c>calendar.EndOf(p) ≤ watermark</c>.</summary>
    /// <param name="calendar">The calendar that defines the periods.</param>
    /// <param name="maxEventTime">The latest event time seen so far; pass <see cref="DateTimeOffset.MinValue"/> when
    /// none has been seen.</param>
    /// <returns><c>calendar.PeriodOf(watermark) − 1</c>; <c>calendar.MinPeriod − 1</c> (nothing closed) when the
    /// watermark is before <see cref="PeriodCalendar.SupportedStart"/>, and <see cref="PeriodCalendar.MaxPeriod"/>
    /// when it is at or after <see cref="PeriodCalendar.SupportedEnd"/>.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="calendar"/> is null.</exception>
    /// <remarks>Never throws for an instant outside the calendar's range. O(1), allocation-free.</remarks>
    public long LastClosedPeriod(PeriodCalendar calendar, DateTimeOffset maxEventTime)
    {
        ArgumentNullException.ThrowIfNull(calendar);
        DateTimeOffset watermark = WatermarkOf(maxEventTime);
        if (calendar.TryPeriodOf(watermark, out long period))
        {
            return period - 1;
        }

        return watermark < calendar.SupportedStart ? calendar.MinPeriod - 1 : calendar.MaxPeriod;
    }

    /// <summary>The oldest closed period late events may still restate, given the last closed period.</summary>
    /// <param name="lastClosedPeriod">The last closed period (from <see cref="LastClosedPeriod"/>).</param>
    /// <returns><c>lastClosedPeriod − RestatementPeriods + 1</c> (saturating at the ends of <see cref="long"/>); with
    /// no restatement this is <c>lastClosedPeriod + 1</c>, the first open period. State for older periods can be
    /// released.</returns>
    public long OldestRestatablePeriod(long lastClosedPeriod)
    {
        long back = RestatementPeriods - 1L;
        if (back < 0)
        {
            return lastClosedPeriod == long.MaxValue ? long.MaxValue : lastClosedPeriod + 1;
        }

        return lastClosedPeriod < long.MinValue + back ? long.MinValue : lastClosedPeriod - back;
    }

    /// <summary>Classifies an event by its period against the last closed period.</summary>
    /// <param name="eventPeriod">The event's period (<see cref="PeriodCalendar.PeriodOf"/> of its event time).</param>
    /// <param name="lastClosedPeriod">The last closed period (from <see cref="LastClosedPeriod"/>).</param>
    /// <returns><see cref="EventTiming.OnTime"/> when <c>eventPeriod &gt; lastClosedPeriod</c>;
    /// <see cref="EventTiming.Late"/> when the period is one of the <see cref="RestatementPeriods"/> most recently
    /// closed; <see cref="EventTiming.TooLate"/> otherwise.</returns>
    /// <remarks>Two integer comparisons; exact for every pair of <see cref="long"/> values.</remarks>
    public EventTiming Classify(long eventPeriod, long lastClosedPeriod)
    {
        if (eventPeriod > lastClosedPeriod)
        {
            return EventTiming.OnTime;
        }

        // 0 ≤ lastClosedPeriod − eventPeriod < 2^64, exact as an unsigned difference.
        return unchecked((ulong)(lastClosedPeriod - eventPeriod)) < (ulong)RestatementPeriods ? EventTiming.Late : EventTiming.TooLate;
    }

    /// <summary>Classifies an event by its event time, given the latest event time seen.</summary>
    /// <param name="calendar">The calendar that defines the periods.</param>
    /// <param name="maxEventTime">The latest event time seen so far (before or including this event, as the caller's
    /// engine defines it).</param>
    /// <param name="eventTime">The event's own timestamp.</param>
    /// <returns>The event's timing; see <see cref="Classify(long, long)"/>.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="calendar"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="eventTime"/> is outside the calendar's supported range.</exception>
    public EventTiming Classify(PeriodCalendar calendar, DateTimeOffset maxEventTime, DateTimeOffset eventTime)
    {
        ArgumentNullException.ThrowIfNull(calendar);
        long eventPeriod = calendar.PeriodOf(eventTime);
        return Classify(eventPeriod, LastClosedPeriod(calendar, maxEventTime));
    }
}
