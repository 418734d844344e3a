using Npgsql;

namespace StreamForecast.PostgreSql.Tests;

// Group commit: saves through one data source that wait for each other are written in one transaction. Each test
// first occupies every writer of the data source's commit queue with a save to a stream whose row another transaction
// holds locked, so that the saves under test queue behind them and are written together once the lock is released
// (the server reports the waits; no timing assumption). Rows written by one transaction share their xmin.
public sealed partial class PostgreSqlCheckpointStoreTests
{
    // PostgreSqlCommitQueue.MaxConcurrentGroups: the groups one data source writes at the same time.
    private const int Writers = 4;

    [Fact]
    public async Task SaveAsync_32ConcurrentSavesWhileTheWritersAreBusy_WrittenInOneTransactionEachReturnsAndRetentionHolds()
    {
        PostgreSqlCheckpointStore[] stores = [CreateStore("a", retainCount: 3), CreateStore("b", retainCount: 3), CreateStore("c", retainCount: 100), CreateStore("d", retainCount: 100)];
        foreach (PostgreSqlCheckpointStore store in stores)
        {
            Assert.Null(await store.LoadLatestAsync()); // each store checks the schema on first use, before it queues
        }

        var (holder, held, blockers) = await OccupyTheWritersAsync();
        var saves = new List<Task>();
        for (int i = 0; i < 32; i++)
        {
            saves.Add(stores[i % 4].SaveAsync(new byte[] { (byte)i, 7 }, 100 + i).AsTask());
        }

        bool anyFinishedWhileQueued = saves.Any(s => s.IsCompleted);
        await held.RollbackAsync();
        await Task.WhenAll(blockers);
        await Task.WhenAll(saves);
        await holder.DisposeAsync();

        Assert.False(anyFinishedWhileQueued);
        Assert.Equal(3, await CountStoredAsync("a"));
        Assert.Equal(3, await CountStoredAsync("b"));
        Assert.Equal(8, await CountStoredAsync("c"));
        Assert.Equal(8, await CountStoredAsync("d"));
        Assert.Equal(1L, await ScalarAsync($"SELECT count(DISTINCT xmin::text) FROM {_schema}.checkpoints WHERE stream <> 'blocker'"));
        for (int s = 0; s < 4; s++)
        {
            // Queue order within the group: each stream's newest is its last save.
            Assert.Equal(128 + s, (await stores[s].LoadLatestAsync())!.InputPosition);
        }
    }

    [Fact]
    public async Task TrySaveAsync_SameExpectationInOneGroup_ExactlyTheFirstWinsAndALaterSaveSeesIt()
    {
        PostgreSqlCheckpointStore first = CreateStore("race");
        PostgreSqlCheckpointStore second = CreateStore("race");
        await first.SaveAsync(new byte[] { 1 }, 1);
        Assert.Equal(1, (await second.LoadLatestAsync())!.InputPosition);
        var (holder, held, blockers) = await OccupyTheWritersAsync();
        var racing = new List<Task<bool>>();
        for (int i = 0; i < 16; i++)
        {
            racing.Add((i % 2 == 0 ? first : second).TrySaveAsync(new byte[] { 2, (byte)i }, 10 + i, 1).AsTask());
        }

        Task<bool> chained = second.TrySaveAsync(new byte[] { 3 }, 50, 10).AsTask(); // expects what the first racer writes
        await held.RollbackAsync();
        await Task.WhenAll(blockers);
        bool[] won = await Task.WhenAll(racing);
        await holder.DisposeAsync();

        Assert.True(won[0]);
        Assert.Equal(1, won.Count(w => w));
        Assert.True(await chained);
        Assert.Equal(50, (await first.LoadLatestAsync())!.InputPosition);
        Assert.Equal(3, await CountStoredAsync("race"));
        Assert.Equal(1L, await ScalarAsync($"SELECT count(DISTINCT xmin::text) FROM {_schema}.checkpoints WHERE stream = 'race' AND input_position >= 10"));
    }

    [Fact]
    public async Task SaveAsync_OneSaveOfAGroupRefusedByTheServer_FailsEverySaveOfTheGroupWithTheSameExceptionAndStoresNothing()
    {
        PostgreSqlCheckpointStore a = CreateStore("a");
        PostgreSqlCheckpointStore b = CreateStore("b");
        await a.SaveAsync(new byte[] { 1 }, 1);
        await b.SaveAsync(new byte[] { 1 }, 1);

        // The server refuses position 666 (a constraint added for this test only), in the middle of the group.
        await ExecuteAsync($"ALTER TABLE {_schema}.checkpoints ADD CONSTRAINT refuse_666 CHECK (input_position <> 666)");
        var (holder, held, blockers) = await OccupyTheWritersAsync();
        Task<bool> before = a.TrySaveAsync(new byte[] { 2 }, 2, 1).AsTask();
        Task refused = b.SaveAsync(new byte[] { 2 }, 666).AsTask();
        Task after = a.SaveAsync(new byte[] { 3 }, 3).AsTask();
        await held.RollbackAsync();
        await Task.WhenAll(blockers);
        PostgresException failure = await Assert.ThrowsAsync<PostgresException>(() => refused);
        await holder.DisposeAsync();

        Assert.Equal(PostgresErrorCodes.CheckViolation, failure.SqlState);
        Assert.Same(failure, await Assert.ThrowsAsync<PostgresException>(() => before));
        Assert.Same(failure, await Assert.ThrowsAsync<PostgresException>(() => after));
        Assert.Equal(1, await CountStoredAsync("a"));
        Assert.Equal(1, await CountStoredAsync("b"));
        Assert.Equal(1, (await a.LoadLatestAsync())!.InputPosition);
        Assert.True(await a.TrySaveAsync(new byte[] { 4 }, 4, 1)); // the store goes on
    }

