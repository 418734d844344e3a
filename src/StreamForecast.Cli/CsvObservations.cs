using System.Globalization;
using CsvHelper;
using StreamForecast.Periods;
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
/// <param name="KeyColumns">The key column(s).</param>
/// <param name="TimeColumn">The timestamp column.</param>
/// <param name="QuantityColumn">The quantity column.</param>
/// <param name="EventIdColumn">The optional event-id column.</param>
/// <param name="Delimiter">The field delimiter, one ASCII character.</param>
/// <param name="OnBadRow">What to do with a row that cannot be read.</param>
/// <param name="Times">How timestamps are written (ISO 8601, or the --time-format formats) and the zone of local times.</param>
/// <param name="Quantities">How quantities are written (the decimal separator) and their accepted range.</param>
/// <param name="Calendar">The period calendar: a timestamp outside its supported range is a bad row.</param>
/// <param name="MaxPeriods">The most periods the rows may span, first to last (every period between is closed).</param>
internal sealed record CsvLayout(
    IReadOnlyList<string> KeyColumns,
    string TimeColumn,
    string QuantityColumn,
    string? EventIdColumn,
    string Delimiter,
    BadRowMode OnBadRow,
    TimestampReader Times,
    QuantityReader Quantities,
    PeriodCalendar Calendar,
    long MaxPeriods)
{
    /// <summary>The text between the parts of a composite key.</summary>
    public const string KeySeparator = "/";
}

/// <summary>The rows read from a CSV file, with the line each starts on (for messages about them later).</summary>
internal sealed class CsvReadResult(string path, string quantityColumn, List<Observation<string>> rows, List<long> lines, int skipped, List<string> skippedExamples)
{
    public string Path { get; } = path;

    /// <summary>The quantity column as messages name it: <c>column 4 ('units')</c>.</summary>
    public string QuantityColumn { get; } = quantityColumn;

    public List<Observation<string>> Rows { get; } = rows;

    /// <summary>The line of the file where each row of <see cref="Rows"/> starts (a quoted field may span lines).</summary>
    public List<long> Lines { get; } = lines;

    public int Skipped { get; } = skipped;

    public List<string> SkippedExamples { get; } = skippedExamples;
}

/// <summary>
/// Reads observations (key, timestamp, quantity, optional event id) from an RFC 4180 CSV file with CsvHelper: quoted
/// fields may hold delimiters, line breaks and doubled quotes, and every message names the line where the record starts.
/// </summary>
internal static class CsvObservations
{
    private const int MaxExamples = 5;

    /// <summary>A record may be at most this long, so an unclosed quote near the start of a big file fails fast.</summary>
    private const int MaxRecordBytes = 1 << 20;

    /// <summary>
    /// Reads every row; throws <see cref="DataException"/> for a missing or unreadable file or column, for a bad row in
    /// stop mode, and when the rows span more periods than <see cref="CsvLayout.MaxPeriods"/>.
    /// </summary>
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

        var quoting = new QuotingProblem();
        var options = new CsvReaderOptions
        {
            Separator = layout.Delimiter[0],
            HasHeader = true,
            TrackLineNumbers = true,
            TrimWhitespace = true,
            AllowLineBreaksInQuotes = true,
            MaxRecordSize = MaxRecordBytes,
            MalformedData = CsvMalformedDataHandling.Recover,
            OnMalformedRecord = record => quoting.Reason ??= record.Reason,
        };

