using System.Xml.Linq;

namespace StreamForecast.Cli.Tests;

/// <summary>The tool's version option against the one version of every package, set in Directory.Build.props.</summary>
public sealed class ToolVersionTests : IDisposable
{
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    [Fact]
    public void Version_RootOption_PrintsThePackageVersion()
    {
        string expected = PackageVersion();

        ToolResult result = _tool.Run("--version");

        Assert.True(result.ExitCode == 0, result.ToString());
        // The informational version: the package version, then "+" and the commit when built from a git clone.
        string printed = result.Output.Trim();
        Assert.True(printed == expected || printed.StartsWith(expected + "+", StringComparison.Ordinal), result.ToString());
    }

    /// <summary>VersionPrefix[-VersionSuffix] as Directory.Build.props sets them.</summary>
    private static string PackageVersion()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StreamForecast.sln")))
        {
            dir = dir.Parent;
        }

        Assert.NotNull(dir);
        XDocument props = XDocument.Load(Path.Combine(dir.FullName, "Directory.Build.props"));
        string prefix = props.Descendants("VersionPrefix").Single().Value.Trim();
        string suffix = props.Descendants("VersionSuffix").Single().Value.Trim();
        Assert.NotEmpty(prefix);
        return suffix.Length == 0 ? prefix : prefix + "-" + suffix;
    }
}
