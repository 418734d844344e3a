using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Periods;

/// <summary>
/// Cuts the time line into consecutive periods (fixed intervals, local days or ISO weeks) and maps an event's
/// timestamp to the index of its period and back. Create one with <see cref="FixedInterval(TimeSpan)"/>,
/// <see cref="Daily(TimeZoneInfo, int)"/> or <see cref="IsoWeekly(TimeZoneInfo, int)"/>.
/// </summary>
/// <remarks>
/// <para><b>Period indices.</b> A period is named by a <see cref="long"/> index. Indices grow with time and
/// consecutive periods differ by exactly 1, so "the next period" is <c>p + 1</c> and the distance between two
/// periods is a subtraction. Every kind counts from the Unix epoch: period 0 is the fixed interval that starts at
/// 1970-01-01T00:00:00Z, the local (business) day dated 1970-01-01, or the ISO week 1970-W01 (Monday 1969-12-29
/// to Sunday 1970-01-04). Earlier periods have negative indices.</para>
/// <para><b>Half-open periods.</b> Period <c>p</c> covers the instants <c>x</c> with
/// <c><see cref="StartOf"/>(p) ≤ x &lt; <see cref="EndOf"/>(p)</c>, and <c>EndOf(p) = StartOf(p + 1)</c>: every
/// instant in the supported range belongs to exactly one period. An instant's offset does not matter, only the
/// moment it denotes (<see cref="DateTimeOffset.UtcTicks"/>).</para>
/// <para><b>Local periods and daylight saving time.</b> A local day labelled D with start hour h begins at the
/// instant at which the zone's wall clock first reaches D h:00, and ends where day D+1 begins; so a day is 23 or 25
/// hours long (23.5 or 24.5 on Lord Howe Island) when the clocks change inside it. When D h:00 does not exist
/// because the clocks jump over it (spring forward), the day begins at the jump, the first instant after the
/// skipped local time. When D h:00 occurs twice (fall back), the day begins at the earlier of the two instants.
/// An event belongs to a day by the instant it happened, never by its wall-clock reading alone. A local date the
/// zone skips entirely (Pacific/Apia skipped 2011-12-30) is an empty period: its start equals its end and no
/// instant maps to it; the index sequence still has no gap.</para>
/// <para><b>Supported range.</b> Each calendar covers the periods <see cref="MinPeriod"/> … <see cref="MaxPeriod"/>,
/// that is the instants from <see cref="SupportedStart"/> up to (not including) <see cref="SupportedEnd"/>. For
/// fixed intervals this is all of <see cref="DateTimeOffset"/>'s range except its last interval (whose end cannot be
/// represented); zoned calendars keep a margin of about a week at both ends (local dates 0001-01-10 to 9999-12-22)
/// so that no conversion can overflow whatever the zone's offset. Outside, the methods throw
/// <see cref="ArgumentOutOfRangeException"/>, and <see cref="TryPeriodOf"/> returns <see langword="false"/>.</para>
/// <para><b>Cost.</b> Every operation is O(1): the period is computed, never searched for. Fixed intervals and
/// zones with a constant offset (such as UTC) are pure integer arithmetic. For zones with clock changes,
/// <see cref="PeriodOf"/> keeps the bounds of the last period it resolved, so a lookup inside that period costs two
/// comparisons; a lookup elsewhere costs about five to seven <see cref="TimeZoneInfo.GetUtcOffset(DateTime)"/> calls
/// (around a microsecond). A start hour strictly inside a skipped stretch of wall time (possible only where clocks
/// jump by more than an hour or at odd minutes) costs up to about fifty more look-ups for that one period bound.
/// <see cref="PeriodOf"/>, <see cref="TryPeriodOf"/>, <see cref="StartOf"/> and <see cref="EndOf"/> allocate nothing.</para>
/// <para><b>Zone data.</b> Local calendars use the <see cref="TimeZoneInfo"/> given, so their answers follow the
/// operating system's time-zone database (on Linux, the IANA database in /usr/share/zoneinfo), which .NET reports
/// with offsets rounded to whole minutes and within ±14 hours. InvariantGlobalization does not affect time zones.</para>
/// <para><b>Thread safety.</b> A calendar is immutable after creation and safe to share across threads and series.
/// The lookup cache inside zoned calendars is updated lock-free under a version stamp, so concurrent readers never
/// see a torn entry; a reader that races a writer simply recomputes.</para>
/// </remarks>
public abstract class PeriodCalendar : IEquatable<PeriodCalendar>
{
    /// <summary>The latest business-day start hour accepted by <see cref="Daily"/> and <see cref="IsoWeekly"/>.</summary>
    public const int MaxDayStartHour = 23;

