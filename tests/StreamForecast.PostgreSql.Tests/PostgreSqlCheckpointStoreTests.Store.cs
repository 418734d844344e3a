using Npgsql;
using StreamForecast.Streaming;

namespace StreamForecast.PostgreSql.Tests;

// What only the PostgreSQL store has: its schema and version, locations, rows damaged in ways only a database allows,
// size limits, the stream's row lock and its own data source. Options are checked in PostgreSqlCheckpointStoreOptionsTests.
public sealed partial class PostgreSqlCheckpointStoreTests
{
    [Fact]
    public async Task LoadLatestAsync_NewSchema_ReturnsNullAndCreatesTheVersionedTables()
    {
        PostgreSqlCheckpointStore store = CreateStore("s");

        Assert.Null(await store.LoadLatestAsync());

        Assert.Equal(PostgreSqlCheckpointStore.ApplicationName, await ScalarAsync($"SELECT application FROM {_schema}.schema_info"));
        Assert.Equal(PostgreSqlCheckpointStore.SchemaVersion, await ScalarAsync($"SELECT version FROM {_schema}.schema_info"));
        Assert.Equal(3L, await ScalarAsync("SELECT count(*) FROM pg_tables WHERE schemaname = $1", _schema));
    }

    [Fact]
    public async Task SaveAsync_NewSchemaOnAServerWithLz4_SnapshotsAreCompressedWithLz4()
    {
        // The throwaway server is PostgreSQL 15 built with lz4 (pg_config --configure lists --with-lz4); pg_attribute's
        // attcompression is 'l' for lz4, 'p' for pglz, empty for the server's default (PostgreSQL 14 documentation,
        // "pg_attribute"; from memory). A snapshot of 64 KB of one repeated byte is stored compressed.
        Assert.Equal(true, await ScalarAsync("SELECT 'lz4' = ANY (enumvals) FROM pg_settings WHERE name = 'default_toast_compression'"));
        PostgreSqlCheckpointStore store = CreateStore("s");
        byte[] snapshot = new byte[65_536];
        Array.Fill(snapshot, (byte)7);

        await store.SaveAsync(snapshot, 1);

        Assert.Equal('l', await ScalarAsync($"SELECT attcompression FROM pg_attribute WHERE attrelid = '{_schema}.checkpoints'::regclass AND attname = 'snapshot'"));
        Assert.Equal("lz4", await ScalarAsync($"SELECT pg_column_compression(snapshot) FROM {_schema}.checkpoints"));
        Assert.Equal(snapshot, (await store.LoadLatestAsync())!.Snapshot.ToArray());
    }

    [Fact]
    public async Task LoadLatestAsync_Location_NamesServerDatabaseSchemaStreamAndRow()
    {
        PostgreSqlCheckpointStore named = CreateStore("bucket #7");
        PostgreSqlCheckpointStore unnamed = CreateStore("");
        await named.SaveAsync(new byte[] { 1 }, 1);
        await unnamed.SaveAsync(new byte[] { 2 }, 2);

        string namedLocation = (await named.LoadLatestAsync())!.Location;
        string unnamedLocation = (await unnamed.LoadLatestAsync())!.Location;

        Assert.Equal($"127.0.0.1:{_server.Port}/postgres/{_schema}[bucket #7]#{(await SequencesAsync("bucket #7"))[0]}", namedLocation);
        Assert.Equal($"127.0.0.1:{_server.Port}/postgres/{_schema}#{(await SequencesAsync(""))[0]}", unnamedLocation);
    }

    [Fact]
    public async Task LoadLatestAsync_NewerSchemaVersion_RefusesAndNamesBothVersionsWithoutChangingIt()
    {
        await CreateStore("s").SaveAsync(new byte[] { 1 }, 1);
        await ExecuteAsync($"UPDATE {_schema}.schema_info SET version = 7");
        PostgreSqlCheckpointStore store = CreateStore("s");

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await store.LoadLatestAsync());
        await Assert.ThrowsAsync<InvalidDataException>(async () => await store.SaveAsync(new byte[] { 2 }, 2));

        Assert.Contains($"schema version 7, newer than version {PostgreSqlCheckpointStore.SchemaVersion}", ex.Message, StringComparison.Ordinal);
        Assert.Equal(7, await ScalarAsync($"SELECT version FROM {_schema}.schema_info"));
        Assert.Equal(1, await CountStoredAsync("s"));
    }

    [Fact]
    public async Task LoadLatestAsync_UnknownOlderSchemaVersion_Refuses()
    {
        await CreateStore("s").SaveAsync(new byte[] { 1 }, 1);
        await ExecuteAsync($"UPDATE {_schema}.schema_info SET version = 0");

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await CreateStore("s").LoadLatestAsync());

