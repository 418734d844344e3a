namespace StreamForecast.Cli.Tests;

/// <summary>The tool refuses to replace a file or to mix calendars unless told to (--force).</summary>
public sealed class CommandLineSafetyTests : IDisposable
{
    private static readonly string[] s_columns = ["--key", "shop", "item", "--time", "sold_at", "--quantity", "units"];
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    private ToolResult Run(params string[] args) => _tool.Run([.. args.Take(2), .. s_columns, .. args.Skip(2)]);

    [Fact]
    public void Tune_ExistingOutputWithoutForce_ExitsTwoAndLeavesTheFileAsItWas()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 30));
        _tool.Write("methods.json", "kept by hand\n");

        ToolResult refused = Run("tune", "sales.csv", "--out", "methods.json");

        Assert.True(refused.ExitCode == 2, refused.ToString());
        Assert.Contains("streamforecast-cli: data error: methods.json exists already", refused.Error, StringComparison.Ordinal);
        Assert.Contains("--force", refused.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(refused);
        Assert.Equal("kept by hand\n", File.ReadAllText(_tool.PathOf("methods.json")));
    }

    [Fact]
    public void Tune_DefaultOutputExistsWithoutForce_IsRefusedToo()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 30));
        _tool.Write("methods.json", "{}");

        ToolResult refused = Run("tune", "sales.csv");

        Assert.True(refused.ExitCode == 2, refused.ToString());
        Assert.Equal("{}", File.ReadAllText(_tool.PathOf("methods.json")));
    }

    [Fact]
    public void Tune_ExistingOutputWithForce_ReplacesIt()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 30));
        _tool.Write("methods.json", "kept by hand\n");

        ToolResult forced = Run("tune", "sales.csv", "--out", "methods.json", "--force");

        Assert.True(forced.ExitCode == 0, forced.ToString());
        Assert.Contains("\"format\": \"streamforecast-methods\"", File.ReadAllText(_tool.PathOf("methods.json")), StringComparison.Ordinal);
    }

    private static string[] SeriesOf(string command) => command == "chart" ? ["--series", "east/bun", "--out", "bun.png"] : [];

    private const string DailyUtcConfig =
        "{\"format\":\"streamforecast-methods\",\"version\":1,\"calendar\":\"Daily(UTC)\",\"seasonLength\":1,\"series\":[{\"key\":\"east/bun\",\"method\":\"naive\"}]}";

    [Theory]
    [InlineData("replay", "FixedInterval(01:00:00)", "--period", "1h")]
    [InlineData("replay", "Daily(Europe/Dublin)", "--zone", "Europe/Dublin")]
    [InlineData("chart", "FixedInterval(01:00:00)", "--period", "1h")]
    public void ReplayOrChart_ConfigTunedOnAnotherCalendar_ExitsOneNamingBothCalendars(string command, string runCalendar, string option, string value)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10));
        _tool.Write("methods.json", DailyUtcConfig);

        ToolResult refused = Run([command, "sales.csv", "--config", "methods.json", .. SeriesOf(command), option, value]);

        Assert.True(refused.ExitCode == 1, refused.ToString());
        Assert.Contains($"methods.json was tuned on the period calendar Daily(UTC), but this run uses {runCalendar}", refused.Error, StringComparison.Ordinal);
        Assert.Contains("--force", refused.Error, StringComparison.Ordinal);
        Assert.False(File.Exists(_tool.PathOf("forecasts.csv")));
        ToolRunner.AssertNoStackTrace(refused);
    }

    [Theory]
    [InlineData("replay")]
    [InlineData("chart")]
    public void ReplayOrChart_ConfigTunedOnAnotherCalendarWithForce_RunsTheTunedMethod(string command)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10));
        _tool.Write("methods.json", DailyUtcConfig);

        ToolResult forced = Run([command, "sales.csv", "--config", "methods.json", .. SeriesOf(command), "--period", "1h", "--force"]);

        Assert.True(forced.ExitCode == 0, forced.ToString());
        if (command == "replay")
        {
            Assert.Contains(File.ReadLines(_tool.PathOf("forecasts.csv")), line => line.StartsWith("east/bun,", StringComparison.Ordinal) && line.Contains(",Naive,", StringComparison.Ordinal));
        }
        else
        {
            Assert.True(new FileInfo(_tool.PathOf("bun.png")).Length > 1000, forced.ToString());
        }
    }

    [Fact]
    public void Replay_ConfigTunedOnTheSameCalendar_RunsWithoutForce()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10));
        _tool.Write("methods.json", DailyUtcConfig);

        ToolResult result = Run("replay", "sales.csv", "--config", "methods.json");

        Assert.True(result.ExitCode == 0, result.ToString());
    }
}
