using System.Globalization;

namespace StreamForecast.Cli.Tests;

/// <summary>The replay's interval options: --intervals empirical and --non-negative, and the coverage it reports.</summary>
public sealed class CommandLineIntervalTests : IDisposable
{
    private static readonly string[] s_keyColumns = ["--key", "shop", "item", "--time", "sold_at", "--quantity", "units"];
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    [Fact]
    public void Replay_EmpiricalNonNegative_ColumnsSayKindAndCoverageAndNothingBelowZero()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 60));
        // A method label without a comma keeps the plain Split(',') below valid.

        ToolResult result = _tool.Run(["replay", "sales.csv", .. s_keyColumns, "--method", "ses:0.5", "--intervals", "empirical", "--non-negative", "--horizon", "2"]);

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Next-period intervals:", result.Output, StringComparison.Ordinal);
        Assert.Contains("(nominal 80%)", result.Output, StringComparison.Ordinal);
        Assert.Contains("Actuals inside", result.Output, StringComparison.Ordinal);
        string[] header = File.ReadLines(_tool.PathOf("forecasts.csv")).First().Split(',');
        var rows = File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1).Select(l => l.Split(',')).ToList();
        int kind = Array.IndexOf(header, "next_interval_kind"), coverage = Array.IndexOf(header, "interval_coverage");
        Assert.Contains(rows, r => r[kind] == "empirical"); // 60 days: each series passes the 20 errors the empirical interval needs
        Assert.Contains(rows, r => r[kind] == "normal");    // the warm-up before that
        Assert.All(rows, r => Assert.Equal("0.8", r[coverage]));
        foreach (string column in new[] { "next", "next_lower", "next_upper", "at_horizon", "at_horizon_lower", "forecast" })
        {
            int c = Array.IndexOf(header, column);
            Assert.All(rows, r => Assert.False(r[c].Length > 0 && double.Parse(r[c], CultureInfo.InvariantCulture) < 0, $"{column} below zero: {string.Join(',', r)}"));
        }
    }

    [Fact]
    public void Replay_UnknownIntervalKind_UsageError()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 5));

        ToolResult result = _tool.Run(["replay", "sales.csv", .. s_keyColumns, "--intervals", "wide"]);

        Assert.Equal(1, result.ExitCode);
        Assert.Contains("--intervals wide: use normal or empirical.", result.Error, StringComparison.Ordinal);
    }
}
