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
}
