using System.Globalization;
using ScottPlot;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Draws the cost per update against n (from the PerPeriodStepBenchmarks report) and against the key count (from the
/// KeyedProcessingBenchmarks reports) as PNG files, from the CSV reports BenchmarkDotNet writes into its results folder.
/// </summary>
internal static class Charts
{
    public static int Render(string resultsFolder, string outputFolder)
    {
        Directory.CreateDirectory(outputFolder);
        int drawn = 0;
        string? steps = Directory.EnumerateFiles(resultsFolder, "*PerPeriodStepBenchmarks-report.csv").FirstOrDefault();
        if (steps is not null)
        {
            DrawAgainstN(Csv.Read(steps), Path.Combine(outputFolder, "cost-per-update-vs-n.png"));
            drawn++;
        }

        string[] keyed = Directory.EnumerateFiles(resultsFolder, "*KeyedProcessingBenchmarks*-report.csv").ToArray();
        if (keyed.Length > 0)
        {
            DrawAgainstKeys(keyed.SelectMany(ReadTagged).ToList(), Path.Combine(outputFolder, "cost-per-update-vs-keys.png"));
            drawn++;
        }

        Console.WriteLine($"{drawn} chart(s) written to {outputFolder}");
        return drawn > 0 ? 0 : 1;
    }

    private static void DrawAgainstN(List<Dictionary<string, string>> rows, string path)
    {
        var plot = new Plot();
        double[] ns = rows.Select(r => Number(r["N"])).Distinct().Order().ToArray();
        foreach (var series in rows.GroupBy(r => (Average: r["Average"], Method: r["Method"])))
        {
            var points = series.OrderBy(r => Number(r["N"])).ToArray();
            var line = plot.Add.Scatter(points.Select(r => Math.Log10(Number(r["N"]))).ToArray(), points.Select(r => Nanoseconds(r["Mean"])).ToArray());
            line.LegendText = $"{series.Key.Method} ({series.Key.Average})";
            line.MarkerSize = 8;
        }

        plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(
            ns.Select(Math.Log10).ToArray(), ns.Select(n => n.ToString(CultureInfo.InvariantCulture)).ToArray());
        plot.Axes.SetLimitsY(0, rows.Max(r => Nanoseconds(r["Mean"])) * 1.15);
        plot.Title("Cost per period against the window length n (mean ns, lower is better)");
        plot.XLabel("window length n (log scale)");
        plot.YLabel("ns per period");
        plot.ShowLegend(Alignment.UpperLeft);
        plot.SavePng(path, 900, 550);
    }

    private static void DrawAgainstKeys(List<Dictionary<string, string>> rows, string path)
    {
        var plot = new Plot();
        double[] keys = rows.Select(r => Number(r["Keys"])).Distinct().Order().ToArray();
        foreach (var series in rows.GroupBy(r => (Type: r["KeyType"], Method: r["Method"])))
        {
            var points = series.OrderBy(r => Number(r["Keys"])).ToArray();
            var line = plot.Add.Scatter(points.Select(r => Math.Log10(Number(r["Keys"]))).ToArray(), points.Select(r => Nanoseconds(r["Mean"])).ToArray());
            line.LegendText = $"{series.Key.Method} ({series.Key.Type} keys)";
            line.MarkerSize = 8;
        }

        plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(
            keys.Select(Math.Log10).ToArray(), keys.Select(k => k.ToString("N0", CultureInfo.InvariantCulture)).ToArray());
        plot.Axes.SetLimitsY(0, rows.Max(r => Nanoseconds(r["Mean"])) * 1.15);
        plot.Title("Keyed processing: cost per observation against the key count (mean ns)");
        plot.XLabel("distinct keys, random order (log scale)");
        plot.YLabel("ns per observation");
        plot.ShowLegend(Alignment.UpperLeft);
        plot.SavePng(path, 900, 550);
    }

    // The generic argument is in the report's file name (KeyedProcessingBenchmarks_String_-report.csv), not in a column.
    private static List<Dictionary<string, string>> ReadTagged(string path)
    {
        List<Dictionary<string, string>> rows = Csv.Read(path);
        string type = Path.GetFileName(path).Contains("_String_", StringComparison.Ordinal) ? "string" : "long";
        foreach (Dictionary<string, string> row in rows)
        {
            row["KeyType"] = type;
        }

        return rows;
    }

    private static double Number(string text) => double.Parse(text.Replace(",", "", StringComparison.Ordinal), CultureInfo.InvariantCulture);

    private static double Nanoseconds(string text)
    {
        string[] parts = text.Replace(",", "", StringComparison.Ordinal).Split(' ', StringSplitOptions.RemoveEmptyEntries);
        double value = double.Parse(parts[0], CultureInfo.InvariantCulture);
        return parts.Length < 2 ? value : parts[1] switch
        {
            "ns" => value,
            "μs" or "us" => value * 1e3,
            "ms" => value * 1e6,
            "s" => value * 1e9,
            _ => throw new FormatException($"Unknown time unit in '{text}'."),
        };
    }

    /// <summary>Reads BenchmarkDotNet's CSV report (comma separated, fields with commas in double quotes).</summary>
    private static class Csv
    {
        public static List<Dictionary<string, string>> Read(string path)
        {
            string[] lines = File.ReadAllLines(path);
            string[] header = Split(lines[0]);
            var rows = new List<Dictionary<string, string>>();
            foreach (string line in lines.Skip(1).Where(l => l.Length > 0))
            {
                string[] cells = Split(line);
                var row = new Dictionary<string, string>(StringComparer.Ordinal);
                for (int i = 0; i < header.Length && i < cells.Length; i++)
                {
                    row.TryAdd(header[i], cells[i]);
                }

                rows.Add(row);
            }

            return rows;
        }

        private static string[] Split(string line)
        {
            var cells = new List<string>();
            var cell = new System.Text.StringBuilder();
            bool quoted = false;
            foreach (char c in line)
            {
                if (c == '"')
                {
                    quoted = !quoted;
                }
                else if (c == ',' && !quoted)
                {
                    cells.Add(cell.ToString());
                    cell.Clear();
                }
                else
                {
                    cell.Append(c);
                }
            }

            cells.Add(cell.ToString());
            return [.. cells];
        }
    }
}
