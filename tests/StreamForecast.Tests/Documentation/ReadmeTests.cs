namespace StreamForecast.Tests.Documentation;

public sealed class ReadmeTests
{
    private static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StreamForecast.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StreamForecast.sln not found above the test binaries.");
    }

    [Fact]
    public void QuickStart_ReadmeCodeBlock_IsTheCompiledSample()
    {
        string root = RepositoryRoot();
        string sample = File.ReadAllText(Path.Combine(root, "samples", "StreamForecast.QuickStart", "Program.cs")).ReplaceLineEndings("\n");
        string readme = File.ReadAllText(Path.Combine(root, "README.md")).ReplaceLineEndings("\n");
        string block = sample.Split("// <quick-start>\n")[1].Split("// </quick-start>")[0];
        Assert.Contains("```csharp\n" + block + "```", readme, StringComparison.Ordinal);
    }

    [Fact]
    public void Readme_Opening_StatesJobCommandsAndAdvisoryNature()
    {
        string readme = File.ReadAllText(Path.Combine(RepositoryRoot(), "README.md"));
        Assert.Contains("dotnet run --project samples/StreamForecast.Demo", readme, StringComparison.Ordinal);
        Assert.Contains("dotnet test StreamForecast.sln -c Release", readme, StringComparison.Ordinal);
        Assert.Contains("advisory", readme, StringComparison.Ordinal);
        string ci = File.ReadAllText(Path.Combine(RepositoryRoot(), ".ci", "run"));
        Assert.Contains("dotnet test StreamForecast.sln -c Release", ci, StringComparison.Ordinal);
    }
}
