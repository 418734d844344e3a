using Microsoft.Data.Sqlite;
using StreamForecast.ContractSuites;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Sqlite;

// The conditional checkpoint-store contract (every stream in one file per test), then what only the SQLite store has:
// its file header and schema versions, locations, rows damaged in ways only a database allows, and waiting for locks.
public sealed partial class SqliteCheckpointStoreTests : ConditionalCheckpointStoreContractTests<SqliteCheckpointStore>
{
    private readonly TempPath _temp = new();

    private string ContractPath => _temp.File("contract.db");

    public override async Task DisposeAsync()
    {
        await base.DisposeAsync();
        _temp.Dispose();
    }

    protected override SqliteCheckpointStore CreateStoreCore(string stream, int retainCount) =>
        new(ContractPath, new SqliteCheckpointStoreOptions(retainCount: retainCount, streamName: stream));

    protected override Task DamageAsync(string location)
    {
        // One flipped bit in the first byte of the snapshot: same length, wrong SHA-256.
        long sequence = long.Parse(location[(location.LastIndexOf('#') + 1)..], System.Globalization.CultureInfo.InvariantCulture);
        using var c = new SqliteConnection($"Data Source={ContractPath};Pooling=False");
        c.Open();
        byte[] snapshot;
        using (var select = c.CreateCommand())
        {
            select.CommandText = "SELECT snapshot FROM checkpoints WHERE sequence = $sequence";
            select.Parameters.AddWithValue("$sequence", sequence);
            snapshot = (byte[])select.ExecuteScalar()!;
        }

        snapshot[0] ^= 0x01;
        using var update = c.CreateCommand();
        update.CommandText = "UPDATE checkpoints SET snapshot = $snapshot WHERE sequence = $sequence";
        update.Parameters.AddWithValue("$snapshot", snapshot);
        update.Parameters.AddWithValue("$sequence", sequence);
        Assert.Equal(1, update.ExecuteNonQuery());
        return Task.CompletedTask;
    }

    protected override Task<int> CountStoredAsync(string stream) =>
        Task.FromResult(File.Exists(ContractPath) && Scalar(ContractPath, "SELECT count(*) FROM sqlite_schema WHERE name = 'checkpoints'") == 1
            ? StreamSequences(ContractPath, stream).Count
            : 0);

    protected override Task PlantForeignDataAsync(string stream)
    {
        Execute(ContractPath, "CREATE TABLE orders (id INTEGER, note TEXT)");
        return Task.CompletedTask;
    }

    [Fact]
    public async Task LoadLatestAsync_NewFile_ReturnsNullAndCreatesVersionedFile()
    {
        string path = _temp.File("sub/checkpoints.db");
        using var store = new SqliteCheckpointStore(path);

        Assert.Null(await store.LoadLatestAsync());

        Assert.True(File.Exists(path));
        Assert.Equal(SqliteCheckpointStore.SchemaVersion, Pragma(path, "user_version"));
        Assert.Equal(SqliteCheckpointStore.ApplicationId, Pragma(path, "application_id"));
    }

    [Fact]
    public async Task LoadLatestAsync_DefaultStream_LocationIsThePathAndRow()
    {
        using var store = new SqliteCheckpointStore(_temp.File("c.db"));
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 10);
        await store.SaveAsync(new byte[] { 4, 5 }, 25);

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(new byte[] { 4, 5 }, loaded.Snapshot.ToArray());
        Assert.Equal(25, loaded.InputPosition);
        Assert.Empty(loaded.Rejected);
        Assert.EndsWith("c.db#2", loaded.Location, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_TruncatedRow_FallsBack()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 10);
        await store.SaveAsync(new byte[] { 4, 5, 6 }, 20);
        Execute(path, "UPDATE checkpoints SET snapshot = x'04' WHERE sequence = 2");

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.Equal(10, loaded!.InputPosition);
        Assert.Contains("declares 3", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_NewerSchemaVersion_RefusesAndNamesBothVersions()
    {
        string path = _temp.File("c.db");
        using (var first = new SqliteCheckpointStore(path))
        {
            await first.SaveAsync(new byte[] { 1 }, 1);
        }

        Execute(path, "PRAGMA user_version = 7");
        using var store = new SqliteCheckpointStore(path);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());

        Assert.Contains($"schema version 7, newer than version {SqliteCheckpointStore.SchemaVersion}", ex.Message, StringComparison.Ordinal);
        Assert.Equal(7, Pragma(path, "user_version"));
    }

