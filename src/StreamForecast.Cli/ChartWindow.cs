using StreamForecast.Periods;

namespace StreamForecast.Cli;

/// <summary>
/// Which periods of a series a chart draws (<c>chart --from/--to/--last</c>). The whole series is always replayed, so
/// the model and its error statistics have their full history; only the drawing is limited to the window.
/// </summary>
/// <param name="From">The first period start drawn (inclusive), or null for the series' first period.</param>
/// <param name="Until">The instant the drawn periods start before (exclusive), or null for the series' last period.</param>
/// <param name="Last">The number of most recent periods drawn (after <paramref name="From"/>/<paramref name="Until"/>), or null for all.</param>
internal sealed record ChartWindow(DateTimeOffset? From, DateTimeOffset? Until, int? Last)
{
    /// <summary>No window: every period of the series.</summary>
    public static ChartWindow All { get; } = new(null, null, null);

    public bool IsAll => From is null && Until is null && Last is null;

    /// <summary>
    /// Reads the window options. A date alone (<c>2025-05-12</c>) is that day's start in <paramref name="zone"/>; for
    /// <c>--to</c> it includes the whole day. A time (<c>2025-05-12T06:00</c>, with or without an offset) is that instant;
    /// <c>--to</c> includes the period starting at it. <c>--last</c> combines with neither.
    /// </summary>
    public static ChartWindow Parse(string? from, string? to, int? last, TimeZoneInfo zone, PeriodCalendar calendar)
    {
        if (last is not null && (from is not null || to is not null))
        {
            throw new UsageException("--last counts back from the series' last period; give either --last or --from/--to, not both.");
        }

        if (last is < 1)
        {
            throw new UsageException($"--last {last}: give 1 or more periods.");
        }

        DateTimeOffset? start = from is null ? null : Instant("--from", from, zone, calendar, endOfDay: false);
        DateTimeOffset? until = to is null ? null : Instant("--to", to, zone, calendar, endOfDay: true);
        if (start is { } s && until is { } u && u <= s)
        {
            throw new UsageException($"--from {from} --to {to}: the window is empty; --to must not come before --from.");
        }

        return new ChartWindow(start, until, last);
    }

    /// <summary>The periods of one series (ascending period starts) that the window keeps.</summary>
    public List<T> Select<T>(IReadOnlyList<T> ascending, Func<T, DateTimeOffset> start)
    {
        var kept = new List<T>(ascending.Count);
        foreach (T item in ascending)
        {
            DateTimeOffset at = start(item);
            if ((From is null || at >= From) && (Until is null || at < Until))
            {
                kept.Add(item);
            }
        }

        return Last is int n && kept.Count > n ? kept.GetRange(kept.Count - n, n) : kept;
    }

    /// <summary>How the window reads in a message.</summary>
    public string Describe(TimeZoneInfo zone) => (From, Until, Last) switch
    {
        (_, _, int n) => "the last " + Output.Count(n, "period"),
        (DateTimeOffset f, null, _) => "from " + Local(f, zone),
        (null, DateTimeOffset u, _) => "before " + Local(u, zone),
        (DateTimeOffset f, DateTimeOffset u, _) => $"from {Local(f, zone)}, before {Local(u, zone)}",
        _ => "all periods",
    };

    private static string Local(DateTimeOffset time, TimeZoneInfo zone) =>
        TimeZoneInfo.ConvertTime(time, zone).ToString("yyyy-MM-dd HH:mm", System.Globalization.CultureInfo.InvariantCulture);

    private static DateTimeOffset Instant(string option, string text, TimeZoneInfo zone, PeriodCalendar calendar, bool endOfDay)
    {
        if (!TimestampReader.Iso(zone, calendar).TryRead(text.Trim(), out DateTimeOffset time, out string? problem))
        {
            throw new UsageException($"{option} {text}: {problem ?? "not an ISO 8601 date or time"} (e.g. 2025-05-12 or 2025-05-12T06:00).");
        }

        bool dateOnly = text.Trim().Length == 10;
        if (!endOfDay)
        {
            return time;
        }

        if (dateOnly)
        {
            // The whole day: up to the next local midnight.
            DateTime nextDay = TimeZoneInfo.ConvertTime(time, zone).Date.AddDays(1);
            return new DateTimeOffset(nextDay, zone.GetUtcOffset(nextDay));
        }

        return time.AddTicks(1); // a period starting at exactly --to is drawn
    }
}
