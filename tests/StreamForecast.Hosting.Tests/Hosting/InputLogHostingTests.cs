using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Forecasting;
using StreamForecast.Hosting.Tests.InputLogs;
using StreamForecast.Periods;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Hosting;

/// <summary>The host with an input log: acknowledged means logged, restarts replay the log, checkpoints truncate it.</summary>
public sealed class InputLogHostingTests : IDisposable
{
    private static readonly DateTimeOffset s_start = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
    private readonly TempPath _temp = new();
    private readonly FakeTimeProvider _time = new(s_start.AddDays(30));

    public void Dispose() => _temp.Dispose();

    [Fact]
    public async Task StartAsync_AfterAStopWithoutFinalCheckpoint_ReplaysTheLogSoTheEngineEqualsAnUninterruptedOne()
    {
        var settings = Settings(onStop: false);
        List<Observation<string>> input = [.. Enumerable.Range(0, 40).Select(Sale)];
        using (IHost first = Build(settings))
        {
            await first.StartAsync();
            var handle = first.Services.GetRequiredService<HostedForecastEngine<string>>();
            for (int i = 0; i < 15; i++)
            {
                await handle.PostAsync(input[i]);
            }

            Assert.Equal(15, (await handle.CheckpointAsync()).InputPosition);
            await handle.PostBatchAsync(input.GetRange(15, 25).ToArray());
            await first.StopAsync(); // no final checkpoint: the last 25 observations are only in the log
        }

        using IHost second = Build(settings);
        await second.StartAsync();
        var restored = second.Services.GetRequiredService<HostedForecastEngine<string>>();

        Assert.Equal(15, restored.Start.ReplayFrom);
        Assert.Equal(25, restored.Start.LogRecordsReplayed);
        Assert.Equal(0, restored.Start.LogRecordsRefused);
        Assert.Equal(40, restored.PostedPosition);
        await restored.Engine.FlushAsync(); // queued behind the replayed observations: they have all been taken
        Assert.Equal(25, restored.Engine.GetCounters().Observations);
        Assert.Equal(await UninterruptedAsync(input), Describe(await restored.Engine.GetSeriesStatusAsync()));
        await second.StopAsync();
    }

    [Fact]
    public async Task PostAsync_WithInputLog_CompletesOnlyOnceTheObservationIsLogged()
    {
        var log = new MemoryInputLog();
        using IHost host = Build(Settings(), o => o.InputLogFactory = _ => log);
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();

        await handle.PostAsync(Sale(0));
        await handle.PostBatchAsync(new[] { Sale(1), Sale(2) });

        Assert.True(handle.HasInputLog);
        Assert.Equal(3, log.Store.End);
        Assert.Equal(3, handle.PostedPosition);
        await host.StopAsync();
    }

    [Fact]
    public async Task PostAsync_LogFails_ThrowsIOExceptionAndPostsNothing()
    {
        var log = new MemoryInputLog();
        using IHost host = Build(Settings(), o => o.InputLogFactory = _ => log);
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();
        log.FailAppends = new IOException("disk full");

        var ex = await Assert.ThrowsAsync<IOException>(() => handle.PostAsync(Sale(0)).AsTask());

        Assert.Contains("were not accepted: disk full", ex.Message, StringComparison.Ordinal);
        await handle.Engine.FlushAsync();
        Assert.Equal(0, handle.Engine.GetCounters().Observations);
        Assert.Equal(0, handle.PostedPosition);
        log.FailAppends = null;
        await host.StopAsync();
    }

    [Fact]
    public async Task PostBatchAsync_OneObservationNotFinite_LogsAndPostsNoneOfTheBatch()
    {
        var log = new MemoryInputLog();
        using IHost host = Build(Settings(), o => o.InputLogFactory = _ => log);
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();

        var ex = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => handle.PostBatchAsync(new[] { Sale(0), Sale(1) with { Quantity = double.NaN } }).AsTask());

