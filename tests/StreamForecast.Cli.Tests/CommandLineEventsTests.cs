namespace StreamForecast.Cli.Tests;

/// <summary>
/// <c>replay --events</c> on invented bakery files: declared periods are marked in the forecasts CSV and their lift is
/// printed; every bad row of the events file exits 2 naming file, line and column.
/// </summary>
public sealed class CommandLineEventsTests : IDisposable
{
    private const string Header = "shop,item,sold_at,units\n";
    private static readonly string[] s_columns = ["--key", "shop", "item", "--time", "sold_at", "--quantity", "units"];
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    private static string Sales()
    {
        var text = new System.Text.StringBuilder(Header);
        for (int d = 0; d < 20; d++)
        {
            int units = d is 12 or 13 ? 40 : 20 + (d % 3);
            text.Append(System.Globalization.CultureInfo.InvariantCulture, $"Quay,bun,2025-03-{d + 1:00}T09:00:00,{units}\n");
        }

        return text.ToString();
    }

    [Fact]
    public void Replay_EventsFile_MarksThePeriodsAndPrintsTheLift()
    {
        _tool.Write("sales.csv", Sales());
        _tool.Write("events.csv", "kind,start,end,scope\npromotion,2025-03-13T00:00:00,2025-03-15T00:00:00,group:Quay\n");

        ToolResult result = _tool.Run(["replay", "sales.csv", .. s_columns, "--method", "ses:0.3", "--events", "events.csv"]);

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Known events, promotion: 2 periods", result.Output, StringComparison.Ordinal);
        string[] lines = File.ReadAllText(_tool.PathOf("forecasts.csv")).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        int column = Array.IndexOf(lines[0].Split(','), "event");
        Assert.True(column >= 0, lines[0]);
        Assert.Equal(2, lines.Skip(1).Count(l => l.Split(',')[column] == "promotion"));
    }

    [Theory]
    [InlineData("kind,start,end,scope\nparty!,2025-03-13T00:00:00,2025-03-14T00:00:00,all\n", "events.csv, line 2, column 1 ('kind'): ")]
    [InlineData("kind,start,end,scope\npromotion,2025-13-13T00:00:00,2025-03-14T00:00:00,all\n", "events.csv, line 2, column 2 ('start'): ")]
    [InlineData("kind,start,end,scope\npromotion,2025-03-14T00:00:00,2025-03-14T00:00:00,all\n", "events.csv, line 2, column 3 ('end'): the event must end after it starts")]
    [InlineData("kind,start,end,scope\nclosure,2025-03-13T00:00:00,2025-03-14T00:00:00,everywhere\n", "events.csv, line 2, column 4 ('scope'): 'everywhere' is not a scope")]
    [InlineData("kind,start,finish,scope\nclosure,2025-03-13T00:00:00,2025-03-14T00:00:00,all\n", "events.csv, line 1: no column named 'end'")]
    public void Replay_BadEventsRow_ExitsTwoNamingFileLineAndColumn(string events, string expected)
    {
        _tool.Write("sales.csv", Sales());
        _tool.Write("events.csv", events);

        ToolResult result = _tool.Run(["replay", "sales.csv", .. s_columns, "--events", "events.csv"]);

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("streamforecast-cli: data error: " + expected, result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
    }
}
