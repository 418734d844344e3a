using System.Globalization;
using CsvHelper;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary>What to do with a row that cannot be read.</summary>
internal enum BadRowMode
{
    /// <summary>Stop at the first bad row with an error naming file, line and column (exit code 2).</summary>
    Stop,

    /// <summary>Skip bad rows, count them and report the count and the first few.</summary>
    Skip,
}

/// <summary>Which columns of the input CSV hold what, and how to read it.</summary>
internal sealed record CsvLayout(
    IReadOnlyList<string> KeyColumns,
    string TimeColumn,
    string QuantityColumn,
    string? EventIdColumn,
    string Delimiter,
    BadRowMode OnBadRow,
    TimeZoneInfo LocalZone)
{
    /// <summary>The text between the parts of a composite key.</summary>
    public const string KeySeparator = "/";
}

/// <summary>The rows read from a CSV file.</summary>
internal sealed class CsvReadResult(List<Observation<string>> rows, int skipped, List<string> skippedExamples)
{
    public List<Observation<string>> Rows { get; } = rows;

    public int Skipped { get; } = skipped;

    public List<string> SkippedExamples { get; } = skippedExamples;
}

/// <summary>Reads observations (key, timestamp, quantity, optional event id) from a CSV file with CsvHelper.</summary>
internal static class CsvObservations
{
    private const int MaxExamples = 5;

    /// <summary>Reads every row; throws <see cref="DataException"/> for a missing file or column, and for a bad row in stop mode.</summary>
    public static CsvReadResult Read(string path, CsvLayout layout, IProgressSink progress)
    {
        if (!File.Exists(path))
        {
            throw new DataException($"{path}: file not found.");
        }

        if (layout.Delimiter.Length != 1 || layout.Delimiter[0] > 127 || layout.Delimiter[0] is '"' or '\r' or '\n')
        {
            throw new UsageException($"--delimiter '{layout.Delimiter}': give a single ASCII character other than a quote, such as ',', ';', '|' or tab.");
        }

        bool malformed = false;
        var options = new CsvReaderOptions
        {
            Separator = layout.Delimiter[0],
            HasHeader = true,
            TrackLineNumbers = true,
            TrimWhitespace = true,
            AllowLineBreaksInQuotes = false,
            MalformedData = CsvMalformedDataHandling.Recover,
            OnMalformedRecord = _ => malformed = true,
        };

        long length = new FileInfo(path).Length;
        using CsvReader csv = CsvReader.FromFile(path, options);
        csv.ReadHeader();
        string[] header = [.. csv.Headers];
        if (header.Length == 0 || (header.Length == 1 && header[0].Length == 0))
        {
            throw new DataException($"{path}: the file is empty; expected a header row.");
        }

        int[] keyIndexes = [.. layout.KeyColumns.Select(c => IndexOf(path, header, c, layout.Delimiter))];
        int timeIndex = IndexOf(path, header, layout.TimeColumn, layout.Delimiter);
        int quantityIndex = IndexOf(path, header, layout.QuantityColumn, layout.Delimiter);
        int eventIndex = layout.EventIdColumn is null ? -1 : IndexOf(path, header, layout.EventIdColumn, layout.Delimiter);
        int needed = Math.Max(Math.Max(timeIndex, quantityIndex), Math.Max(eventIndex, keyIndexes.Max())) + 1;

        var rows = new List<Observation<string>>();
        var examples = new List<string>();
        int skipped = 0;
        long lastReport = 0;
        progress.Start(length);
        while (csv.Read())
        {
            string? problem = TryRow(csv, path, header, keyIndexes, timeIndex, quantityIndex, eventIndex, needed, layout.LocalZone, out Observation<string> row);
            if (problem is null && malformed)
            {
                problem = $"{path}, line {csv.LineNumber}: malformed quoting (a stray or unclosed quote).";
            }

            malformed = false;

            if (problem is null)
            {
                rows.Add(row);
            }
            else if (layout.OnBadRow == BadRowMode.Stop)
            {
                throw new DataException(problem + " Use --on-bad-row skip to skip and count such rows.");
            }
            else
            {
                skipped++;
                if (examples.Count < MaxExamples)
                {
                    examples.Add(problem);
                }
            }

            if (csv.ByteOffset - lastReport > (1 << 18))
            {
                lastReport = csv.ByteOffset;
                progress.Report(lastReport);
            }
        }

        progress.Report(length);
        return new CsvReadResult(rows, skipped, examples);
    }

