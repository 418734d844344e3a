using System.Globalization;
using System.Text;

namespace StreamForecast.Cli.Tests;

/// <summary>
/// The executable's chart window options, the forecasts.csv columns that appear only when meaningful, the in_interval
/// column, and the summary tables at 80 columns. Invented data.
/// </summary>
public sealed class CommandLineChartAndLayoutTests : IDisposable
{
    private static readonly string[] s_keyColumns = ["--key", "shop", "item", "--time", "sold_at", "--quantity", "units", "--zone", "Europe/Dublin"];
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    private static string[] Args(params string[] args) => [.. args.Take(2), .. s_keyColumns, .. args.Skip(2)];

    [Fact]
    public void Chart_Last_DrawsTheLastPeriodsAndSaysWhich()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 84));

        ToolResult result = _tool.Run(Args("chart", "sales.csv", "--series", "east/bun", "--last", "14", "--out", "bun.png"));

        Assert.True(result.ExitCode == 0, result.ToString());
        // 84 days from 2025-03-03: the last 14 run from 2025-05-12 to 2025-05-25.
        Assert.Contains("14 of 84 periods, 2025-05-12 to 2025-05-25", result.Output, StringComparison.Ordinal);
        Assert.True(new FileInfo(_tool.PathOf("bun.png")).Length > 1000);
    }

    [Fact]
    public void Chart_FromTo_DrawsTheDaysBetween()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 84));

        ToolResult result = _tool.Run(Args("chart", "sales.csv", "--series", "east/bun", "--from", "2025-04-01", "--to", "2025-04-30", "--out", "bun.png"));

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("30 of 84 periods, 2025-04-01 to 2025-04-30", result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Chart_WindowOutsideTheData_DataErrorNamingTheSeriesSpan()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 20));

        ToolResult result = _tool.Run(Args("chart", "sales.csv", "--series", "east/bun", "--from", "2026-01-01", "--out", "bun.png"));

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("No periods of 'east/bun' in the window (from 2026-01-01 00:00); its 20 periods run from 2025-03-03 to 2025-03-22.", result.Error, StringComparison.Ordinal);
        Assert.False(File.Exists(_tool.PathOf("bun.png")));
    }

    [Fact]
    public void Chart_LastWithFrom_UsageError()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 20));

        ToolResult result = _tool.Run(Args("chart", "sales.csv", "--series", "east/bun", "--from", "2025-03-05", "--last", "5"));

        Assert.True(result.ExitCode == 1, result.ToString());
        Assert.Contains("give either --last or --from/--to", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Chart_CountsWithoutNonNegative_SuggestsItWhenTheBandGoesBelowZero()
    {
        // A few units a day with zeros: the 80% interval of SES reaches below 0 unless clipped.
        var csv = new StringBuilder("shop,item,sold_at,units\n");
        var random = new Random(3);
        for (int d = 0; d < 40; d++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"east,cake,{new DateTime(2025, 3, 3).AddDays(d):yyyy-MM-dd}T10:00:00,{random.Next(0, 3)}\n");
        }

        _tool.Write("cakes.csv", csv.ToString());

        ToolResult plain = _tool.Run(Args("chart", "cakes.csv", "--series", "east/cake", "--out", "a.png"));
        ToolResult clipped = _tool.Run(Args("chart", "cakes.csv", "--series", "east/cake", "--non-negative", "--out", "b.png"));

        Assert.True(plain.ExitCode == 0, plain.ToString());
        Assert.Contains("The interval reaches below 0 in", plain.Output, StringComparison.Ordinal);
        Assert.True(clipped.ExitCode == 0, clipped.ToString());
        Assert.DoesNotContain("reaches below 0", clipped.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_HorizonOne_NoAtHorizonColumns_HorizonThree_HasThem()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 30));

        ToolResult one = _tool.Run(Args("replay", "sales.csv", "--forecasts-out", "h1.csv"));
        ToolResult three = _tool.Run(Args("replay", "sales.csv", "--horizon", "3", "--forecasts-out", "h3.csv"));

        Assert.True(one.ExitCode == 0, one.ToString());
        Assert.True(three.ExitCode == 0, three.ToString());
        string[] h1 = File.ReadLines(_tool.PathOf("h1.csv")).First().Split(',');
        string[] h3 = File.ReadLines(_tool.PathOf("h3.csv")).First().Split(',');
        Assert.DoesNotContain(h1, c => c.StartsWith("at_horizon", StringComparison.Ordinal) || c == "horizon");
        foreach (string column in new[] { "horizon", "at_horizon", "at_horizon_lower", "at_horizon_upper", "at_horizon_interval_kind" })
        {
            Assert.Contains(column, h3);
        }

        var rows = File.ReadLines(_tool.PathOf("h3.csv")).Skip(1).Select(l => l.Split(',')).ToList();
        Assert.All(rows, r => Assert.Equal("3", r[Array.IndexOf(h3, "horizon")]));
    }

    [Fact]
    public void Replay_InIntervalColumn_AgreesWithThePreviousRowsIntervalAndTheSummary()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 40));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", "ses:0.3"));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] header = File.ReadLines(_tool.PathOf("forecasts.csv")).First().Split(',');
        var rows = File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1).Select(l => l.Split(',')).ToList();
        int key = Array.IndexOf(header, "key"), actual = Array.IndexOf(header, "actual"), inside = Array.IndexOf(header, "in_interval");
        int lower = Array.IndexOf(header, "next_lower"), upper = Array.IndexOf(header, "next_upper");
        int scored = 0, covered = 0;
        for (int i = 1; i < rows.Count; i++)
        {
            if (rows[i][key] != rows[i - 1][key] || rows[i - 1][lower].Length == 0)
            {
                Assert.Equal(string.Empty, rows[i][inside]); // a series' first period, or a warm-up interval: nothing to score against
                continue;
            }

            double a = double.Parse(rows[i][actual], CultureInfo.InvariantCulture);
            bool within = a >= double.Parse(rows[i - 1][lower], CultureInfo.InvariantCulture) && a <= double.Parse(rows[i - 1][upper], CultureInfo.InvariantCulture);
            Assert.Equal(within ? "1" : "0", rows[i][inside]);
            scored++;
            covered += within ? 1 : 0;
        }

        // The printed coverage over all series is the same count.
        Assert.Contains(string.Create(CultureInfo.InvariantCulture, $"{100.0 * covered / scored:0.0}% of {scored:N0} actuals inside"), result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_At80Columns_NoLineWiderThan80AndEveryCellWhole()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 40));

        ToolResult result = _tool.RunWith(new Dictionary<string, string> { ["COLUMNS"] = "80" }, Args("replay", "sales.csv", "--method", "hw:7,add,0.2,0.1,0.1"));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] lines = result.Output.Split('\n');
        Assert.All(lines, l => Assert.True(l.TrimEnd('\r').Length <= 80, $"{l.Length} columns: {l}"));
        // Each series' row holds its whole key, last period and interval on one line: nothing squeezed into slivers.
        foreach (string series in new[] { "east/bun", "east/tart", "west/bun", "west/tart" })
        {
            Assert.Contains(lines, l => l.Contains(series, StringComparison.Ordinal) && l.Contains("2025-04-11 00:00", StringComparison.Ordinal) && l.Contains(" – ", StringComparison.Ordinal));
        }

        Assert.Contains("Method, error statistics and alerts per series", result.Output, StringComparison.Ordinal);
    }
}
