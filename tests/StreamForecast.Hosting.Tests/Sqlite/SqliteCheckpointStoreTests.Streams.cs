using System.Security.Cryptography;
using Microsoft.Data.Sqlite;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Sqlite;

// Named streams in one file (locations, names), the version 1 → 2 upgrade, and waiting for another connection's lock.
public sealed partial class SqliteCheckpointStoreTests
{
    [Fact]
    public async Task LoadLatestAsync_TwoStreamsInOneFile_EachReturnsOnlyItsOwnCheckpoint()
    {
        string path = _temp.File("shared.db");
        using var a = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "bucket-a"));
        using var b = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "bucket-b"));
        using var unnamed = new SqliteCheckpointStore(path);
        await a.SaveAsync(new byte[] { 1 }, 100);
        await b.SaveAsync(new byte[] { 2 }, 200);
        await a.SaveAsync(new byte[] { 3 }, 101);

        Checkpoint? fromA = await a.LoadLatestAsync();
        Checkpoint? fromB = await b.LoadLatestAsync();

        Assert.Equal(101, fromA!.InputPosition);
        Assert.Equal(new byte[] { 3 }, fromA.Snapshot.ToArray());
        Assert.Equal(200, fromB!.InputPosition);
        Assert.Equal(new byte[] { 2 }, fromB.Snapshot.ToArray());
        Assert.Null(await unnamed.LoadLatestAsync());
        Assert.EndsWith("shared.db[bucket-a]#3", fromA.Location, StringComparison.Ordinal);
        Assert.EndsWith("shared.db[bucket-b]#2", fromB.Location, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_VersionOneFile_UpgradesInPlaceAndLoadsItsRowsAsTheDefaultStream()
    {
        string path = _temp.File("v1.db");
        CreateVersionOneFile(path, (new byte[] { 1, 2 }, 40), (new byte[] { 3, 4, 5 }, 55));
        using var store = new SqliteCheckpointStore(path);

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.NotNull(loaded);
        Assert.Equal(55, loaded.InputPosition);
        Assert.Equal(new byte[] { 3, 4, 5 }, loaded.Snapshot.ToArray());
        Assert.EndsWith("v1.db#2", loaded.Location, StringComparison.Ordinal);
        Assert.Equal(2, Pragma(path, "user_version"));
        Assert.Equal(SqliteCheckpointStore.ApplicationId, Pragma(path, "application_id"));
        Assert.Equal([2L, 1L], StreamSequences(path, ""));
        Assert.Equal(1, Scalar(path, "SELECT count(*) FROM sqlite_schema WHERE type = 'index' AND name = 'checkpoints_stream_sequence'"));
    }

    [Fact]
    public async Task SaveAsync_NamedStreamBesideUpgradedVersionOneRows_KeepsBothApart()
    {
        string path = _temp.File("v1.db");
        CreateVersionOneFile(path, (new byte[] { 1 }, 10), (new byte[] { 2 }, 20), (new byte[] { 3 }, 30));
        using var named = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(retainCount: 1, streamName: "bucket-0"));
        using var unnamed = new SqliteCheckpointStore(path);

        await named.SaveAsync(new byte[] { 9 }, 900);
        await named.SaveAsync(new byte[] { 8 }, 901);

        // AUTOINCREMENT carries on after the version 1 rows; pruning "bucket-0" to 1 row leaves stream "" untouched.
        Assert.Equal([5L], StreamSequences(path, "bucket-0"));
        Assert.Equal([3L, 2L, 1L], StreamSequences(path, ""));
        Assert.Equal(901, (await named.LoadLatestAsync())!.InputPosition);
        Assert.Equal(30, (await unnamed.LoadLatestAsync())!.InputPosition);
        Assert.Equal(2, Pragma(path, "user_version"));
    }

    [Fact]
    public async Task LoadLatestAsync_UnknownOlderSchemaVersion_RefusesWithoutChangingIt()
    {
        string path = _temp.File("c.db");
        using (var first = new SqliteCheckpointStore(path))
        {
            await first.SaveAsync(new byte[] { 1 }, 1);
        }

        Execute(path, "PRAGMA user_version = -3");
        using var store = new SqliteCheckpointStore(path);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());

        Assert.Contains("schema version -3", ex.Message, StringComparison.Ordinal);
        Assert.Equal(-3, Pragma(path, "user_version"));
    }

    [Theory]
    [InlineData("a\nb")]
    [InlineData("\0")]
    [InlineData("tab\there")]
    [InlineData("del\u007F")]
    [InlineData("next-line\u0085")]
    public void Constructor_StreamNameWithControlCharacter_ThrowsAndCreatesNoFile(string streamName)
    {
        string path = _temp.File("c.db");

        var ex = Assert.Throws<ArgumentException>(() => new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: streamName)));

        Assert.Equal("streamName", ex.ParamName);
        Assert.Contains("control character", ex.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(path));
    }

    [Theory]
    [InlineData(0xD800, "")]   // a high surrogate at the end, no low surrogate after it
    [InlineData(0xD800, "a")]  // a high surrogate followed by an ordinary character
    [InlineData(0xDC00, "y")]  // a low surrogate with no high surrogate before it
    public void Constructor_StreamNameWithUnpairedSurrogate_ThrowsAndCreatesNoFile(int surrogate, string after)
    {
        // Built in code: attribute arguments are stored as UTF-8, which cannot carry an unpaired surrogate.
        string path = _temp.File("c.db");
        string streamName = "x" + (char)surrogate + after;

        var ex = Assert.Throws<ArgumentException>(() => new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: streamName)));

        Assert.Equal("streamName", ex.ParamName);
        Assert.Contains("unpaired surrogate", ex.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(path));
    }

    [Fact]
    public void Constructor_StreamNameLongerThan256Characters_ThrowsNamingTheLimit()
    {
        string path = _temp.File("c.db");

        var ex = Assert.Throws<ArgumentException>(() => new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: new string('s', 257))));

        Assert.Equal("streamName", ex.ParamName);
        Assert.Contains("257 characters", ex.Message, StringComparison.Ordinal);
        Assert.Contains("at most 256", ex.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(path));
    }

    [Fact]
    public void Constructor_NullStreamName_ThrowsArgumentNull()
    {
        string path = _temp.File("c.db");

        var ex = Assert.Throws<ArgumentNullException>(() => new SqliteCheckpointStoreOptions(streamName: null!));

        Assert.Equal("streamName", ex.ParamName);
        Assert.False(File.Exists(path));
    }

    [Fact]
    public async Task SaveAsync_StreamNameAtTheLimitWithNonAsciiCharacters_RoundTripsExactly()
    {
        string path = _temp.File("c.db");
        const string prefix = "bücket #7 ✓ \U0001F4C8 "; // non-ASCII, '#', and a surrogate pair (one character, two code units)
        string name = prefix + new string('z', SqliteCheckpointStoreOptions.MaxStreamNameLength - prefix.Length);
        using var store = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: name));
        using var caseVariant = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: name.ToUpperInvariant()));

        await store.SaveAsync(new byte[] { 7 }, 70);

        Assert.Equal(name, store.Options.StreamName);
        Assert.Equal(70, (await store.LoadLatestAsync())!.InputPosition);
        Assert.Equal([1L], StreamSequences(path, name));
        Assert.Null(await caseVariant.LoadLatestAsync()); // names compare ordinally, case-sensitive
    }

    [Fact]
    public async Task TrySaveAsync_EmptySnapshot_ThrowsAndWritesNothing()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1 }, 10);

        await Assert.ThrowsAsync<ArgumentException>(async () => await store.TrySaveAsync(ReadOnlyMemory<byte>.Empty, 20, expectedLatestPosition: 10));

        Assert.Equal([1L], Sequences(path));
    }

    [Fact]
    public async Task SaveAsync_AnotherConnectionHoldsTheWriteLock_WaitsForItInsteadOfFailing()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1 }, 1); // the schema exists; the next save only needs the write lock
        using var holder = new SqliteConnection($"Data Source={path};Pooling=False");
        holder.Open();
        using SqliteTransaction held = holder.BeginTransaction(deferred: false); // BEGIN IMMEDIATE: the write lock

        Task save = Task.Run(async () => await store.SaveAsync(new byte[] { 2 }, 2));
        await Task.Delay(300);
        bool finishedWhileLocked = save.IsCompleted;
        held.Rollback();
        await save;

        Assert.False(finishedWhileLocked);
        Assert.Equal(2, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task LoadLatestAsync_AnotherConnectionHoldsAnExclusiveLock_WaitsForItInsteadOfFailing()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1 }, 1);
        using var holder = new SqliteConnection($"Data Source={path};Pooling=False");
        holder.Open();
        ExecuteOn(holder, "BEGIN EXCLUSIVE"); // with the rollback journal, the lock that keeps readers out

        Task<Checkpoint?> load = Task.Run(async () => await store.LoadLatestAsync());
        await Task.Delay(300);
        bool finishedWhileLocked = load.IsCompleted;
        ExecuteOn(holder, "ROLLBACK");
        Checkpoint? loaded = await load;

        Assert.False(finishedWhileLocked);
        Assert.Equal(1, loaded!.InputPosition);
    }

    private static void CreateVersionOneFile(string path, params (byte[] Snapshot, long Position)[] rows)
    {
        // The schema version 1 DDL exactly as StreamForecast.Sqlite wrote it before streams existed.
        Execute(path, """
            CREATE TABLE checkpoints (
                sequence INTEGER PRIMARY KEY AUTOINCREMENT,
                input_position INTEGER NOT NULL,
                snapshot_length INTEGER NOT NULL,
                snapshot_sha256 BLOB NOT NULL,
                snapshot BLOB NOT NULL);
            PRAGMA application_id = 1397121904; -- 0x53466370, "SFcp"
            PRAGMA user_version = 1;
            """);
        using var c = new SqliteConnection($"Data Source={path};Pooling=False");
        c.Open();
        foreach (var (snapshot, position) in rows)
        {
            using var insert = c.CreateCommand();
            insert.CommandText = "INSERT INTO checkpoints (input_position, snapshot_length, snapshot_sha256, snapshot) VALUES ($p, $l, $h, $s)";
            insert.Parameters.AddWithValue("$p", position);
            insert.Parameters.AddWithValue("$l", (long)snapshot.Length);
            insert.Parameters.AddWithValue("$h", SHA256.HashData(snapshot));
            insert.Parameters.AddWithValue("$s", snapshot);
            insert.ExecuteNonQuery();
        }
    }

    private static void ExecuteOn(SqliteConnection connection, string sql)
    {
        using var cmd = connection.CreateCommand();
        cmd.CommandText = sql;
        cmd.ExecuteNonQuery();
    }

    private static long Scalar(string path, string sql)
    {
        using var c = new SqliteConnection($"Data Source={path};Pooling=False");
        c.Open();
        using var cmd = c.CreateCommand();
        cmd.CommandText = sql;
        return Convert.ToInt64(cmd.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture);
    }

    private static List<long> StreamSequences(string path, string stream)
    {
        using var c = new SqliteConnection($"Data Source={path};Pooling=False");
        c.Open();
        using var cmd = c.CreateCommand();
        cmd.CommandText = "SELECT sequence FROM checkpoints WHERE stream = $stream ORDER BY sequence DESC";
        cmd.Parameters.AddWithValue("$stream", stream);
        using var r = cmd.ExecuteReader();
        var list = new List<long>();
        while (r.Read())
        {
            list.Add(r.GetInt64(0));
        }

        return list;
    }
}