    private static int IndexOf(string path, string[] header, string column, string delimiter)
    {
        int index = Array.FindIndex(header, h => string.Equals(h, column, StringComparison.Ordinal));
        if (index >= 0)
        {
            return index;
        }

        string found = string.Join(", ", header.Select(h => $"'{Shorten(h)}'"));
        string hint = header.Length == 1 && header[0].Length > 0
            ? $" The header has a single column: is the delimiter '{delimiter}' right (--delimiter)?"
            : " Name the column with the matching option (--key, --time, --quantity, --event-id).";
        throw new DataException($"{path}, line 1: no column named '{column}'; the header has {found}.{hint}");
    }

    private static string? TryRow(
        CsvReader csv, string path, string[] header, int[] keyIndexes, int timeIndex, int quantityIndex, int eventIndex, int needed,
        TimeZoneInfo zone, out Observation<string> row)
    {
        row = default;
        long line = csv.LineNumber;
        if (csv.FieldCount < needed)
        {
            return $"{path}, line {line}: the row has {csv.FieldCount} field(s), expected at least {needed} (column {needed}, '{header[needed - 1]}', is missing).";
        }

        string Where(int index) => $"{path}, line {line}, column {index + 1} ('{header[index]}')";

        var parts = new string[keyIndexes.Length];
        for (int i = 0; i < keyIndexes.Length; i++)
        {
            string part = csv.GetString(keyIndexes[i]) ?? string.Empty;
            if (part.Length == 0)
            {
                return $"{Where(keyIndexes[i])}: the key part is empty.";
            }

            parts[i] = part;
        }

        string timeText = csv.GetString(timeIndex) ?? string.Empty;
        if (!TryParseTime(timeText, zone, out DateTimeOffset time))
        {
            return $"{Where(timeIndex)}: '{Shorten(timeText)}' is not a timestamp; use ISO 8601, e.g. 2025-03-01T09:30:00+01:00, or a local time or date read in --zone.";
        }

        string quantityText = csv.GetString(quantityIndex) ?? string.Empty;
        if (!double.TryParse(quantityText, NumberStyles.Float, CultureInfo.InvariantCulture, out double quantity) || !double.IsFinite(quantity))
        {
            return $"{Where(quantityIndex)}: '{Shorten(quantityText)}' is not a finite number (use '.' as the decimal point).";
        }

        string? eventId = eventIndex < 0 ? null : csv.GetString(eventIndex);
        if (eventId is { Length: 0 })
        {
            eventId = null;
        }

        row = new Observation<string>(string.Join(CsvLayout.KeySeparator, parts), time, quantity, eventId);
        return null;
    }

    /// <summary>
    /// Reads an ISO-8601-like timestamp. A value with an offset or 'Z' is taken as it is; one without (a local date and time,
    /// or a date alone) is a wall-clock time in <paramref name="zone"/>.
    /// </summary>
    internal static bool TryParseTime(string text, TimeZoneInfo zone, out DateTimeOffset time)
    {
        time = default;
        if (!DateTime.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind | DateTimeStyles.AllowWhiteSpaces, out DateTime parsed))
        {
            return false;
        }

        if (parsed.Kind == DateTimeKind.Unspecified)
        {
            time = new DateTimeOffset(parsed, zone.GetUtcOffset(parsed));
            return true;
        }

        return DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AllowWhiteSpaces, out time);
    }

    private static string Shorten(string text) => text.Length <= 40 ? text : text[..40] + "…";
}
