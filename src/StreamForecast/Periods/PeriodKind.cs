namespace StreamForecast.Periods;

/// <summary>The kinds of period a <see cref="PeriodCalendar"/> can cut time into.</summary>
public enum PeriodKind
{
    /// <summary>
    /// Fixed-length intervals of elapsed time aligned to the Unix epoch (1970-01-01T00:00:00Z); see
    /// <see cref="PeriodCalendar.FixedInterval(TimeSpan)"/>.
    /// </summary>
    FixedInterval,

    /// <summary>Local (business) days in a time zone; see <see cref="PeriodCalendar.Daily(TimeZoneInfo, int)"/>.</summary>
    Daily,

    /// <summary>ISO-8601 weeks (Monday start) in a time zone; see <see cref="PeriodCalendar.IsoWeekly(TimeZoneInfo, int)"/>.</summary>
    IsoWeekly,
}
