using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;
using StreamForecast.Periods;

namespace StreamForecast.Cli;

/// <summary>
/// Reads the timestamp column. Without formats it takes ISO 8601 only (a date, or a date and time with 'T' or a space,
/// optionally with seconds, a fraction and 'Z' or an offset such as +01:00), so nothing depends on a culture's
/// day/month order. With formats (<c>--time-format</c>) it takes exactly those .NET custom formats, with the invariant
/// culture. A value without an offset is a wall-clock time in the zone given; one the zone's clocks show twice (when they
/// go back) is refused when its two readings fall in different periods, since the file does not say which was meant.
/// </summary>
/// <remarks>
/// A slash or dot date such as 01/04/2025 is refused without a format even when its numbers fix the order (13/04/2025):
/// another row of the same file may be ambiguous, and one file must not be read in two orders. Immutable; thread-safe.
/// </remarks>
internal sealed partial class TimestampReader
{
    private static readonly string[] s_isoFormats =
    [
        "yyyy-MM-dd",
        "yyyy-MM-dd'T'HH:mmK",
        "yyyy-MM-dd'T'HH:mm:ss.FFFFFFFK",
        "yyyy-MM-dd HH:mmK",
        "yyyy-MM-dd HH:mm:ss.FFFFFFFK",
    ];

    private static readonly DateTime s_probe = new(2003, 11, 22, 13, 44, 55);

    private readonly string[] _formats;
    private readonly bool _iso;
    private readonly TimeZoneInfo _zone;
    private readonly PeriodCalendar _calendar;

    private TimestampReader(string[] formats, bool iso, TimeZoneInfo zone, PeriodCalendar calendar)
    {
        _formats = formats;
        _iso = iso;
        _zone = zone;
        _calendar = calendar;
    }

    /// <summary>The ISO 8601 reader (no <c>--time-format</c>).</summary>
    public static TimestampReader Iso(TimeZoneInfo zone, PeriodCalendar calendar) => new(s_isoFormats, iso: true, zone, calendar);

    /// <summary>
    /// A reader of the given .NET custom formats. Each value of <paramref name="options"/> may hold several formats
    /// separated by commas; a comma inside a quoted literal (<c>'...'</c>) or after a backslash belongs to the format.
    /// </summary>
    /// <exception cref="UsageException">A format is empty, invalid, or does not fix the year, month and day.</exception>
    public static TimestampReader Of(IReadOnlyList<string> options, TimeZoneInfo zone, PeriodCalendar calendar)
    {
        var formats = new List<string>();
        foreach (string option in options)
        {
            foreach (string format in SplitFormats(option))
            {
                formats.Add(Checked(format));
            }
        }

        return formats.Count == 0 ? Iso(zone, calendar) : new TimestampReader([.. formats], iso: false, zone, calendar);
    }

    /// <summary>The accepted forms, for messages and help.</summary>
    public string Description => _iso ? "ISO 8601" : "--time-format " + string.Join(", ", _formats.Select(f => $"'{f}'"));

    /// <summary>Reads <paramref name="text"/>; on failure <paramref name="problem"/> says why and what to do.</summary>
    public bool TryRead(string text, out DateTimeOffset time, out string? problem)
    {
        time = default;
        problem = null;
        const DateTimeStyles Styles = DateTimeStyles.AllowWhiteSpaces;

        // Without an offset the value is a wall-clock time in the zone. (DateTime is asked only for that: it applies an
        // offset by wrapping the time of day at the ends of its range, so 0001-01-01T00:00+01:00 would become 23:00Z.)
        if (DateTime.TryParseExact(text, _formats, CultureInfo.InvariantCulture, Styles | DateTimeStyles.RoundtripKind, out DateTime local)
            && local.Kind == DateTimeKind.Unspecified)
        {
            // Check the conversion to UTC stays representable before making the value.
            TimeSpan offset = _zone.GetUtcOffset(local);
            long utcTicks = local.Ticks - offset.Ticks;
            if (utcTicks < DateTime.MinValue.Ticks || utcTicks > DateTime.MaxValue.Ticks)
            {
                problem = $"'{Shorten(text)}' read in --zone {_zone.Id} (UTC{Sign(offset)}) lies outside the years 1 to 9999 in UTC.";
                return false;
            }

            time = new DateTimeOffset(local, offset);
            return IsUnambiguous(text, local, out problem);
        }

        // With 'Z' or an offset: DateTimeOffset refuses an instant outside the years 1 to 9999 in UTC.
        if (DateTimeOffset.TryParseExact(text, _formats, CultureInfo.InvariantCulture, Styles | DateTimeStyles.AssumeUniversal, out time))
        {
            return true;
        }

        problem = _iso ? IsoProblem(text) : $"'{Shorten(text)}' does not match {Description} (or lies outside the years 1 to 9999 once its offset is applied).";
        return false;
    }

