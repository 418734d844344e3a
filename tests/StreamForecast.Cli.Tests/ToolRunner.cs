using System.Diagnostics;
using System.Globalization;
using System.Text;

namespace StreamForecast.Cli.Tests;

/// <summary>Runs the built streamforecast-cli executable (<c>dotnet streamforecast-cli.dll ...</c>) in a temporary folder and captures its output.</summary>
public sealed class ToolRunner : IDisposable
{
    public ToolRunner()
    {
        Folder = Path.Combine(Path.GetTempPath(), "streamforecast-cli-tests-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Folder);
    }

    public string Folder { get; }

    /// <summary>The tool's assembly, built by the project reference in the same configuration as the tests.</summary>
    public static string ToolPath
    {
        get
        {
            // tests/StreamForecast.Cli.Tests/bin/<Configuration>/net10.0/ → src/StreamForecast.Cli/bin/<Configuration>/net10.0/streamforecast-cli.dll
            var testDir = new DirectoryInfo(AppContext.BaseDirectory.TrimEnd(Path.DirectorySeparatorChar));
            string framework = testDir.Name;
            string configuration = testDir.Parent!.Name;
            DirectoryInfo repo = testDir.Parent!.Parent!.Parent!.Parent!.Parent!;
            string path = Path.Combine(repo.FullName, "src", "StreamForecast.Cli", "bin", configuration, framework, "streamforecast-cli.dll");
            Assert.True(File.Exists(path), $"the tool was not built at {path}");
            return path;
        }
    }

    /// <summary>Errors are one line for a person: no stack trace, no exception type names.</summary>
    public static void AssertNoStackTrace(ToolResult result)
    {
        Assert.DoesNotContain("   at ", result.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("Exception", result.Error, StringComparison.Ordinal);
    }

    public string PathOf(string name) => Path.Combine(Folder, name);

    public string Write(string name, string content)
    {
        string path = PathOf(name);
        File.WriteAllText(path, content);
        return path;
    }

    public ToolResult Run(params string[] args) => RunWith(new Dictionary<string, string>(), args);

    /// <summary>Runs the tool with extra environment variables (such as COLUMNS=80).</summary>
    public ToolResult RunWith(IReadOnlyDictionary<string, string> environment, params string[] args)
    {
        var start = new ProcessStartInfo("dotnet")
        {
            WorkingDirectory = Folder,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            StandardOutputEncoding = Encoding.UTF8,
            StandardErrorEncoding = Encoding.UTF8,
        };
        start.Environment.Remove("COLUMNS"); // the tool's width when redirected: 200 unless a test sets it
        foreach (var (name, value) in environment)
        {
            start.Environment[name] = value;
        }

        start.ArgumentList.Add(ToolPath);
        foreach (string arg in args)
        {
            start.ArgumentList.Add(arg);
        }

        using var process = Process.Start(start)!;
        Task<string> output = process.StandardOutput.ReadToEndAsync();
        Task<string> error = process.StandardError.ReadToEndAsync();
        Assert.True(process.WaitForExit(120_000), "the tool did not finish within 2 minutes");
        return new ToolResult(process.ExitCode, output.Result, error.Result);
    }

    /// <summary>
    /// Invented sales: for each key, one or two sale events per day over <paramref name="days"/> days from 2025-03-03, with a
    /// weekly pattern; the key "east/bun" jumps by 15 units a day from day <paramref name="shiftDay"/> on.
    /// </summary>
    public static string SalesCsv(int days = 84, int shiftDay = 56, char delimiter = ',')
    {
        var random = new Random(11);
        var text = new StringBuilder();
        text.Append(CultureInfo.InvariantCulture, $"shop{delimiter}item{delimiter}sold_at{delimiter}units{delimiter}sale_id\n");
        int id = 0;
        foreach (string shop in new[] { "east", "west" })
        {
            foreach (string item in new[] { "bun", "tart" })
            {
                for (int d = 0; d < days; d++)
                {
                    double level = (item == "bun" ? 30 : 12) + (d % 7 >= 5 ? 6 : 0) + (shop == "east" && item == "bun" && d >= shiftDay ? 15 : 0);
                    int units = Math.Max(0, (int)Math.Round(level + (random.NextDouble() - 0.5) * 6));
                    DateTime day = new DateTime(2025, 3, 3).AddDays(d);
                    int first = units / 2;
                    text.Append(CultureInfo.InvariantCulture, $"{shop}{delimiter}{item}{delimiter}{day:yyyy-MM-dd}T09:15:00{delimiter}{first}{delimiter}s{++id}\n");
                    text.Append(CultureInfo.InvariantCulture, $"{shop}{delimiter}{item}{delimiter}{day:yyyy-MM-dd}T16:40:00{delimiter}{units - first}{delimiter}s{++id}\n");
                }
            }
        }

        return text.ToString();
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Folder, recursive: true);
        }
        catch (IOException)
        {
        }
    }
}

public sealed record ToolResult(int ExitCode, string Output, string Error)
{
    public override string ToString() => $"exit {ExitCode}\n--- stdout\n{Output}\n--- stderr\n{Error}";
}
