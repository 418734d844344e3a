using System.Globalization;

namespace StreamForecast.Periods;

/// <summary>
/// A period described for people: the date it is named after, its ISO week, its bounds and, through
/// <see cref="ToString"/>, a printable label. Get one from <see cref="PeriodCalendar.LabelOf"/>.
/// </summary>
/// <remarks>
/// <para>Building a label converts the period's bounds; the text is formatted only when <see cref="ToString"/> is
/// called, so labels belong in reports, not on the hot path.</para>
/// <para>Immutable and thread-safe.</para>
/// </remarks>
public readonly record struct PeriodLabel
{
    internal PeriodLabel(PeriodKind kind, long period, DateOnly date, DateTimeOffset start, DateTimeOffset end)
    {
        Kind = kind;
        Period = period;
        Date = date;
        Start = start;
        End = end;
        DateTime day = date.ToDateTime(TimeOnly.MinValue);
        IsoWeekYear = ISOWeek.GetYear(day);
        IsoWeek = ISOWeek.GetWeekOfYear(day);
    }

    /// <summary>The kind of calendar the period comes from.</summary>
    public PeriodKind Kind { get; }

    /// <summary>The period index.</summary>
    public long Period { get; }

    /// <summary>
    /// The date the period is named after: the local (business) date for a daily period, the local Monday for an ISO
    /// week, and the UTC date of the start for a fixed interval.
    /// </summary>
    public DateOnly Date { get; }

    /// <summary>The ISO-8601 week-year of <see cref="Date"/>, which differs from its calendar year around New Year
    /// (2021-01-01 is in week-year 2020).</summary>
    public int IsoWeekYear { get; }

    /// <summary>The ISO-8601 week number of <see cref="Date"/>, 1 to 53.</summary>
    public int IsoWeek { get; }

    /// <summary>The first instant of the period, with the zone's offset at that instant.</summary>
    public DateTimeOffset Start { get; }

    /// <summary>The end of the period (exclusive), with the zone's offset at that instant.</summary>
    public DateTimeOffset End { get; }

    /// <summary>The true length of the period (23 or 25 hours for a local day with a clock change).</summary>
    public TimeSpan Length => End - Start;

    /// <summary>
    /// The printable label: <c>2026-12-01</c> for a day, <c>2026-W49</c> for an ISO week (ISO-8601 week-year and
    /// two-digit week), <c>2026-12-01T10:15:00Z</c> for a fixed interval (its UTC start).
    /// </summary>
    /// <returns>The label, formatted with the invariant culture.</returns>
    public override string ToString() => Kind switch
    {
        PeriodKind.IsoWeekly => string.Create(CultureInfo.InvariantCulture, $"{IsoWeekYear:D4}-W{IsoWeek:D2}"),
        PeriodKind.Daily => Date.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture),
        _ => Start.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture),
    };
}