    private long _minPeriod;
    private long _maxPeriod;
    private long _supportedStartTicks;
    private long _supportedEndTicks;
    private DateTimeOffset _supportedStart;
    private DateTimeOffset _supportedEnd;

    private protected PeriodCalendar(PeriodKind kind, TimeZoneInfo zone, int dayStartHour, TimeSpan nominalLength, string name)
    {
        Kind = kind;
        Zone = zone;
        DayStartHour = dayStartHour;
        NominalLength = nominalLength;
        Name = name;
    }

    /// <summary>The shortest fixed interval accepted by <see cref="FixedInterval"/>: one second.</summary>
    public static TimeSpan MinFixedLength { get; } = TimeSpan.FromSeconds(1);

    /// <summary>The longest fixed interval accepted by <see cref="FixedInterval"/>: 24 hours.</summary>
    public static TimeSpan MaxFixedLength { get; } = TimeSpan.FromDays(1);

    /// <summary>
    /// Creates a calendar of fixed-length intervals of elapsed time, aligned to the Unix epoch: period <c>p</c> runs
    /// from 1970-01-01T00:00:00Z + p·length to 1970-01-01T00:00:00Z + (p+1)·length. Meant for sensors and other
    /// sources whose periods do not follow a local calendar.
    /// </summary>
    /// <param name="length">
    /// The interval length: a whole number of seconds from 1 second to 24 hours that divides 24 hours evenly (for
    /// example 1, 5, 15 or 30 seconds; 1, 5, 10, 15, 20 or 30 minutes; 1, 2, 3, 4, 6, 8, 12 or 24 hours; but not
    /// 7 minutes or 5 hours). Because the length divides a day, every UTC midnight starts an interval, so intervals
    /// line up with UTC days and with any coarser length that also divides a day.
    /// </param>
    /// <returns>An immutable calendar of kind <see cref="PeriodKind.FixedInterval"/>, with <see cref="Zone"/> UTC.</returns>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="length"/> is zero, negative, not a whole number of seconds, longer than 24 hours, or does not
    /// divide 24 hours.
    /// </exception>
    /// <remarks>Elapsed time ignores time zones and daylight saving time; labels are UTC timestamps.</remarks>
    public static PeriodCalendar FixedInterval(TimeSpan length)
    {
        if (length < MinFixedLength || length > MaxFixedLength || length.Ticks % TimeSpan.TicksPerSecond != 0 ||
            TimeSpan.TicksPerDay % length.Ticks != 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(length), length,
                "a fixed interval must be a whole number of seconds from 1 second to 24 hours that divides 24 hours evenly (such as 1 s, 15 s, 1 min, 5 min, 15 min, 1 h, 6 h or 24 h)");
        }

