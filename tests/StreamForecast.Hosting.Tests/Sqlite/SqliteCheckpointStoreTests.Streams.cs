using System.Security.Cryptography;
using Microsoft.Data.Sqlite;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Sqlite;

// Named streams in one file, the version 1 → 2 upgrade, conditional saves and several stores writing one file at once.
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
    public async Task SaveAsync_TwoStreamsWithDifferentRetainCounts_PrunesEachStreamOnItsOwn()
    {
        string path = _temp.File("shared.db");
        using var a = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(retainCount: 2, streamName: "a"));
        using var b = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(retainCount: 3, streamName: "b"));
        for (int i = 1; i <= 5; i++)
        {
            await a.SaveAsync(new[] { (byte)i }, i);        // sequences 1, 3, 5, 7, 9
            await b.SaveAsync(new[] { (byte)(10 + i) }, 10 + i); // sequences 2, 4, 6, 8, 10
        }

        // Each save prunes only its own stream: a keeps its newest 2, b its newest 3, whatever the other wrote.
        Assert.Equal([9L, 7L], StreamSequences(path, "a"));
        Assert.Equal([10L, 8L, 6L], StreamSequences(path, "b"));
        Assert.Equal(5, (await a.LoadLatestAsync())!.InputPosition);
        Assert.Equal(15, (await b.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task LoadLatestAsync_NamedStreamAllRowsDamaged_ThrowsNamingTheStreamAndLeavesOthersUsable()
    {
        string path = _temp.File("shared.db");
        using var a = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "a"));
        using var b = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "b"));
        await a.SaveAsync(new byte[] { 1 }, 1);
        await b.SaveAsync(new byte[] { 2 }, 2);
        Execute(path, "UPDATE checkpoints SET snapshot_sha256 = x'00' WHERE stream = 'a'");

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await a.LoadLatestAsync());

        Assert.Contains("None of the 1 checkpoints in stream 'a'", ex.Message, StringComparison.Ordinal);
        Assert.Contains("[a]#1", ex.Message, StringComparison.Ordinal);
        Assert.Equal(2, (await b.LoadLatestAsync())!.InputPosition);
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
    public async Task TrySaveAsync_EmptyStreamExpectingNothing_SavesAndReturnsTrue()
    {
        using var store = new SqliteCheckpointStore(_temp.File("c.db"), new SqliteCheckpointStoreOptions(streamName: "s"));

        bool saved = await store.TrySaveAsync(new byte[] { 1, 2 }, 12, expectedLatestPosition: null);

        Assert.True(saved);
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.Equal(12, loaded!.InputPosition);
        Assert.Equal(new byte[] { 1, 2 }, loaded.Snapshot.ToArray());
    }

    [Fact]
    public async Task TrySaveAsync_ExpectingTheNewestPosition_SavesAndPrunesToTheRetainCount()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(retainCount: 2, streamName: "s"));
        long? expected = null;
        for (int i = 1; i <= 4; i++)
        {
            Assert.True(await store.TrySaveAsync(new[] { (byte)i }, 10 * i, expected));
            expected = 10 * i;
        }

        Assert.Equal([4L, 3L], StreamSequences(path, "s"));
        Assert.Equal(40, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task TrySaveAsync_ExpectationDoesNotMatch_ReturnsFalseAndWritesNothing()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(retainCount: 1, streamName: "s"));
        using var empty = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "empty"));
        await store.SaveAsync(new byte[] { 1 }, 10);
        await store.SaveAsync(new byte[] { 2 }, 20);

        Assert.False(await store.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: null)); // the stream is not empty
        Assert.False(await store.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: 10));   // a stale position
        Assert.False(await store.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: 21));   // a position never saved
        Assert.False(await empty.TrySaveAsync(new byte[] { 3 }, 30, expectedLatestPosition: 20));   // another stream's position

        // Nothing was inserted (AUTOINCREMENT would have moved on) and nothing was pruned.
        Assert.Equal([2L], StreamSequences(path, "s"));
        Assert.Empty(StreamSequences(path, "empty"));
        Assert.Equal(2, Scalar(path, "SELECT seq FROM sqlite_sequence WHERE name = 'checkpoints'"));
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.Equal(20, loaded!.InputPosition);
        Assert.Equal(new byte[] { 2 }, loaded.Snapshot.ToArray());
    }

    [Fact]
    public async Task TrySaveAsync_NewestRowDamaged_ComparesWithTheNewestValidCheckpointAsLoadLatestDoes()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 10);
        await store.SaveAsync(new byte[] { 4, 5, 6 }, 20);
        Execute(path, "UPDATE checkpoints SET snapshot = x'040507' WHERE sequence = 2"); // same length, wrong hash
        long loadedPosition = (await store.LoadLatestAsync())!.InputPosition;

        bool againstDamaged = await store.TrySaveAsync(new byte[] { 7 }, 30, expectedLatestPosition: 20);
        bool againstLoaded = await store.TrySaveAsync(new byte[] { 7 }, 30, expectedLatestPosition: loadedPosition);

        Assert.Equal(10, loadedPosition);
        Assert.False(againstDamaged);
        Assert.True(againstLoaded);
        Assert.Equal(30, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task TrySaveAsync_EveryRowDamaged_MatchesOnlyTheExpectationOfNoCheckpoint()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1 }, 10);
        Execute(path, "UPDATE checkpoints SET snapshot_sha256 = x'00'");
        await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());

        bool againstDamaged = await store.TrySaveAsync(new byte[] { 2 }, 20, expectedLatestPosition: 10);
        bool againstNothing = await store.TrySaveAsync(new byte[] { 2 }, 20, expectedLatestPosition: null);

        Assert.False(againstDamaged);
        Assert.True(againstNothing);
        Checkpoint? loaded = await store.LoadLatestAsync();
        Assert.Equal(20, loaded!.InputPosition);
        Assert.Empty(loaded.Rejected); // the damaged row is now older than the newest, so it is not reached
        Assert.Equal([2L, 1L], Sequences(path));
    }

    [Fact]
    public async Task TrySaveAsync_NegativeExpectation_ThrowsAndWritesNothing()
    {
        string path = _temp.File("c.db");
        using var store = new SqliteCheckpointStore(path);
        await store.SaveAsync(new byte[] { 1 }, 10);

        var ex = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(async () => await store.TrySaveAsync(new byte[] { 2 }, 20, expectedLatestPosition: -1));

        Assert.Equal("expectedLatestPosition", ex.ParamName);
        Assert.Equal([1L], Sequences(path));
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
    public async Task TrySaveAsync_InstancesRacingWithTheSameExpectation_ExactlyOneWinsEachRound()
    {
        // Four instances (as four silos would hold) race each round on dedicated threads released together; every one
        // expects the position the previous round's winner saved. The compare and the insert must be one transaction.
        const int racers = 4;
        const int rounds = 20;
        string path = _temp.File("race.db");
        var options = new SqliteCheckpointStoreOptions(retainCount: 2, streamName: "contended");
        SqliteCheckpointStore[] stores = [.. Enumerable.Range(0, racers).Select(_ => new SqliteCheckpointStore(path, options))];
        try
        {
            long? expected = null;
            for (int round = 0; round < rounds; round++)
            {
                using var start = new Barrier(racers);
                long? expectation = expected;
                Task<bool>[] tries = new Task<bool>[racers];
                for (int r = 0; r < racers; r++)
                {
                    SqliteCheckpointStore store = stores[r];
                    long position = (round * racers) + r + 1000;
                    byte marker = (byte)r;
                    tries[r] = Task.Factory.StartNew(
                        () =>
                        {
                            start.SignalAndWait();
                            return store.TrySaveAsync(new[] { marker }, position, expectation).AsTask().GetAwaiter().GetResult();
                        },
                        CancellationToken.None,
                        TaskCreationOptions.LongRunning,
                        TaskScheduler.Default);
                }

                bool[] outcomes = await Task.WhenAll(tries);

                int winner = Array.IndexOf(outcomes, true);
                Assert.True(winner >= 0 && Array.LastIndexOf(outcomes, true) == winner, $"Round {round}: [{string.Join(", ", outcomes)}]; exactly one must win.");
                Checkpoint? newest = await stores[0].LoadLatestAsync();
                Assert.Equal((round * racers) + winner + 1000, newest!.InputPosition);
                Assert.Equal(new[] { (byte)winner }, newest.Snapshot.ToArray());
                expected = newest.InputPosition;
            }

            Assert.Equal(rounds, Scalar(path, "SELECT seq FROM sqlite_sequence WHERE name = 'checkpoints'")); // one insert per round
        }
        finally
        {
            foreach (SqliteCheckpointStore store in stores)
            {
                store.Dispose();
            }
        }
    }

    [Fact]
    public async Task SaveAsync_ManyInstancesWritingOneFileInParallel_AllSucceedAndEachStreamEndsAtItsLastSave()
    {
        const int streams = 8;
        const int savesPerStream = 25;
        string path = _temp.File("busy.db");
        var writers = new Task[streams];
        for (int s = 0; s < streams; s++)
        {
            int stream = s;
            writers[s] = Task.Run(async () =>
            {
                // A fresh instance per stream, and every other save through a second instance, as separate silos would.
                var options = new SqliteCheckpointStoreOptions(retainCount: 2, streamName: "bucket-" + stream);
                using var first = new SqliteCheckpointStore(path, options);
                using var second = new SqliteCheckpointStore(path, options);
                for (int i = 1; i <= savesPerStream; i++)
                {
                    SqliteCheckpointStore store = i % 2 == 0 ? second : first;
                    await store.SaveAsync(new[] { (byte)stream, (byte)i }, (stream * 1000) + i);
                }
            });
        }

        await Task.WhenAll(writers);

        for (int s = 0; s < streams; s++)
        {
            using var reader = new SqliteCheckpointStore(path, new SqliteCheckpointStoreOptions(streamName: "bucket-" + s));
            Checkpoint? newest = await reader.LoadLatestAsync();
            Assert.NotNull(newest);
            Assert.Equal((s * 1000) + savesPerStream, newest.InputPosition);
            Assert.Equal(new[] { (byte)s, (byte)savesPerStream }, newest.Snapshot.ToArray());
            Assert.Empty(newest.Rejected);
            Assert.Equal(2, StreamSequences(path, "bucket-" + s).Count);
        }

        Assert.Equal(streams * savesPerStream, Scalar(path, "SELECT seq FROM sqlite_sequence WHERE name = 'checkpoints'"));
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
