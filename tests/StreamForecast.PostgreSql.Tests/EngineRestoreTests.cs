using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.PostgreSql.Tests;

// The engine's own checkpoint and restore through the PostgreSQL store, end to end.
[Collection(PostgreSqlCollection.Name)]
public sealed class EngineRestoreTests : IAsyncLifetime
{
    private readonly PostgreSqlServer _server;
    private readonly string _schema = "test_" + Guid.NewGuid().ToString("N");

    public EngineRestoreTests(PostgreSqlServer server) => _server = server;

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync()
    {
        await using var drop = _server.DataSource.CreateCommand($"DROP SCHEMA IF EXISTS {_schema} CASCADE");
        await drop.ExecuteNonQueryAsync();
    }

    [Fact]
    public async Task RestoreAsync_FromPostgreSqlStore_ContinuesTheEngineWhereItStopped()
    {
        // The same invented till readings fed straight through, and fed with a checkpoint + restore in the middle, must agree.
        var options = new ForecastEngineOptions<string>(
            new SeriesOptions(new MovingAverageOptions(3), PeriodCalendar.FixedInterval(TimeSpan.FromHours(1))),
            keyComparer: StringComparer.Ordinal,
            partitions: 2,
            maxEventTimeAhead: Timeout.InfiniteTimeSpan);
        var start = new DateTimeOffset(2026, 1, 5, 0, 0, 0, TimeSpan.Zero);
        Observation<string>[] events = [.. Enumerable.Range(0, 40).Select(i => new Observation<string>(i % 2 == 0 ? "rye" : "sourdough", start.AddMinutes(30 * i), 10 + (i % 7)))];

        ForecastUpdate<string> straight = await LastUpdateAsync(new ForecastEngine<string>(options), events);

        await using var store = new PostgreSqlCheckpointStore(_server.DataSource, new PostgreSqlCheckpointStoreOptions(streamName: "bakery-engine", schemaName: _schema));
        var first = new ForecastEngine<string>(options);
        foreach (Observation<string> e in events[..20])
        {
            await first.PostAsync(e);
        }

        await first.SaveCheckpointAsync(store, SnapshotKeyCodecs.Utf8String, 20);
        await first.DisposeAsync();
        var (restored, position) = await ForecastEngine.RestoreAsync(store, options, SnapshotKeyCodecs.Utf8String);
        ForecastUpdate<string> resumed = await LastUpdateAsync(restored, events[(int)position..]);

        Assert.Equal(20, position);
        Assert.Equal(straight, resumed);
    }

    private static async Task<ForecastUpdate<string>> LastUpdateAsync(ForecastEngine<string> engine, Observation<string>[] events)
    {
        var updates = new List<ForecastUpdate<string>>();
        var gate = new Lock();
        using IDisposable subscription = engine.Forecasts.Subscribe(new Observer(u =>
        {
            lock (gate)
            {
                updates.Add(u);
            }
        }));
        foreach (Observation<string> e in events)
        {
            await engine.PostAsync(e);
        }

        await engine.FlushAsync();
        await engine.DisposeAsync(); // completes after every push subscriber has been told
        lock (gate)
        {
            return updates.Last(u => u.Key == "rye");
        }
    }

    private sealed class Observer(Action<ForecastUpdate<string>> onNext) : IObserver<ForecastUpdate<string>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error) => throw new InvalidOperationException("The engine must never call OnError.", error);

        public void OnNext(ForecastUpdate<string> value) => onNext(value);
    }
}