        Assert.Contains("schema version 0, which this StreamForecast.PostgreSql does not know", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_SchemaInfoOfAnotherApplication_Refuses()
    {
        await ExecuteAsync($"CREATE SCHEMA {_schema}; CREATE TABLE {_schema}.schema_info (application text, version integer); INSERT INTO {_schema}.schema_info VALUES ('bakery orders', 1)");

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await CreateStore("s").LoadLatestAsync());

        Assert.Contains("is not a StreamForecast checkpoint schema", ex.Message, StringComparison.Ordinal);
        Assert.Contains("'bakery orders'", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task SaveAsync_SchemaHoldingOtherTables_RefusesWithoutChangingIt()
    {
        await PlantForeignDataAsync("s");

        var ex = await Assert.ThrowsAsync<InvalidDataException>(async () => await CreateStore("s").SaveAsync(new byte[] { 1 }, 1));

        Assert.Contains($"The schema '{_schema}'", ex.Message, StringComparison.Ordinal);
        Assert.Contains("already holds other tables", ex.Message, StringComparison.Ordinal);
        Assert.Equal(1L, await ScalarAsync("SELECT count(*) FROM pg_tables WHERE schemaname = $1", _schema));
        Assert.Equal("not a checkpoint", await ScalarAsync($"SELECT note FROM {_schema}.orders"));
    }

    [Fact]
    public async Task SaveAsync_StoresStartingTogetherOnANewSchema_CreateItOnceAndAllSave()
    {
        PostgreSqlCheckpointStore[] stores = [.. Enumerable.Range(0, 8).Select(i => CreateStore("starter-" + i))];

        await Task.WhenAll(stores.Select((s, i) => s.SaveAsync(new[] { (byte)i }, i).AsTask()));

        Assert.Equal(1L, await ScalarAsync($"SELECT count(*) FROM {_schema}.schema_info"));
        for (int i = 0; i < stores.Length; i++)
        {
            Assert.Equal(i, (await stores[i].LoadLatestAsync())!.InputPosition);
        }
    }

    [Fact]
    public async Task LoadLatestAsync_RowShorterThanDeclared_FallsBackNamingBothLengths()
    {
        PostgreSqlCheckpointStore store = CreateStore("s");
        await store.SaveAsync(new byte[] { 1, 2, 3 }, 10);
        await store.SaveAsync(new byte[] { 4, 5, 6 }, 20);
        await ExecuteAsync($"UPDATE {_schema}.checkpoints SET snapshot = '\\x04'::bytea WHERE input_position = 20");

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.Equal(10, loaded!.InputPosition);
        Assert.Equal("The snapshot is 1 bytes but its row declares 3.", Assert.Single(loaded.Rejected).Reason);
    }

    [Fact]
    public async Task LoadLatestAsync_RowWithNegativePosition_FallsBack()
    {
        PostgreSqlCheckpointStore store = CreateStore("s");
        await store.SaveAsync(new byte[] { 1 }, 10);
        await store.SaveAsync(new byte[] { 2 }, 20);
        await ExecuteAsync($"UPDATE {_schema}.checkpoints SET input_position = -5 WHERE input_position = 20");

        Checkpoint? loaded = await store.LoadLatestAsync();

        Assert.Equal(10, loaded!.InputPosition);
        Assert.Contains("-5 is negative", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task LoadLatestAsync_RowAboveTheLimit_RejectedWithoutItsBytes()
    {
        await CreateStore("s").SaveAsync(new byte[10], 1);
        await CreateStore("s").SaveAsync(new byte[1000], 2);
        PostgreSqlCheckpointStore limited = CreateStoreWith(Options("s", maxSnapshotLength: 500));

        Checkpoint? loaded = await limited.LoadLatestAsync();

        Assert.Equal(1, loaded!.InputPosition);
        Assert.Contains("1000 bytes, more than the limit of 500 bytes", Assert.Single(loaded.Rejected).Reason, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0)]
    [InlineData(101)]
    public async Task SaveAsync_SnapshotOutsideOneToTheLimit_ThrowsWithTheAllowedRangeAndStoresNothing(int length)
    {
        PostgreSqlCheckpointStore store = CreateStoreWith(Options("s", maxSnapshotLength: 100));

        var ex = await Assert.ThrowsAsync<ArgumentException>(async () => await store.SaveAsync(new byte[length], 1));
        await Assert.ThrowsAsync<ArgumentException>(async () => await store.TrySaveAsync(new byte[length], 1, null));

        Assert.Equal("snapshot", ex.ParamName);
        Assert.Contains("1 to 100 bytes", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0, await CountStoredAsync("s"));
    }

    [Fact]
    public async Task SaveAsync_AnotherTransactionHoldsTheStreamsLock_WaitsForItWhileOtherStreamsDoNot()
    {
        PostgreSqlCheckpointStore store = CreateStore("locked");
        PostgreSqlCheckpointStore other = CreateStore("free");
        await store.SaveAsync(new byte[] { 1 }, 1); // the schema and the stream's row exist
        await using NpgsqlConnection holder = await _server.DataSource.OpenConnectionAsync();
        await using NpgsqlTransaction held = await holder.BeginTransactionAsync();
        await using (var lockRow = new NpgsqlCommand($"SELECT 1 FROM {_schema}.streams WHERE name = 'locked' FOR UPDATE", holder, held))
        {
            await lockRow.ExecuteNonQueryAsync();
        }

        Task<bool> save = Task.Run(async () => await store.TrySaveAsync(new byte[] { 2 }, 2, 1));
        await other.SaveAsync(new byte[] { 9 }, 9); // another stream's row: not waiting
        await UntilASaveWaitsForTheRowLockAsync();
        bool finishedWhileLocked = save.IsCompleted;
        await held.RollbackAsync();

        Assert.False(finishedWhileLocked);
        Assert.True(await save);
        Assert.Equal(2, (await store.LoadLatestAsync())!.InputPosition);
        Assert.Equal(9, (await other.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_CancelledWhileWaitingForTheStreamsLock_ThrowsAndWritesNothing()
    {
        PostgreSqlCheckpointStore store = CreateStore("locked");
        await store.SaveAsync(new byte[] { 1 }, 1);
        await using NpgsqlConnection holder = await _server.DataSource.OpenConnectionAsync();
        await using NpgsqlTransaction held = await holder.BeginTransactionAsync();
        await using (var lockRow = new NpgsqlCommand($"SELECT 1 FROM {_schema}.streams WHERE name = 'locked' FOR UPDATE", holder, held))
        {
            await lockRow.ExecuteNonQueryAsync();
        }

        using var cancel = new CancellationTokenSource();
        Task save = Task.Run(async () => await store.SaveAsync(new byte[] { 2 }, 2, cancel.Token));
        await UntilASaveWaitsForTheRowLockAsync();
        await cancel.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => save);
        await held.RollbackAsync();

        Assert.Equal(1, await CountStoredAsync("locked"));
        Assert.Equal(1, (await store.LoadLatestAsync())!.InputPosition);
    }

    [Fact]
    public async Task SaveAsync_StreamNameAtTheLimitWithNonAsciiCharacters_RoundTripsAndComparesCaseSensitively()
    {
        const string prefix = "bücket #7 ✓ \U0001F4C8 "; // non-ASCII, '#', and a surrogate pair
        string name = prefix + new string('z', PostgreSqlCheckpointStoreOptions.MaxStreamNameLength - prefix.Length);
        PostgreSqlCheckpointStore store = CreateStore(name);
        PostgreSqlCheckpointStore caseVariant = CreateStore(name.ToUpperInvariant());

        await store.SaveAsync(new byte[] { 7 }, 70);

        Assert.Equal(70, (await store.LoadLatestAsync())!.InputPosition);
        Assert.Single(await SequencesAsync(name));
        Assert.Null(await caseVariant.LoadLatestAsync());
    }

    [Fact]
    public async Task Constructor_ConnectionString_UsesAndDisposesADataSourceOfItsOwn()
    {
        var own = new PostgreSqlCheckpointStore(_server.ConnectionString, Options("own"));
        await own.SaveAsync(new byte[] { 5 }, 50);
        await own.DisposeAsync();

        await Assert.ThrowsAsync<ObjectDisposedException>(async () => await own.LoadLatestAsync());
        Assert.Equal(50, (await CreateStore("own").LoadLatestAsync())!.InputPosition); // the shared data source still works
    }

    [Fact]
    public async Task Dispose_StoreOnASharedDataSource_LeavesTheDataSourceOpen()
    {
        PostgreSqlCheckpointStore store = CreateStore("shared");
        await store.SaveAsync(new byte[] { 1 }, 1);

        store.Dispose();

        Assert.Equal(1L, await ScalarAsync("SELECT 1::bigint"));
    }

    [Fact]
    public async Task LoadLatestAsync_ServerNotListening_ThrowsNpgsqlException()
    {
        int closedPort;
        using (var probe = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0))
        {
            probe.Start();
            closedPort = ((System.Net.IPEndPoint)probe.LocalEndpoint).Port;
        }

        await using var store = new PostgreSqlCheckpointStore($"Host=127.0.0.1;Port={closedPort};Username=x;Timeout=2", Options("s"));

        await Assert.ThrowsAnyAsync<NpgsqlException>(async () => await store.LoadLatestAsync());
    }

    // Polls the server until a save of this test's schema is waiting for a row lock (not a timing assumption: the
    // server reports the wait).
    private async Task UntilASaveWaitsForTheRowLockAsync()
    {
        string sql = $"SELECT count(*) FROM pg_stat_activity WHERE wait_event_type = 'Lock' AND query LIKE '%{_schema}.streams%FOR UPDATE%'";
        for (int i = 0; i < 400; i++)
        {
            if ((long)(await ScalarAsync(sql))! > 0)
            {
                return;
            }

            await Task.Delay(25);
        }

        Assert.Fail("No save was seen waiting for the stream's row lock within 10 s.");
    }

    private PostgreSqlCheckpointStore CreateStoreWith(PostgreSqlCheckpointStoreOptions options) =>
        Track(new PostgreSqlCheckpointStore(_server.DataSource, options));
}
