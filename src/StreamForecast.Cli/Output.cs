using System.Globalization;
using CsvHelper;
using Spectre.Console;

namespace StreamForecast.Cli;

/// <summary>Console and file output shared by the commands.</summary>
internal static class Output
{
    public static string F(double value, string format = "0.00") =>
        double.IsFinite(value) ? value.ToString(format, CultureInfo.InvariantCulture) : "n/a";

    public static void ReportSkipped(CsvReadResult read)
    {
        AnsiConsole.MarkupLine("Read {0:N0} rows.", read.Rows.Count);
        if (read.Skipped > 0)
        {
            AnsiConsole.MarkupLine("[yellow]Skipped {0:N0} malformed row(s)[/]; the first:", read.Skipped);
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

    public static string R(double value) => double.IsFinite(value) ? value.ToString("R", CultureInfo.InvariantCulture) : string.Empty;
}
