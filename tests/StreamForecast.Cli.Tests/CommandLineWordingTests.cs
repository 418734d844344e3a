using System.Globalization;
using System.Text;

namespace StreamForecast.Cli.Tests;

/// <summary>Counts are printed with the noun in the number they need; alerts.csv names its columns for what they hold.</summary>
public sealed class CommandLineWordingTests : IDisposable
{
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    /// <summary>Invented daily counts of one sensor: about 10 a day for 40 days, then about 30 (a lasting step up).</summary>
    private static string StepCsv()
    {
        var csv = new StringBuilder("device,time,count\n");
        for (int d = 0; d < 60; d++)
        {
            int value = 10 + (d % 3) - 1 + (d >= 40 ? 20 : 0);
            csv.Append(CultureInfo.InvariantCulture, $"g1,{new DateTime(2025, 3, 1).AddDays(d):yyyy-MM-dd}T10:00:00Z,{value}\n");
        }

        return csv.ToString();
    }

    [Fact]
    public void Replay_OneAlertRaised_CountsItInTheSingular()
    {
        _tool.Write("step.csv", StepCsv());

        ToolResult result = _tool.Run("replay", "step.csv", "--key", "device", "--quantity", "count", "--method", "ma:5", "--rule", "cusum:5");

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Read 60 rows.", result.Output, StringComparison.Ordinal);
        Assert.Contains("Engine: 60 events, 60 periods closed, 0 duplicates,", result.Output, StringComparison.Ordinal);
        Assert.Contains(", 1 alert raised, 0 cleared.", result.Output, StringComparison.Ordinal);
        Assert.Contains("(1 alert transition).", result.Output, StringComparison.Ordinal);
        Assert.Contains("0 period actuals refused by the method", result.Output, StringComparison.Ordinal);
        Assert.DoesNotContain("1 alerts", result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_OneRow_CountsEverythingInTheSingular()
    {
        _tool.Write("one.csv", "device,time,count\ng1,2025-03-01T10:00:00Z,4\n");

        ToolResult result = _tool.Run("replay", "one.csv", "--key", "device", "--quantity", "count");

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Read 1 row.", result.Output, StringComparison.Ordinal);
        Assert.Contains("Engine: 1 event, 1 period closed,", result.Output, StringComparison.Ordinal);
        Assert.Contains("(1 forecast)", result.Output, StringComparison.Ordinal);
        Assert.Contains("(0 alert transitions)", result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_AlertsFile_CallsTheComparedThresholdLimit()
    {
        _tool.Write("step.csv", StepCsv());

        ToolResult result = _tool.Run("replay", "step.csv", "--key", "device", "--quantity", "count", "--method", "ma:5", "--rule", "cusum:5");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] lines = [.. File.ReadLines(_tool.PathOf("alerts.csv"))];
        string[] header = lines[0].Split(',');
        Assert.DoesNotContain("level", header);
        int transition = Array.IndexOf(header, "transition"), signal = Array.IndexOf(header, "signal"), limit = Array.IndexOf(header, "limit");
        Assert.True(limit > signal && signal > 0, lines[0]);
        // The rule's label is quoted ("CUSUM(k=0.5, h=5; ...)"): read the fields after it from the end of the line.
        string[] raised = lines.Single(l => l.Contains(",Raised,", StringComparison.Ordinal)).Split(',');
        int fromEnd = header.Length - limit;
        Assert.Equal(5, double.Parse(raised[^fromEnd], CultureInfo.InvariantCulture)); // cusum:5: the decision interval h is the raise limit
        Assert.True(double.Parse(raised[^(fromEnd + 1)], CultureInfo.InvariantCulture) > 5, lines[1]); // raised: the signal passed it
        Assert.True(transition > 0);
    }
}
