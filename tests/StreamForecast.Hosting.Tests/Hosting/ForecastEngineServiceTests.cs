using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Hosting;

public sealed class ForecastEngineServiceTests : IDisposable
{
    private static readonly DateTimeOffset s_start = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
    private readonly TempPath _temp = new();
    private readonly FakeTimeProvider _time = new(s_start.AddDays(30));

    public void Dispose() => _temp.Dispose();

    [Fact]
    public async Task StartAsync_QueueCapacityOutOfRangeInConfiguration_FailsNamingTheSetting()
    {
        using IHost host = Build(new() { ["StreamForecast:QueueCapacity"] = "0" });

        var ex = await Assert.ThrowsAsync<OptionsValidationException>(() => host.StartAsync());

        Assert.Contains("StreamForecast:QueueCapacity is invalid", ex.Message, StringComparison.Ordinal);
        Assert.Contains("between 1 and 10,000,000", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_CheckpointIntervalTooShort_FailsNamingTheSettingAndRange()
    {
        using IHost host = Build(new() { ["StreamForecast:Checkpoints:Interval"] = "00:00:00.5" });

        var ex = await Assert.ThrowsAsync<OptionsValidationException>(() => host.StartAsync());

        Assert.Contains("StreamForecast:Checkpoints:Interval", ex.Message, StringComparison.Ordinal);
        Assert.Contains("between 1 second and 7 days", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_NoDefaultSeries_FailsSayingWhatToSet()
    {
        using IHost host = Build([], configure: _ => { });

        var ex = await Assert.ThrowsAsync<OptionsValidationException>(() => host.StartAsync());

        Assert.Contains("DefaultSeries is not set", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_MisspeltSetting_FailsNamingTheUnknownKey()
    {
        using IHost host = Build(new() { ["StreamForecast:QueueCapasity"] = "10" });

        var ex = await Assert.ThrowsAnyAsync<InvalidOperationException>(() => host.StartAsync());

        Assert.Contains("QueueCapasity", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Engine_BeforeStart_ThrowsSayingTheHostStartsIt()
    {
        using IHost host = Build([]);
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();

        var ex = Assert.Throws<InvalidOperationException>(() => handle.Engine);

        Assert.Contains("has not been started", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task StartAsync_FirstRun_StartsEmptyAtPositionZeroAndCreatesTheFile()
    {
        string file = _temp.File("state/engine.db");
        using IHost host = Build(new() { ["StreamForecast:Checkpoints:File"] = file });

        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();

        Assert.Equal(0, handle.Start.ReplayFrom);
        Assert.Null(handle.Start.CheckpointLocation);
        Assert.True(File.Exists(file));
        await host.StopAsync();
    }

    [Fact]
    public async Task StopAsync_AfterPosting_DrainsAndCheckpointsSoTheNextStartRestoresAndReplaysFromTheMark()
    {
        string file = _temp.File("engine.db");
        var settings = new Dictionary<string, string?> { ["StreamForecast:Checkpoints:File"] = file };
        using (IHost first = Build(settings))
        {
            await first.StartAsync();
            var handle = first.Services.GetRequiredService<HostedForecastEngine<string>>();
            for (int i = 0; i < 30; i++)
            {
                await handle.Engine.PostAsync(Sale(i));
                handle.MarkPosted(i + 1);
            }

            await first.StopAsync();
            Assert.Equal(30, handle.Engine.GetCounters().Observations);
            Assert.Equal(30, handle.LastCheckpoint!.InputPosition);
        }

        using IHost second = Build(settings);
        await second.StartAsync();
        var restored = second.Services.GetRequiredService<HostedForecastEngine<string>>();

        Assert.Equal(30, restored.Start.ReplayFrom);
        Assert.Equal(2, restored.Start.SeriesRestored);
        Assert.EndsWith("engine.db#1", restored.Start.CheckpointLocation, StringComparison.Ordinal);
        Assert.Equal(30, restored.PostedPosition);
        await second.StopAsync();
    }

    [Fact]
    public async Task ExecuteAsync_IntervalPassesOnTheHostClock_TakesAPeriodicCheckpoint()
    {
        string file = _temp.File("engine.db");
        using IHost host = Build(new() { ["StreamForecast:Checkpoints:File"] = file, ["StreamForecast:Checkpoints:Interval"] = "00:01:00" });
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();
        await handle.Engine.PostAsync(Sale(0));
        handle.MarkPosted(1);

        _time.Advance(TimeSpan.FromSeconds(59));
        Assert.Null(handle.LastCheckpoint);
        _time.Advance(TimeSpan.FromSeconds(1));
        CheckpointRecord record = await EventuallyAsync(() => handle.LastCheckpoint);

        Assert.Equal(1, record.InputPosition);
        Assert.Equal(_time.GetUtcNow(), record.SavedAt);
        await host.StopAsync();
    }

    [Fact]
    public async Task StartAsync_CheckpointDoesNotFitTheSeriesOptions_FailsWithAClearReason()
    {
        string file = _temp.File("engine.db");
        var settings = new Dictionary<string, string?> { ["StreamForecast:Checkpoints:File"] = file };
        using (IHost first = Build(settings))
        {
            await first.StartAsync();
            await first.Services.GetRequiredService<HostedForecastEngine<string>>().Engine.PostAsync(Sale(0));
            await first.StopAsync();
        }

        using IHost second = Build(settings, o => o.DefaultSeries = new SeriesOptions(new MovingAverageOptions(5), PeriodCalendar.FixedInterval(TimeSpan.FromHours(1))));

        var ex = await Assert.ThrowsAsync<InvalidDataException>(() => second.StartAsync());

        Assert.Contains("cannot be restored with the configured options", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Alerts_RaisedAndCleared_AreLoggedAtWarningAndInformationWithoutKeysInScopes()
    {
        var logs = new ListLoggerProvider();
        using IHost host = Build([], o =>
        {
            o.DefaultSeries = new SeriesOptions(
                new NaiveOptions(),
                PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)),
                rules: [new TrackingSignalRuleOptions(limit: 3, warmUpPeriods: 2)]);
        }, logs);
        await host.StartAsync();
        var engine = host.Services.GetRequiredService<HostedForecastEngine<string>>().Engine;

        // A series that steps up every hour: the naive forecast is always too low, so the tracking signal climbs.
        for (int h = 0; h < 8; h++)
        {
            await engine.PostAsync(new Observation<string>("mill-lane/rye-roll", s_start.AddHours(h), 10 + (5 * h)));
        }

        await engine.FlushAsync();
        await host.StopAsync();

        LogRecord raised = Assert.Single(logs.Records, r => r.Message.StartsWith("Drift alert raised", StringComparison.Ordinal));
        Assert.Equal(LogLevel.Warning, raised.Level);
        Assert.Contains("mill-lane/rye-roll", raised.Message, StringComparison.Ordinal);
        Assert.Contains("UnderForecast", raised.Message, StringComparison.Ordinal);
        Assert.Empty(logs.Scopes);
    }

    private Observation<string> Sale(int i) =>
        new(i % 2 == 0 ? "harbour-street/sourdough-loaf" : "mill-lane/rye-roll", s_start.AddMinutes(20 * i), 3 + (i % 4), "sale-" + i);

    private IHost Build(Dictionary<string, string?> settings, Action<StreamForecastOptions<string>>? configure = null, ILoggerProvider? logs = null)
    {
        HostApplicationBuilder builder = Host.CreateEmptyApplicationBuilder(new HostApplicationBuilderSettings());
        builder.Configuration.AddInMemoryCollection(settings);
        builder.Services.AddSingleton<TimeProvider>(_time);
        builder.Logging.SetMinimumLevel(LogLevel.Debug);
        if (logs is not null)
        {
            builder.Logging.AddProvider(logs);
        }

        builder.Services.AddStreamForecast<string>(
            builder.Configuration.GetSection(StreamForecastServiceCollectionExtensions.DefaultSectionName),
            configure ?? (o =>
            {
                o.DefaultSeries = new SeriesOptions(new ExponentialSmoothingOptions(alpha: 0.3), PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)));
                o.KeyComparer = StringComparer.Ordinal;
                o.Partitions = 2;
            }));
        return builder.Build();
    }

    private static async Task<T> EventuallyAsync<T>(Func<T?> read)
        where T : class
    {
        // The checkpoint runs on the timer's callback; wait for its result without depending on wall-clock timing.
        using var limit = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        while (read() is null)
        {
            await Task.Delay(5, limit.Token);
        }

        return read()!;
    }
}

internal sealed record LogRecord(LogLevel Level, string Message);

internal sealed class ListLoggerProvider : ILoggerProvider
{
    private readonly Lock _gate = new();
    private readonly List<LogRecord> _records = [];
    private readonly List<object?> _scopes = [];

    public List<LogRecord> Records
    {
        get
        {
            lock (_gate)
            {
                return [.. _records];
            }
        }
    }

    public List<object?> Scopes
    {
        get
        {
            lock (_gate)
            {
                return [.. _scopes];
            }
        }
    }

    public ILogger CreateLogger(string categoryName) => new ListLogger(this);

    public void Dispose()
    {
    }

    private sealed class ListLogger(ListLoggerProvider owner) : ILogger
    {
        public IDisposable? BeginScope<TState>(TState state)
            where TState : notnull
        {
            lock (owner._gate)
            {
                owner._scopes.Add(state);
            }

            return null;
        }

        public bool IsEnabled(LogLevel logLevel) => true;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
        {
            lock (owner._gate)
            {
                owner._records.Add(new LogRecord(logLevel, formatter(state, exception)));
            }
        }
    }
}