        try
        {
            return ReadRows(path, layout, options, quoting, progress);
        }
        catch (CsvFormatException e)
        {
            throw new DataException($"{path}, line {e.LineNumber}: the CSV cannot be read from here ({Short(e.Message).TrimEnd('.')}). A quoted field may be missing its closing quote.");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new DataException($"{path}: cannot be read ({e.Message}).");
        }
    }

    private static CsvReadResult ReadRows(string path, CsvLayout layout, CsvReaderOptions options, QuotingProblem quoting, IProgressSink progress)
    {
        long length = new FileInfo(path).Length;
        using CsvReader csv = CsvReader.FromFile(path, options);
        csv.ReadHeader();
        string[] header = [.. csv.Headers];
        if (header.Length == 0 || (header.Length == 1 && header[0].Length == 0))
        {
            throw new DataException($"{path}: the file is empty; expected a header row.");
        }

        var columns = new Columns(
            [.. layout.KeyColumns.Select(c => IndexOf(path, header, c, layout.Delimiter))],
            IndexOf(path, header, layout.TimeColumn, layout.Delimiter),
            IndexOf(path, header, layout.QuantityColumn, layout.Delimiter),
            layout.EventIdColumn is null ? -1 : IndexOf(path, header, layout.EventIdColumn, layout.Delimiter));

        var rows = new List<Observation<string>>();
        var lines = new List<long>();
        var examples = new List<string>();
        var span = new PeriodSpan();
        int skipped = 0;
        long lastReport = 0;
        progress.Start(length);
        while (csv.Read())
        {
            // Bad quoting explains the rest (a field count, a value), so it is reported first.
            Observation<string> row = default;
            long period = 0;
            string? problem = quoting.Reason is { } reason
                ? $"{path}, line {csv.LineNumber}: {Describe(reason)}"
                : TryRow(csv, path, header, columns, layout, out row, out period);
            quoting.Reason = null;

            if (problem is null)
            {
                rows.Add(row);
                lines.Add(csv.LineNumber);
                span.Include(period, csv.LineNumber, row.Timestamp);
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
        if (span.Count > layout.MaxPeriods)
        {
            string time = $"column {columns.Time + 1} ('{header[columns.Time]}')";
            throw new DataException(
                string.Create(CultureInfo.InvariantCulture, $"{path}: the rows span {span.Count:N0} periods of {layout.Calendar.Name}, from line {span.FirstLine}, {time} ({span.FirstTime:O}) ") +
                string.Create(CultureInfo.InvariantCulture, $"to line {span.LastLine}, {time} ({span.LastTime:O}), and every period between would be closed; at most {layout.MaxPeriods:N0} are allowed. ") +
                "Check those timestamps (and --period), or raise --max-periods.");
        }

        return new CsvReadResult(path, $"column {columns.Quantity + 1} ('{header[columns.Quantity]}')", rows, lines, skipped, examples);
    }

    private static string Describe(CsvMalformedReason reason) => reason switch
    {
        CsvMalformedReason.UnterminatedQuote => "a quoted field that starts in this record is never closed.",
        CsvMalformedReason.StrayQuote => "a quote inside an unquoted field (quote the whole field and double the quote: \"a \"\"b\"\"\").",
        CsvMalformedReason.TextAfterClosingQuote => "text after the closing quote of a quoted field (a quote inside a quoted field must be doubled).",
        _ => $"malformed quoting ({reason}).",
    };

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

    private static string? TryRow(CsvReader csv, string path, string[] header, Columns columns, CsvLayout layout, out Observation<string> row, out long period)
    {
        row = default;
        period = 0;
        long line = csv.LineNumber;
        if (csv.FieldCount < columns.Needed)
        {
            return $"{path}, line {line}: the row has {Output.Count(csv.FieldCount, "field")}, expected at least {columns.Needed} (column {columns.Needed}, '{header[columns.Needed - 1]}', is missing).";
        }

        string Where(int index) => $"{path}, line {line}, column {index + 1} ('{header[index]}')";

        var parts = new string[columns.Keys.Length];
        for (int i = 0; i < columns.Keys.Length; i++)
        {
            string part = csv.GetString(columns.Keys[i]) ?? string.Empty;
            if (part.Length == 0)
            {
                return $"{Where(columns.Keys[i])}: the key part is empty.";
            }

            parts[i] = part;
        }

        string timeText = csv.GetString(columns.Time) ?? string.Empty;
        if (!layout.Times.TryRead(timeText, out DateTimeOffset time, out string? timeProblem))
        {
            return $"{Where(columns.Time)}: {timeProblem}";
        }

        if (!layout.Calendar.TryPeriodOf(time, out period))
        {
            PeriodCalendar c = layout.Calendar;
            return string.Create(CultureInfo.InvariantCulture,
                $"{Where(columns.Time)}: {time:O} is outside the range the period calendar {c.Name} supports ({c.SupportedStart:O} to {c.SupportedEnd:O}).");
        }

        string quantityText = csv.GetString(columns.Quantity) ?? string.Empty;
        if (!layout.Quantities.TryRead(quantityText, out double quantity, out string? quantityProblem))
        {
            return $"{Where(columns.Quantity)}: {quantityProblem}";
        }

        string? eventId = columns.EventId < 0 ? null : csv.GetString(columns.EventId);
        if (eventId is { Length: 0 })
        {
            eventId = null;
        }

        row = new Observation<string>(string.Join(CsvLayout.KeySeparator, parts), time, quantity, eventId);
        return null;
    }

    private static string Shorten(string text) => text.Length <= 40 ? text : text[..40] + "…";

    private static string Short(string message)
    {
        int end = message.IndexOf(" (Parameter", StringComparison.Ordinal);
        return end < 0 ? message : message[..end];
    }

    /// <summary>The first quoting problem CsvHelper reported for the record being read (it reports before returning it).</summary>
    private sealed class QuotingProblem
    {
        public CsvMalformedReason? Reason { get; set; }
    }

    /// <summary>The column indexes of one file.</summary>
    private sealed record Columns(int[] Keys, int Time, int Quantity, int EventId)
    {
        /// <summary>The fewest fields a row must have.</summary>
        public int Needed { get; } = Math.Max(Math.Max(Time, Quantity), Math.Max(EventId, Keys.Max())) + 1;
    }

    /// <summary>The earliest and latest period of the rows taken, and where they are.</summary>
    private sealed class PeriodSpan
    {
        private long _first = long.MaxValue;
        private long _last = long.MinValue;

        public long FirstLine { get; private set; }

        public long LastLine { get; private set; }

        public DateTimeOffset FirstTime { get; private set; }

        public DateTimeOffset LastTime { get; private set; }

        /// <summary>The periods from the first to the last, both included; 0 before any row.</summary>
        public long Count => _last < _first ? 0 : _last - _first + 1;

        public void Include(long period, long line, DateTimeOffset time)
        {
            if (period < _first)
            {
                (_first, FirstLine, FirstTime) = (period, line, time);
            }

            if (period > _last)
            {
                (_last, LastLine, LastTime) = (period, line, time);
            }
        }
    }
}