    /// <summary>
    /// False when the zone's clocks show <paramref name="local"/> twice and the two instants fall in different periods
    /// (an hourly period on the night the clocks go back); a daily period usually holds both, and then either reading will do.
    /// </summary>
    /// <remarks>
    /// Found from the offsets themselves rather than <see cref="TimeZoneInfo.IsAmbiguousTime(DateTime)"/>, which misses
    /// the autumn fold of zones whose summer time is their standard time (Europe/Dublin on Linux). Two offset look-ups
    /// per row when no clock change is within about 15 hours, a few more near one.
    /// </remarks>
    private bool IsUnambiguous(string text, DateTime local, out string? problem)
    {
        problem = null;
        var window = TimeSpan.FromHours(15); // beyond any UTC offset, so the two look-ups bracket every reading of local
        if (local.Ticks < window.Ticks || local.Ticks > DateTime.MaxValue.Ticks - window.Ticks)
        {
            return true; // at the ends of the range; the range checks report what matters there
        }

        var nominal = new DateTimeOffset(local, TimeSpan.Zero);
        TimeSpan before = _zone.GetUtcOffset(nominal - window);
        TimeSpan after = _zone.GetUtcOffset(nominal + window);
        if (before == after || !ShowsLocal(before) || !ShowsLocal(after))
        {
            return true; // no clock change nearby, or only one reading shows this wall-clock time
        }

        if (_calendar.TryPeriodOf(new DateTimeOffset(local, before), out long first)
            && _calendar.TryPeriodOf(new DateTimeOffset(local, after), out long second)
            && first != second)
        {
            problem = $"'{Shorten(text)}' occurs twice in --zone {_zone.Id} (the clocks go back; UTC{Sign(before)} or UTC{Sign(after)}) " +
                "and the two readings fall in different periods; write the offset in the timestamp, e.g. " +
                $"{new DateTimeOffset(local, before).ToString("yyyy-MM-dd'T'HH:mm:sszzz", CultureInfo.InvariantCulture)}.";
            return false;
        }

        return true;

        bool ShowsLocal(TimeSpan offset)
        {
            var instant = new DateTimeOffset(local, offset);
            return _zone.GetUtcOffset(instant) == offset;
        }
    }

    private static string IsoProblem(string text)
    {
        Match m = DayMonthForm().Match(text);
        const string Hint = "pass --time-format with the file's form, e.g. --time-format \"dd/MM/yyyy HH:mm\" (day first) or \"MM/dd/yyyy HH:mm\" (month first)";
        if (m.Success)
        {
            int a = int.Parse(m.Groups[1].ValueSpan, CultureInfo.InvariantCulture);
            int b = int.Parse(m.Groups[2].ValueSpan, CultureInfo.InvariantCulture);
            if (a is >= 1 and <= 12 && b is >= 1 and <= 12 && a != b)
            {
                return $"'{Shorten(text)}' is ambiguous: day first it is {Month(b)} {a}, month first {Month(a)} {b}; {Hint}.";
            }

            return $"'{Shorten(text)}' is not ISO 8601 and its day/month order is not decided from one value (other rows may be ambiguous); {Hint}.";
        }

        return IsoShape().IsMatch(text)
            ? $"'{Shorten(text)}' is not a valid date and time (no such day, or outside the years 1 to 9999 once its offset is applied)."
            : $"'{Shorten(text)}' is not an ISO 8601 timestamp such as 2025-03-01T09:30:00+01:00, 2025-03-01 09:30 or 2025-03-01 (read in --zone without an offset); for another form pass --time-format, e.g. \"dd/MM/yyyy HH:mm\".";
    }

    private static string Checked(string format)
    {
        string shown = $"--time-format '{format}'";
        if (format.Trim().Length == 0)
        {
            throw new UsageException("--time-format: a format is empty; give .NET custom formats such as 'dd/MM/yyyy HH:mm', separated by commas.");
        }

        string sample;
        try
        {
            sample = s_probe.ToString(format, CultureInfo.InvariantCulture);
        }
        catch (FormatException)
        {
            throw new UsageException($"{shown}: not a valid .NET custom date and time format (see 'Custom date and time format strings'; quote literal text as 'T').");
        }

        // A format that leaves out the year, month or day would take them from today's date: refuse it.
        if (!DateTime.TryParseExact(sample, format, CultureInfo.InvariantCulture, DateTimeStyles.None, out DateTime back) || back.Date != s_probe.Date)
        {
            throw new UsageException($"{shown}: the format must give the year, month and day (for example dd/MM/yyyy or yyyy-MM-dd HH:mm).");
        }

        return format;
    }

    /// <summary>Splits on commas outside quoted literals and not escaped by a backslash, as .NET formats quote text.</summary>
    internal static List<string> SplitFormats(string text)
    {
        var parts = new List<string>();
        var current = new StringBuilder();
        char quote = '\0';
        for (int i = 0; i < text.Length; i++)
        {
            char c = text[i];
            if (c == '\\' && i + 1 < text.Length)
            {
                current.Append(c).Append(text[++i]);
                continue;
            }

            if (quote != '\0')
            {
                quote = c == quote ? '\0' : quote;
            }
            else if (c is '\'' or '"')
            {
                quote = c;
            }
            else if (c == ',')
            {
                parts.Add(current.ToString().Trim());
                current.Clear();
                continue;
            }

            current.Append(c);
        }

        parts.Add(current.ToString().Trim());
        return parts;
    }

    private static string Month(int month) => CultureInfo.InvariantCulture.DateTimeFormat.GetMonthName(month);

    private static string Sign(TimeSpan offset) => (offset < TimeSpan.Zero ? "-" : "+") + offset.ToString(@"hh\:mm", CultureInfo.InvariantCulture);

    private static string Shorten(string text) => text.Length <= 40 ? text : text[..40] + "…";

    /// <summary>A date written n/n/yyyy, n.n.yyyy or n-n-yyyy (one or two digits, then two or four), with anything after.</summary>
    [GeneratedRegex(@"^\s*(\d{1,2})[/.\-](\d{1,2})[/.\-](\d{2}|\d{4})(?!\d)", RegexOptions.CultureInvariant)]
    private static partial Regex DayMonthForm();

    /// <summary>The shape of the ISO forms taken (digits in place), so a failure there is a value problem, not a form problem.</summary>
    [GeneratedRegex(@"^\s*\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+\-]\d{2}:\d{2})?)?\s*$", RegexOptions.CultureInvariant)]
    private static partial Regex IsoShape();
}