    [Fact]
    public async Task SaveAsync_ForeignDatabase_RefusesWithoutChangingIt()
    {
        string path = _temp.File("other.db");
        Execute(path, "CREATE TABLE orders (id INTEGER)");
        using var store = new SqliteCheckpointStore(path);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.SaveAsync(new byte[] { 1 }, 1));

        Assert.Contains("already holds other tables", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0, Pragma(path, "user_version"));
    }

    [Fact]
    public async Task SaveAsync_EmptySnapshot_ThrowsWithTheAllowedRange()
    {
        using var store = new SqliteCheckpointStore(_temp.File("c.db"));
        var ex = await Assert.ThrowsAsync<ArgumentException>(async () => await store.SaveAsync(ReadOnlyMemory<byte>.Empty, 0));
        Assert.Contains("1 to", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task RestoreAsync_FromSqliteStore_ContinuesTheEngineWhereItStopped()
    {
        // The same series fed straight through, and fed with a checkpoint + restore in the middle, must agree.
        var options = new ForecastEngineOptions<string>(
            new SeriesOptions(new MovingAverageOptions(3), PeriodCalendar.FixedInterval(TimeSpan.FromHours(1))),
            keyComparer: StringComparer.Ordinal,
            partitions: 2,
            maxEventTimeAhead: Timeout.InfiniteTimeSpan);
        var start = new DateTimeOffset(2026, 1, 5, 0, 0, 0, TimeSpan.Zero);
        Observation<string>[] events = [.. Enumerable.Range(0, 40).Select(i => new Observation<string>(i % 2 == 0 ? "a" : "b", start.AddMinutes(30 * i), 10 + (i % 7)))];

        ForecastUpdate<string> straight = await LastUpdateAsync(new ForecastEngine<string>(options), events);

        using var store = new SqliteCheckpointStore(_temp.File("c.db"));
        var first = new ForecastEngine<string>(options);
        foreach (var e in events[..20])
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
        var updates = new Collector<ForecastUpdate<string>>();
        using IDisposable subscription = engine.Forecasts.Subscribe(updates);
        foreach (var e in events)
        {
            await engine.PostAsync(e);
        }

        await engine.FlushAsync();
        await engine.DisposeAsync(); // completes after every push subscriber has been told
        return updates.Items.Last(u => u.Key == "a");
    }

    private static long Pragma(string path, string name)
    {
        using var c = new SqliteConnection($"Data Source={path};Pooling=False");
        c.Open();
        using var cmd = c.CreateCommand();
        cmd.CommandText = "PRAGMA " + name;
        return Convert.ToInt64(cmd.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture);
    }

    private static void Execute(string path, string sql)
    {
        using var c = new SqliteConnection($"Data Source={path};Pooling=False");
        c.Open();
        using var cmd = c.CreateCommand();
        cmd.CommandText = sql;
        cmd.ExecuteNonQuery();
    }

    private static List<long> Sequences(string path)
    {
        using var c = new SqliteConnection($"Data Source={path};Pooling=False");
        c.Open();
        using var cmd = c.CreateCommand();
        cmd.CommandText = "SELECT sequence FROM checkpoints ORDER BY sequence DESC";
        using var r = cmd.ExecuteReader();
        var list = new List<long>();
        while (r.Read())
        {
            list.Add(r.GetInt64(0));
        }

        return list;
    }
}