        Assert.Contains("Observation 1 of the batch is invalid", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0, log.Store.End);
        await host.StopAsync();
    }

    [Fact]
    public async Task MarkPosted_WithInputLog_IsRefusedBecauseTheHostKeepsThePositions()
    {
        using IHost host = Build(Settings());
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();

        var ex = Assert.Throws<InvalidOperationException>(() => handle.MarkPosted(5));

        Assert.Contains("the host records the input positions itself", ex.Message, StringComparison.Ordinal);
        await host.StopAsync();
    }

    [Fact]
    public async Task CheckpointAsync_WithInputLog_TruncatesBeforeTheOldestRetainedCheckpoint()
    {
        var settings = Settings();
        settings["StreamForecast:Checkpoints:RetainCount"] = "2";
        using IHost host = Build(settings);
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();
        await using var log = new SqliteInputLog(settings["StreamForecast:Checkpoints:File"]!);

        for (int c = 1; c <= 3; c++)
        {
            for (int i = 0; i < 5; i++)
            {
                await handle.PostAsync(Sale((c * 5) + i));
            }

            await handle.CheckpointAsync();
        }

        // Checkpoints at 5, 10 and 15 with two kept: falling back to the one at 10 must still find its input.
        Assert.Equal(new InputLogRange(10, 15), await log.GetRangeAsync());
        await host.StopAsync();
    }

    [Fact]
    public async Task StopAsync_WithConcurrentPosts_LogsAndPostsThemAllBeforeTheFinalCheckpoint()
    {
        var settings = Settings();
        using (IHost first = Build(settings))
        {
            await first.StartAsync();
            var handle = first.Services.GetRequiredService<HostedForecastEngine<string>>();
            await Task.WhenAll(Enumerable.Range(0, 200).Select(i => Task.Run(async () => await handle.PostAsync(Sale(i)))));
            await first.StopAsync();
            Assert.Equal(200, handle.LastCheckpoint!.InputPosition);
            Assert.Equal(200, handle.Engine.GetCounters().Observations);
        }

        using IHost second = Build(settings);
        await second.StartAsync();
        var restored = second.Services.GetRequiredService<HostedForecastEngine<string>>();

        Assert.Equal(200, restored.Start.ReplayFrom);
        Assert.Equal(0, restored.Start.LogRecordsReplayed);
        await second.StopAsync();
    }

    [Fact]
    public async Task StartAsync_LogTruncatedPastTheCheckpoint_FailsNamingTheMissingPositions()
    {
        var storage = new MemoryInputLog.Storage();
        var settings = Settings(onStop: false);
        using (IHost first = Build(settings, o => o.InputLogFactory = _ => new MemoryInputLog(storage)))
        {
            await first.StartAsync();
            var handle = first.Services.GetRequiredService<HostedForecastEngine<string>>();
            await handle.PostBatchAsync(Enumerable.Range(0, 10).Select(Sale).ToArray());
            await handle.CheckpointAsync();
            await handle.PostBatchAsync(Enumerable.Range(10, 5).Select(Sale).ToArray());
            await first.StopAsync();
        }

        await new MemoryInputLog(storage).TruncateAsync(12);
        using IHost second = Build(settings, o => o.InputLogFactory = _ => new MemoryInputLog(storage));

        var ex = await Assert.ThrowsAsync<InvalidDataException>(() => second.StartAsync());

        Assert.Contains("needs the input from position 10: positions 10 to 11 were truncated", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_LogEndsBeforeTheCheckpointPosition_FailsSayingItIsNotTheMatchingLog()
    {
        var settings = Settings(onStop: true);
        using (IHost first = Build(settings, o => o.InputLogFactory = _ => new MemoryInputLog()))
        {
            await first.StartAsync();
            await first.Services.GetRequiredService<HostedForecastEngine<string>>().PostAsync(Sale(0));
            await first.StopAsync();
        }

        using IHost second = Build(settings, o => o.InputLogFactory = _ => new MemoryInputLog());

        var ex = await Assert.ThrowsAsync<InvalidDataException>(() => second.StartAsync());

        Assert.Contains("accounts for the input up to position 1, but the input log ends at position 0", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_InputLogWithoutCheckpoints_FailsSayingCheckpointsAreNeeded()
    {
        using IHost host = Build(new() { ["StreamForecast:InputLog:Enabled"] = "true" });

        var ex = await Assert.ThrowsAsync<OptionsValidationException>(() => host.StartAsync());

        Assert.Contains("StreamForecast:InputLog needs checkpoints", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_InputLogWithDropNewest_FailsBecauseAnAcknowledgedObservationMustNotBeDropped()
    {
        var settings = Settings();
        settings["StreamForecast:FullMode"] = "DropNewest";
        using IHost host = Build(settings);

        var ex = await Assert.ThrowsAsync<OptionsValidationException>(() => host.StartAsync());

        Assert.Contains("needs StreamForecast:FullMode Wait", ex.Message, StringComparison.Ordinal);
    }

    private Dictionary<string, string?> Settings(bool onStop = true) => new()
    {
        ["StreamForecast:Checkpoints:File"] = _temp.File("engine.db"),
        ["StreamForecast:Checkpoints:OnStop"] = onStop ? "true" : "false",
        ["StreamForecast:InputLog:Enabled"] = "true",
    };

    private static SeriesOptions Series() =>
        new(new ExponentialSmoothingOptions(alpha: 0.3), PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)));

    private static Observation<string> Sale(int i) =>
        new(i % 3 == 0 ? "harbour-street/sourdough-loaf" : "mill-lane/rye-roll", s_start.AddMinutes(17 * i), 3 + (i % 5), "sale-" + i);

    private async Task<List<string>> UninterruptedAsync(List<Observation<string>> input)
    {
        var engine = new ForecastEngine<string>(new ForecastEngineOptions<string>(Series(), keyComparer: StringComparer.Ordinal, partitions: 2, timeProvider: _time));
        foreach (Observation<string> o in input)
        {
            await engine.PostAsync(o);
        }

        await engine.FlushAsync();
        List<string> described = Describe(await engine.GetSeriesStatusAsync());
        await engine.DisposeAsync();
        return described;
    }

    private static List<string> Describe(IReadOnlyList<SeriesStatus<string>> statuses) =>
        [.. statuses.OrderBy(s => s.Key, StringComparer.Ordinal).Select(s => $"{s.Key} {s.OpenPeriod} {s.LastActual:R} {s.Next.Value:R} {s.Errors.Mad:R} {s.Errors.Rsfe:R}")];

    private IHost Build(Dictionary<string, string?> settings, Action<StreamForecastOptions<string>>? extra = null)
    {
        HostApplicationBuilder builder = Host.CreateEmptyApplicationBuilder(new HostApplicationBuilderSettings());
        builder.Configuration.AddInMemoryCollection(settings);
        builder.Services.AddSingleton<TimeProvider>(_time);
        builder.Services.AddStreamForecast<string>(
            builder.Configuration.GetSection(StreamForecastServiceCollectionExtensions.DefaultSectionName),
            o =>
            {
                o.DefaultSeries = Series();
                o.KeyComparer = StringComparer.Ordinal;
                o.Partitions = 2;
                extra?.Invoke(o);
            });
        return builder.Build();
    }
}
