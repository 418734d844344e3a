using System.Text.RegularExpressions;

namespace StreamForecast.Cli.Tests;

/// <summary>Each command's help names only options that command has.</summary>
public sealed partial class CommandLineHelpTests : IDisposable
{
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    [Theory]
    [InlineData("replay", "--config")]
    [InlineData("tune", "--out")]
    [InlineData("calibrate", "--method")]
    [InlineData("chart", "--config")]
    public void Help_EachCommand_EveryOptionItNamesExistsOnIt(string command, string namedInADescription)
    {
        ToolResult result = _tool.Run(command, "--help");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] lines = result.Output.Split('\n');
        // The options the command has: the name column of the help's option lines ("  --key <key>  The key column...").
        var defined = new HashSet<string>(StringComparer.Ordinal);
        foreach (string line in lines.Where(l => l.StartsWith("  -", StringComparison.Ordinal)))
        {
            int end = line.IndexOf("  ", 2, StringComparison.Ordinal);
            string names = end < 0 ? line : line[..end];
            foreach (Match m in OptionWord().Matches(names))
            {
                defined.Add(m.Value);
            }
        }

        // Every "--word" anywhere in the help: the command's description and every option's description.
        var named = OptionWord().Matches(result.Output).Select(m => m.Value).ToHashSet(StringComparer.Ordinal);
        Assert.Contains("--help", defined);
        Assert.True(defined.Count > 10, string.Join(" ", defined));
        Assert.Empty(named.Except(defined));
        // The check reads descriptions too: this option is named in another option's or the command's description.
        Assert.True(
            lines.Any(l => !l.StartsWith("  -", StringComparison.Ordinal) && l.Contains(namedInADescription, StringComparison.Ordinal))
            || lines.Count(l => l.Contains(namedInADescription, StringComparison.Ordinal)) > 1,
            result.Output);
    }

    [Theory]
    [InlineData("tune", "--config")]
    [InlineData("calibrate", "--config")]
    [InlineData("replay", "backtested")]
    [InlineData("chart", "backtested")]
    public void Help_Command_DoesNotMentionWhatItLacks(string command, string absent)
    {
        ToolResult result = _tool.Run(command, "--help");

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.DoesNotContain(absent, result.Output, StringComparison.Ordinal);
    }

    [GeneratedRegex("--[a-z][a-z0-9-]*[a-z0-9]")]
    private static partial Regex OptionWord();
}