        return new FixedIntervalCalendar(length);
    }

    /// <summary>
    /// Creates a calendar of local days in <paramref name="zone"/>, optionally business days that start at
    /// <paramref name="dayStartHour"/> instead of midnight.
    /// </summary>
    /// <param name="zone">The time zone whose wall clock defines the days, for example
    /// <c>TimeZoneInfo.FindSystemTimeZoneById("Europe/Berlin")</c>.</param>
    /// <param name="dayStartHour">
    /// The local hour, 0 to 23, at which a day begins; 0 (the default) is midnight. The day labelled D runs from D
    /// at this hour to D+1 at this hour: with 4, a sale at 01:30 on 2026-12-02 counts toward 2026-12-01.
    /// </param>
    /// <returns>An immutable calendar of kind <see cref="PeriodKind.Daily"/>. Period 0 is the day dated 1970-01-01.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="zone"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="dayStartHour"/> is not between 0 and 23.</exception>
    /// <remarks>Days are 23, 24 or 25 hours long (or other lengths where a zone's clocks change by other
    /// amounts); see the remarks on <see cref="PeriodCalendar"/> for the rule at clock changes.</remarks>
    public static PeriodCalendar Daily(TimeZoneInfo zone, int dayStartHour = 0)
    {
        ArgumentNullException.ThrowIfNull(zone);
        CheckDayStartHour(dayStartHour);
        return new ZonedCalendar(PeriodKind.Daily, zone, dayStartHour);
    }

    /// <summary>
    /// Creates a calendar of ISO-8601 weeks in <paramref name="zone"/>: weeks start on Monday (at
    /// <paramref name="dayStartHour"/>, local time) and are numbered within ISO week-years, in which week 1 is the
    /// week that contains 4 January, so a year has 52 or 53 weeks and the days around New Year may belong to the
    /// neighbouring week-year (2021-01-01 is in 2020-W53).
    /// </summary>
    /// <param name="zone">The time zone whose wall clock defines the weeks.</param>
    /// <param name="dayStartHour">The local hour, 0 to 23, at which the week's Monday begins; 0 (the default) is midnight.</param>
    /// <returns>An immutable calendar of kind <see cref="PeriodKind.IsoWeekly"/>. Period 0 is 1970-W01, which
    /// starts on Monday 1969-12-29.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="zone"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="dayStartHour"/> is not between 0 and 23.</exception>
    /// <remarks><see cref="LabelOf"/> gives the ISO week-year and week number (as <see cref="System.Globalization.ISOWeek"/>
    /// computes them). A week is 167 or 169 hours long when the clocks change inside it.</remarks>
    public static PeriodCalendar IsoWeekly(TimeZoneInfo zone, int dayStartHour = 0)
    {
        ArgumentNullException.ThrowIfNull(zone);
        CheckDayStartHour(dayStartHour);
        return new ZonedCalendar(PeriodKind.IsoWeekly, zone, dayStartHour);
    }

    /// <summary>The kind of period.</summary>
    public PeriodKind Kind { get; }

    /// <summary>The time zone whose wall clock defines the periods; <see cref="TimeZoneInfo.Utc"/> for fixed intervals.</summary>
    public TimeZoneInfo Zone { get; }

    /// <summary>The local hour at which days (and weeks) begin; 0 for fixed intervals.</summary>
    public int DayStartHour { get; }

    /// <summary>
    /// The length of a period when no clock change falls inside it: the interval length, one day or seven days.
    /// Local periods can be shorter or longer; use <see cref="StartOf"/> and <see cref="EndOf"/> for the true bounds.
    /// </summary>
    public TimeSpan NominalLength { get; }

    /// <summary>
    /// A short description for reports and logs, such as <c>FixedInterval(00:15:00)</c>, <c>Daily(Europe/Berlin)</c>
    /// or <c>IsoWeekly(America/New_York, from 04:00)</c>.
    /// </summary>
    public string Name { get; }

    /// <summary>The first period the calendar supports.</summary>
    public long MinPeriod => _minPeriod;

    /// <summary>The last period the calendar supports.</summary>
    public long MaxPeriod => _maxPeriod;

    /// <summary>The first supported instant: the start of <see cref="MinPeriod"/>.</summary>
    public DateTimeOffset SupportedStart => _supportedStart;

    /// <summary>The end (exclusive) of the supported instants: the end of <see cref="MaxPeriod"/>.</summary>
    public DateTimeOffset SupportedEnd => _supportedEnd;

    /// <summary>The index of the period that contains <paramref name="instant"/>.</summary>
    /// <param name="instant">An instant from <see cref="SupportedStart"/> up to (not including) <see cref="SupportedEnd"/>;
    /// only the moment counts, not the offset it is written with.</param>
    /// <returns>The period index <c>p</c> with <c>StartOf(p) ≤ instant &lt; EndOf(p)</c>.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="instant"/> is outside the supported range.</exception>
    /// <remarks>O(1) and allocation-free; two comparisons when the instant falls in the same period as the previous
    /// lookup (see the remarks on <see cref="PeriodCalendar"/>). Monotonic: a later instant never gets a smaller
    /// index. Thread-safe.</remarks>
    public long PeriodOf(DateTimeOffset instant)
    {
        long ticks = instant.UtcTicks;
        if (ticks < _supportedStartTicks || ticks >= _supportedEndTicks)
        {
            ThrowInstantOutOfRange(instant);
        }

        return PeriodOfCore(ticks);
    }

    /// <summary>Gets the index of the period that contains <paramref name="instant"/> if the instant is supported.</summary>
    /// <param name="instant">Any instant.</param>
    /// <param name="period">The period index, or 0 when the result is <see langword="false"/>.</param>
    /// <returns>Whether <paramref name="instant"/> lies in the supported range.</returns>
    /// <remarks>Same cost as <see cref="PeriodOf"/>; never throws. Thread-safe.</remarks>
    public bool TryPeriodOf(DateTimeOffset instant, out long period)
    {
        long ticks = instant.UtcTicks;
        if (ticks < _supportedStartTicks || ticks >= _supportedEndTicks)
        {
            period = 0;
            return false;
        }

        period = PeriodOfCore(ticks);
        return true;
    }

    /// <summary>The first instant of <paramref name="period"/>.</summary>
    /// <param name="period">A period from <see cref="MinPeriod"/> to <see cref="MaxPeriod"/>.</param>
    /// <returns>The start, written with the zone's UTC offset at that instant (offset zero for fixed intervals).</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="period"/> is outside the supported range.</exception>
    /// <remarks>O(1), allocation-free, thread-safe.</remarks>
    public DateTimeOffset StartOf(long period)
    {
        CheckPeriod(period);
        return StartOfCore(period);
    }

    /// <summary>The end of <paramref name="period"/>, exclusive: the first instant of the next period.</summary>
    /// <param name="period">A period from <see cref="MinPeriod"/> to <see cref="MaxPeriod"/>.</param>
    /// <returns><c>StartOf(period + 1)</c>, written with the zone's UTC offset at that instant.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="period"/> is outside the supported range.</exception>
    /// <remarks>O(1), allocation-free, thread-safe.</remarks>
    public DateTimeOffset EndOf(long period)
    {
        CheckPeriod(period);
        return StartOfCore(period + 1);
    }

    /// <summary>Describes <paramref name="period"/> for people: its date, ISO week, bounds and a printable label.</summary>
    /// <param name="period">A period from <see cref="MinPeriod"/> to <see cref="MaxPeriod"/>.</param>
    /// <returns>The period's label; its <see cref="PeriodLabel.ToString"/> gives text such as <c>2026-12-01</c>,
    /// <c>2026-W49</c> or <c>2026-12-01T10:15:00Z</c>.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="period"/> is outside the supported range.</exception>
    /// <remarks>Meant for reports, not the hot path: it converts both bounds, and formatting happens only when the
    /// label's text is asked for. Thread-safe.</remarks>
    public PeriodLabel LabelOf(long period)
    {
        CheckPeriod(period);
        return new PeriodLabel(Kind, period, DateOfCore(period), StartOfCore(period), StartOfCore(period + 1));
    }

    /// <summary>Whether <paramref name="other"/> cuts time into the same periods with the same indices.</summary>
    /// <param name="other">Another calendar, or null.</param>
    /// <returns><see langword="true"/> for the same kind, length, start hour and an equal time zone (same id and
    /// same adjustment rules).</returns>
    public bool Equals(PeriodCalendar? other) =>
        other is not null &&
        (ReferenceEquals(this, other) ||
         (Kind == other.Kind && NominalLength == other.NominalLength && DayStartHour == other.DayStartHour &&
          string.Equals(Zone.Id, other.Zone.Id, StringComparison.Ordinal) && Zone.HasSameRules(other.Zone)));

    /// <inheritdoc/>
    public override bool Equals(object? obj) => Equals(obj as PeriodCalendar);

    /// <inheritdoc/>
    public override int GetHashCode() =>
        HashCode.Combine(Kind, NominalLength, DayStartHour, StringComparer.Ordinal.GetHashCode(Zone.Id));

    /// <summary>Returns <see cref="Name"/>.</summary>
    /// <returns>The calendar's name.</returns>
    public override string ToString() => Name;

    /// <summary>The period containing a supported instant given in UTC ticks.</summary>
    private protected abstract long PeriodOfCore(long utcTicks);

    /// <summary>The start of a period from <see cref="MinPeriod"/> to <see cref="MaxPeriod"/> + 1.</summary>
    private protected abstract DateTimeOffset StartOfCore(long period);

    /// <summary>The date a supported period is named after (see <see cref="PeriodLabel.Date"/>).</summary>
    private protected abstract DateOnly DateOfCore(long period);

    /// <summary>Sets the supported range; called once at the end of each derived constructor.</summary>
    private protected void SetRange(long minPeriod, long maxPeriod)
    {
        _minPeriod = minPeriod;
        _maxPeriod = maxPeriod;
        _supportedStart = StartOfCore(minPeriod);
        _supportedEnd = StartOfCore(maxPeriod + 1);
        _supportedStartTicks = _supportedStart.UtcTicks;
        _supportedEndTicks = _supportedEnd.UtcTicks;
    }

    private protected static string ZonedName(string kind, TimeZoneInfo zone, int dayStartHour) =>
        dayStartHour == 0
            ? string.Create(CultureInfo.InvariantCulture, $"{kind}({zone.Id})")
            : string.Create(CultureInfo.InvariantCulture, $"{kind}({zone.Id}, from {dayStartHour:D2}:00)");

    private static void CheckDayStartHour(int dayStartHour)
    {
        if (dayStartHour is < 0 or > MaxDayStartHour)
        {
            ThrowHelper.ThrowOutOfRange(nameof(dayStartHour), dayStartHour,
                "the day start hour is a local hour from 0 (midnight) to 23");
        }
    }

    private void CheckPeriod(long period)
    {
        if (period < _minPeriod || period > _maxPeriod)
        {
            ThrowPeriodOutOfRange(period);
        }
    }

    private void ThrowPeriodOutOfRange(long period) =>
        ThrowHelper.ThrowOutOfRange(nameof(period), period,
            string.Create(CultureInfo.InvariantCulture, $"the {Name} calendar supports periods {_minPeriod} to {_maxPeriod}"));

    private void ThrowInstantOutOfRange(DateTimeOffset instant) =>
        ThrowHelper.ThrowOutOfRange(nameof(instant), instant,
            string.Create(CultureInfo.InvariantCulture, $"the {Name} calendar covers instants from {_supportedStart:O} up to (not including) {_supportedEnd:O}"));
}