    [Fact]
    public async Task SaveAsync_CancelledWhileQueuedBehindBusyWriters_ThrowsAndIsNotWrittenWhileTheOthersAre()
    {
        PostgreSqlCheckpointStore store = CreateStore("queued");
        Assert.Null(await store.LoadLatestAsync());
        var (holder, held, blockers) = await OccupyTheWritersAsync();
        using var cancel = new CancellationTokenSource();
        Task cancelled = store.SaveAsync(new byte[] { 1 }, 1, cancel.Token).AsTask();
        Task kept = store.SaveAsync(new byte[] { 2 }, 2).AsTask();
        await cancel.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => cancelled);
        await held.RollbackAsync();
        await Task.WhenAll(blockers);
        await kept;
        await holder.DisposeAsync();

        Assert.Equal(1, await CountStoredAsync("queued"));
        Assert.Equal(2, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_ServerStoppedWhileAGroupWaits_FailsItsSavesAndTheStoreRecovers()
    {
        // Not the server itself (shared by the collection): the group's connection is ended by the server, as a
        // restart would end it.
        PostgreSqlCheckpointStore store = CreateStore("ended");
        await store.SaveAsync(new byte[] { 1 }, 1);
        await using NpgsqlConnection holder = await _server.DataSource.OpenConnectionAsync();
        await using NpgsqlTransaction held = await holder.BeginTransactionAsync();
        await ExecuteOnAsync(holder, held, $"SELECT 1 FROM {_schema}.streams WHERE name = 'ended' FOR UPDATE");
        Task first = store.SaveAsync(new byte[] { 2 }, 2).AsTask();
        await UntilSavesWaitForRowLocksAsync(1);
        await ExecuteAsync($"SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE wait_event_type = 'Lock' AND query LIKE '%{_schema}.streams%FOR UPDATE%'");
        await Assert.ThrowsAnyAsync<NpgsqlException>(() => first);
        await held.RollbackAsync();

        Assert.Equal(1, await CountStoredAsync("ended"));
        await store.SaveAsync(new byte[] { 3 }, 3);
        Assert.Equal(3, (await store.LoadLatestAsync())!.InputPosition);
    }

    // Locks stream "blocker" from another transaction and starts one save to it per writer, each then waiting for the
    // lock in a group of its own; saves made next queue until the caller releases the lock.
    private async Task<(NpgsqlConnection Holder, NpgsqlTransaction Held, List<Task> Blockers)> OccupyTheWritersAsync()
    {
        PostgreSqlCheckpointStore blocker = CreateStore("blocker", retainCount: 100);
        await blocker.SaveAsync(new byte[] { 1 }, 1); // the schema and the stream's row exist
        NpgsqlConnection holder = await _server.DataSource.OpenConnectionAsync();
        NpgsqlTransaction held = await holder.BeginTransactionAsync();
        await ExecuteOnAsync(holder, held, $"SELECT 1 FROM {_schema}.streams WHERE name = 'blocker' FOR UPDATE");
        var blockers = new List<Task>();
        for (int i = 0; i < Writers; i++)
        {
            blockers.Add(blocker.SaveAsync(new byte[] { 2 }, 2 + i).AsTask());
            await UntilSavesWaitForRowLocksAsync(i + 1);
        }

        return (holder, held, blockers);
    }

    private static async Task ExecuteOnAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, string sql)
    {
        await using var command = new NpgsqlCommand(sql, connection, transaction);
        await command.ExecuteNonQueryAsync();
    }

    private async Task UntilSavesWaitForRowLocksAsync(int count)
    {
        string sql = $"SELECT count(*) FROM pg_stat_activity WHERE wait_event_type = 'Lock' AND query LIKE '%{_schema}.streams%FOR UPDATE%'";
        for (int i = 0; i < 400; i++)
        {
            if ((long)(await ScalarAsync(sql))! >= count)
            {
                return;
            }

            await Task.Delay(25);
        }

        Assert.Fail($"Fewer than {count} saves were seen waiting for a stream's row lock within 10 s.");
    }
}
