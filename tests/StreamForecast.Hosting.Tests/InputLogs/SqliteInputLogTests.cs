using Microsoft.Data.Sqlite;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.InputLogs;

/// <summary>The input log contract on SQLite, plus what only the SQLite log does: group commit, damage detection, sharing a file.</summary>
public sealed class SqliteInputLogTests : InputLogContractTests
{
    private readonly TempPath _temp = new();
    private string _path = string.Empty;

    public override async Task DisposeAsync()
    {
        await base.DisposeAsync();
        _temp.Dispose();
    }

    protected override IInputLog CreateFresh()
    {
        _path = _temp.File(Guid.NewGuid().ToString("N") + ".db");
        return new SqliteInputLog(_path);
    }

    protected override IInputLog Reopen() => new SqliteInputLog(_path);

    [Fact]
    public async Task AppendAsync_CallersQueuedWhileTheFileIsBusy_ShareOneCommit()
    {
        await using var log = new SqliteInputLog(_temp.File("group.db"));
        await log.AppendAsync(Records("warm-up")); // creates the file and tables
        var gate = new SqliteFile(log.DatabasePath).WriterGate;

        // Another writer of the file (a checkpoint save, say) holds the gate while 25 appends arrive.
        await gate.WaitAsync();
        var appends = Enumerable.Range(0, 25).Select(i => log.AppendAsync(Records($"r{i}")).AsTask()).ToList();
        gate.Release();
        long[] positions = await Task.WhenAll(appends);

        Assert.Equal(2, log.CommitCount); // the warm-up, then one commit for all 25
        Assert.Equal(Enumerable.Range(1, 25).Select(i => (long)i), positions.Order());
        Assert.Equal(new InputLogRange(0, 26), await log.GetRangeAsync());
    }

    [Fact]
    public async Task ReadAsync_DamagedRow_ThrowsInvalidDataNamingThePosition()
    {
        string path = _temp.File("damaged.db");
        await using (var log = new SqliteInputLog(path))
        {
            await log.AppendAsync(Records("a", "b"));
            await log.AppendAsync(Records("c"));
        }

        Execute(path, "UPDATE input_log SET payload = X'0100000078' WHERE first_position = 2");
        await using var reopened = new SqliteInputLog(path);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(() => ReadAllAsync(reopened, 0));

        Assert.Contains("at position 2 is damaged", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ReadAsync_MissingRow_ThrowsInvalidDataRatherThanSkipping()
    {
        string path = _temp.File("hole.db");
        await using (var log = new SqliteInputLog(path))
        {
            await log.AppendAsync(Records("a"));
            await log.AppendAsync(Records("b"));
            await log.AppendAsync(Records("c"));
        }

        Execute(path, "DELETE FROM input_log WHERE first_position = 1");
        await using var reopened = new SqliteInputLog(path);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(() => ReadAllAsync(reopened, 0));

        Assert.Contains("no record at position 1", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task AppendAsync_RecordLongerThanTheLimit_ThrowsAndAppendsNothing()
    {
        await using var log = new SqliteInputLog(_temp.File("limit.db"), new SqliteInputLogOptions(maxRecordLength: 4));

        var ex = await Assert.ThrowsAsync<ArgumentException>(() => log.AppendAsync(Records("abcd", "abcde")).AsTask());

        Assert.Contains("Record 1 is 5 bytes", ex.Message, StringComparison.Ordinal);
        Assert.Equal(new InputLogRange(0, 0), await log.GetRangeAsync());
    }

    [Fact]
    public async Task NewFile_CreatedByTheLog_IsAVersionedCheckpointFileThatAStoreShares()
    {
        string path = _temp.File("shared.db");
        await using var log = new SqliteInputLog(path);
        await log.AppendAsync(Records("a"));
        using var store = new SqliteCheckpointStore(path);

        await store.SaveAsync(new byte[] { 9 }, 1);
        await log.AppendAsync(Records("b"));

        Assert.Equal(SqliteCheckpointStore.SchemaVersion, Pragma(path, "user_version"));
        Assert.Equal(SqliteCheckpointStore.ApplicationId, Pragma(path, "application_id"));
        Assert.Equal(1, (await store.LoadLatestAsync())!.InputPosition);
        Assert.Equal(["a", "b"], (await ReadAllAsync(log, 0)).Select(Text));
    }

    [Fact]
    public async Task ExistingCheckpointFile_GetsTheLogTablesAndKeepsItsCheckpoints()
    {
        string path = _temp.File("existing.db");
        using (var store = new SqliteCheckpointStore(path))
        {
            await store.SaveAsync(new byte[] { 1, 2 }, 7);
        }

        await using var log = new SqliteInputLog(path);
        await log.AppendAsync(Records("a"));

        using var again = new SqliteCheckpointStore(path);
        Assert.Equal(new byte[] { 1, 2 }, (await again.LoadLatestAsync())!.Snapshot.ToArray());
        Assert.Equal(SqliteCheckpointStore.SchemaVersion, Pragma(path, "user_version"));
    }

    [Fact]
    public async Task TwoStreamsInOneFile_KeepSeparatePositionsAndRecords()
    {
        string path = _temp.File("streams.db");
        await using var tills = new SqliteInputLog(path, new SqliteInputLogOptions("tills"));
        await using var web = new SqliteInputLog(path, new SqliteInputLogOptions("web"));

        await tills.AppendAsync(Records("t0", "t1"));
        long webFirst = await web.AppendAsync(Records("w0"));
        await tills.TruncateAsync(1);

        Assert.Equal(0, webFirst);
        Assert.Equal(new InputLogRange(1, 2), await tills.GetRangeAsync());
        Assert.Equal(new InputLogRange(0, 1), await web.GetRangeAsync());
        Assert.Equal(["w0"], (await ReadAllAsync(web, 0)).Select(Text));
    }

    [Fact]
    public async Task AnotherApplicationsDatabase_IsRefusedUnchanged()
    {
        string path = _temp.File("other.db");
        Execute(path, "CREATE TABLE orders (id INTEGER)");
        await using var log = new SqliteInputLog(path);

        var ex = await Assert.ThrowsAsync<InvalidDataException>(() => log.AppendAsync(Records("a")).AsTask());

        Assert.Contains("already holds other tables", ex.Message, StringComparison.Ordinal);
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
}
