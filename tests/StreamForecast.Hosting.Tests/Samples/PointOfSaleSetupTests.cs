using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.TestHost;
using StreamForecast.Samples.PointOfSale;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>Where the point-of-sale server keeps its runtime data (built, not started: nothing is written).</summary>
public sealed class PointOfSaleSetupTests
{
    [Fact]
    public async Task Build_NoDataOption_PutsTheCheckpointFileInTheLocalDataFolderOutsideTheSourceTree()
    {
        await using WebApplication app = PointOfSaleApp.Build([], b => b.WebHost.UseTestServer());

        string file = app.Configuration["StreamForecast:Checkpoints:File"]!;

        Assert.Equal(Path.Combine(PointOfSaleApp.DefaultDataDirectory(), PointOfSaleApp.CheckpointFileName), file);
        Assert.True(Path.IsPathFullyQualified(file), file);
        Assert.False(file.StartsWith(RepositoryRoot(), StringComparison.Ordinal), $"{file} is inside the repository");
        Assert.False(file.StartsWith(AppContext.BaseDirectory, StringComparison.Ordinal), $"{file} is inside the build output");
    }

    [Fact]
    public async Task Build_DataOption_PutsTheCheckpointFileInThatFolder()
    {
        using var temp = new TempPath();

        await using WebApplication app = PointOfSaleApp.Build(["--data", temp.Directory], b => b.WebHost.UseTestServer());

        Assert.Equal(Path.Combine(temp.Directory, PointOfSaleApp.CheckpointFileName), app.Configuration["StreamForecast:Checkpoints:File"]);
    }

    [Fact]
    public async Task Build_CheckpointFileOption_IsKept()
    {
        using var temp = new TempPath();

        await using WebApplication app = PointOfSaleApp.Build(["--StreamForecast:Checkpoints:File=" + temp.File("mine.db")], b => b.WebHost.UseTestServer());

        Assert.Equal(temp.File("mine.db"), app.Configuration["StreamForecast:Checkpoints:File"]);
    }

    [Fact]
    public void Build_UnknownMetricsExporter_ThrowsNamingTheChoices()
    {
        var ex = Assert.Throws<InvalidOperationException>(() => PointOfSaleApp.Build(["--Metrics:Exporter=statsd"], b => b.WebHost.UseTestServer()));

        Assert.Equal("Metrics:Exporter is 'statsd'; use none, console or otlp.", ex.Message);
    }

    private static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StreamForecast.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StreamForecast.sln not found above the test binaries.");
    }
}
