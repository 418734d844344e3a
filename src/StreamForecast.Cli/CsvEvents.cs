using System.Globalization;
using CsvHelper;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary>
/// Reads a known-event file for <c>--events</c>: a CSV with the columns <c>kind</c>, <c>start</c>, <c>end</c> and
/// <c>scope</c> (in any order, other columns ignored). <c>kind</c> is <c>promotion</c>, <c>closure</c> or another name;
/// <c>start</c> (inclusive) and <c>end</c> (exclusive) are read like the input's timestamps (ISO 8601 or
/// <c>--time-format</c>, local times in <c>--zone</c>); <c>scope</c> is <c>all</c>, <c>group:NAME</c> (every series whose
/// key starts with NAME and the key separator '/', so the first key column when keys have several) or
/// <c>series:KEY</c>. Every row must be valid: a bad row is a data error naming file, line and column, whatever
/// <c>--on-bad-row</c> says (a half-read calendar would score the events it left out).
/// </summary>
internal static class CsvEvents
{
    private static readonly string[] s_columns = ["kind", "start", "end", "scope"];

    /// <summary>Reads every event; throws <see cref="DataException"/> for a missing file or column or any bad row.</summary>
    public static List<KnownEvent<string>> Read(string path, CsvLayout layout)
    {
        if (!File.Exists(path))
        {
            throw new DataException($"{path}: file not found (--events).");
        }

        string? quoting = null;
        var options = new CsvReaderOptions
        {
            Separator = layout.Delimiter[0],
            HasHeader = true,
            TrackLineNumbers = true,
            TrimWhitespace = true,
            MalformedData = CsvMalformedDataHandling.Recover,
            OnMalformedRecord = record => quoting ??= record.Reason.ToString(),
        };

        try
        {
            using CsvReader csv = CsvReader.FromFile(path, options);
            csv.ReadHeader();
            string[] header = [.. csv.Headers];
            int[] at = new int[s_columns.Length];
            for (int c = 0; c < s_columns.Length; c++)
            {
                at[c] = Array.FindIndex(header, h => string.Equals(h, s_columns[c], StringComparison.Ordinal));
                if (at[c] < 0)
                {
                    throw new DataException($"{path}, line 1: no column named '{s_columns[c]}'; an events file has the columns kind, start, end and scope (header: {string.Join(", ", header.Select(h => $"'{h}'"))}).");
                }
            }

            var events = new List<KnownEvent<string>>();
            while (csv.Read())
            {
                long line = csv.LineNumber;
                if (quoting is not null)
                {
                    throw new DataException($"{path}, line {line}: malformed quoting ({quoting}).");
                }

                if (csv.FieldCount < at.Max() + 1)
                {
                    throw new DataException($"{path}, line {line}: the row has {Output.Count(csv.FieldCount, "field")}, expected at least {at.Max() + 1}.");
                }

                events.Add(Row(csv, path, line, header, at, layout));
            }

            return events;
        }
        catch (CsvFormatException e)
        {
            throw new DataException($"{path}, line {e.LineNumber}: the CSV cannot be read from here. A quoted field may be missing its closing quote.");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new DataException($"{path}: cannot be read ({e.Message}).");
        }
    }

    private static KnownEvent<string> Row(CsvReader csv, string path, long line, string[] header, int[] at, CsvLayout layout)
    {
        string Where(int column) => $"{path}, line {line}, column {at[column] + 1} ('{header[at[column]]}')";
        string Field(int column) => csv.GetString(at[column]) ?? string.Empty;

        EventKind kind;
        try
        {
            kind = EventKind.Named(Field(0));
        }
        catch (ArgumentException e)
        {
            throw new DataException($"{Where(0)}: {Short(e.Message)}");
        }

        DateTimeOffset start = Time(1);
        DateTimeOffset end = Time(2);
        if (end <= start)
        {
            throw new DataException(string.Create(CultureInfo.InvariantCulture, $"{Where(2)}: the event must end after it starts ({start:O}); the end is exclusive."));
        }

        string scope = Field(3);
        if (scope == "all")
        {
            return KnownEvent.ForAllSeries<string>(kind, start, end);
        }

        if (scope.StartsWith("group:", StringComparison.Ordinal) && scope.Length > "group:".Length)
        {
            return KnownEvent.ForGroup<string>(scope["group:".Length..], kind, start, end);
        }

        if (scope.StartsWith("series:", StringComparison.Ordinal) && scope.Length > "series:".Length)
        {
            return KnownEvent.ForSeries(scope["series:".Length..], kind, start, end);
        }

        throw new DataException($"{Where(3)}: '{scope}' is not a scope; write all, group:NAME (keys starting with NAME/) or series:KEY.");

        DateTimeOffset Time(int column)
        {
            if (!layout.Times.TryRead(Field(column), out DateTimeOffset time, out string? problem))
            {
                throw new DataException($"{Where(column)}: {problem}");
            }

            return time;
        }
    }

    private static string Short(string message)
    {
        int end = message.IndexOf(" (Parameter", StringComparison.Ordinal);
        return end < 0 ? message : message[..end];
    }
}
