using System.Globalization;
using CsvHelper;
using Spectre.Console;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary>Console and file output shared by the commands.</summary>
internal static class Output
{
    /// <summary>A count with its noun in the singular or plural as the count needs ("1 alert", "2 alerts", "1,024 rows").</summary>
    public static string Count(long count, string singular, string? plural = null) =>
        string.Create(CultureInfo.InvariantCulture, $"{count:N0} {(count == 1 ? singular : plural ?? singular + "s")}");

    /// <summary>
    /// Whether the console is too narrow for the wide summary tables (below 120 columns, such as an 80-column terminal, or
    /// COLUMNS=80 when the output is redirected): the commands then split or shorten their tables.
    /// </summary>
    public static bool IsNarrow => AnsiConsole.Profile.Width < 120;

    /// <summary>A summary table: rounded borders on a wide console, a minimal border without outer edges on a narrow one.</summary>
    public static Table NewTable(string title)
    {
        var table = new Table().Title(title);
        if (IsNarrow)
        {
            table.Border(TableBorder.Minimal);
        }

        return table;
    }

    public static string F(double value, string format = "0.00") =>
        double.IsFinite(value) ? value.ToString(format, CultureInfo.InvariantCulture) : "n/a";

    public static void ReportSkipped(CsvReadResult read)
    {
        AnsiConsole.MarkupLine("Read {0}.", Count(read.Rows.Count, "row"));
        if (read.Skipped > 0)
        {
            AnsiConsole.MarkupLine("[yellow]Skipped {0}[/]; the first:", Count(read.Skipped, "malformed row"));
            foreach (string example in read.SkippedExamples)
            {
                AnsiConsole.MarkupLine("  [yellow]{0}[/]", Markup.Escape(example));
            }
        }

        if (read.Rows.Count == 0)
        {
            throw new DataException("No usable rows: nothing to do.");
        }
    }

    /// <summary>
    /// Prints what a replay did not use: rows skipped when reading, events the engine dropped (too late, refused) and
    /// periods whose actual the method refused. In stop mode anything the engine dropped is a data error (exit 2), raised
    /// after the output files are written; an internal fault of the engine is an internal error (exit 3).
    /// </summary>
    public static void ReportDropped(CsvReadResult read, ReplayResult result, BadRowMode mode)
    {
        EngineCounters c = result.Counters;
        long refused = c.Rejected + c.Dropped;
        long engine = c.Late + refused + c.RejectedActuals;
        AnsiConsole.MarkupLine(
            "Rejected in total: {0:N0} ({1} skipped when reading; {2} too late, {3:N0} refused by the engine; {4} refused by the method).",
            read.Skipped + engine, Count(read.Skipped, "malformed row"), Count(c.Late, "event"), refused, Count(c.RejectedActuals, "period actual"));
        foreach (SeriesFault<string> fault in result.Faults)
        {
            if (fault.Kind == SeriesFaultKind.InternalError)
            {
                throw new InvalidOperationException($"the engine failed on series '{fault.Key}': {fault.Message.Split('\n')[0]}");
            }
        }

        if (engine > 0 && mode == BadRowMode.Stop)
        {
            string first = result.Faults.Count > 0 ? $" First: {result.Faults[0].Key}: {result.Faults[0].Message.Split('\n')[0]}" : string.Empty;
            throw new DataException(
                string.Create(CultureInfo.InvariantCulture, $"{read.Path}: the engine dropped {Count(engine, "event or period", "events or periods")} ({Count(c.Late, "event")} too late for --lateness, {refused:N0} refused, ") +
                string.Create(CultureInfo.InvariantCulture, $"{Count(c.RejectedActuals, "period actual")} refused by the method); the output files were written without them.{first} ") +
                "Use --on-bad-row skip to accept such a run with the drops counted.");
        }
    }

    /// <summary>Writes a CSV file with CsvHelper: a header, then one row of fields per item.</summary>
    public static void WriteCsv<T>(string path, string[] header, IEnumerable<T> items, Func<T, string[]> fields)
    {
        try
        {
            using var stream = new FileStream(path, FileMode.Create, FileAccess.Write);
            using var csv = CsvWriter.Create(stream, CsvWriterOptions.Default with { NewLine = "\n" }, leaveOpen: false);
            foreach (string name in header)
            {
                csv.WriteField(name);
            }

            csv.EndRecord();
            foreach (T item in items)
            {
                foreach (string field in fields(item))
                {
                    csv.WriteField(field);
                }

                csv.EndRecord();
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new UsageException($"{path}: cannot write ({e.Message}).");
        }
    }
}
