using System.Data;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Npgsql;
using NpgsqlTypes;
using StreamForecast.Shared;
using StreamForecast.Streaming;

namespace StreamForecast.PostgreSql;

/// <summary>
/// Keeps engine checkpoints in a PostgreSQL database, as named streams side by side in one schema: each save is one
/// row written in a transaction together with the deletion of the stream's rows beyond the retention count, so a
/// checkpoint is either wholly stored or absent. Any number of stores, in one process or on many machines, may share
/// the schema; this is the store for an Orleans cluster whose silos run on several machines.
/// </summary>
/// <remarks>
/// <para><b>Schema.</b> The store's tables live in their own database schema (<see cref="PostgreSqlCheckpointStoreOptions.SchemaName"/>,
/// <c>streamforecast</c> by default), created with the tables the first time a store touches the database (the role
/// needs the <c>CREATE</c> privilege on the database for that, or an administrator creates the schema beforehand and
/// grants it). Table <c>schema_info</c> holds one row: the application (<see cref="ApplicationName"/>) and the schema
/// version (<see cref="SchemaVersion"/>). A schema of a newer version, a <c>schema_info</c> naming another application,
/// or a schema that already holds other tables is refused with an <see cref="InvalidDataException"/> rather than
/// changed. Creation runs under a transaction-scoped advisory lock, so stores starting together create it once.</para>
/// <para><b>Rows.</b> Table <c>checkpoints</c>: <c>sequence</c> (an identity, growing in save order across the
/// schema), <c>stream</c>, <c>input_position</c>, <c>snapshot_length</c>, <c>snapshot_sha256</c> and <c>snapshot</c>
/// (<c>bytea</c>), with an index on (<c>stream</c>, <c>sequence</c>); table <c>streams</c> has one row per stream
/// name, the row every save to that stream locks. A store reads, writes and prunes only the rows of its
/// <see cref="PostgreSqlCheckpointStoreOptions.StreamName"/>, and the retention count applies per stream. The length
/// and SHA-256 are checked on load, so a damaged row is detected and skipped: loading falls back to the next older
/// checkpoint of the stream and reports the skipped one in <see cref="Checkpoint.Rejected"/>. Locations read
/// <c>host:port/database/schema#sequence</c> for stream "" and <c>host:port/database/schema[stream]#sequence</c>
/// otherwise.</para>
/// <para><b>Durability.</b> A save returns once PostgreSQL has committed it; with the server's defaults
/// (<c>fsync</c> and <c>synchronous_commit</c> on) a committed save survives a crash of the server or its machine. A
/// server run with either turned off, or a commit acknowledged only by an asynchronous standby, does not give that
/// guarantee: configure the server for it.</para>
/// <para><b>Concurrency.</b> Every save's transaction is READ COMMITTED and first locks its stream's row in
/// <c>streams</c> (inserting it if missing), so saves to one stream, from any instance or machine, run one at a time in
/// the order they took the lock, and the conditional comparison sees every save committed before it. Loads read in a
/// REPEATABLE READ transaction, so one load sees one consistent state of the stream, and never wait for saves. Two
/// stores given the same stream name share the stream: <see cref="SaveAsync"/> is then last-writer-wins, and
/// <see cref="TrySaveAsync"/> detects the other writer.</para>
/// <para><b>Group commit.</b> Saves made through one <see cref="NpgsqlDataSource"/> in one process (of any stores,
/// streams and schemas on it) that wait for each other are written together: up to four transactions run at a time per
/// data source, and the saves that arrive meanwhile queue and go, in queue order, into the next one, with their streams'
/// locks taken in name order (so groups of several processes never deadlock), the conditional reads in the same round
/// trip as the locks, every insert and pruning in one batch, and one commit. Each save keeps its own semantics, as if it
/// had committed on its own right after the saves queued before it: a conditional save compares its expectation with
/// its stream as those saves left it, so of several conditional saves with the same expectation at most one (the first
/// queued that matches) returns <see langword="true"/>. Each save returns only after its group has committed; if
/// anything in the group fails, nothing of it is stored and every save in it throws the same exception. A save
/// cancelled while queued is withdrawn and throws <see cref="OperationCanceledException"/>; once in a group's
/// transaction it stops only when every caller of the group has cancelled (a lone save: when its caller has). A stream
/// locked for long by another process delays the groups that write to it, and while all four transactions of a data
/// source wait, the others of that data source queue.</para>
/// <para><b>Connections.</b> The store opens a pooled connection from its <see cref="NpgsqlDataSource"/> for each
/// operation and returns it at once. Stores made from a connection string own a data source (one connection pool)
/// each; for many stores (an Orleans silo makes one per grain), create one data source and pass it to every store.</para>
/// <para><b>Thread safety.</b> Thread-safe: saves and loads may run concurrently on one instance. Saving or loading
/// after <see cref="DisposeAsync"/> throws <see cref="ObjectDisposedException"/>.</para>
/// </remarks>
public sealed partial class PostgreSqlCheckpointStore : IConditionalCheckpointStore, IAsyncDisposable, IDisposable
{
    /// <summary>The schema version this store writes and reads.</summary>
    public const int SchemaVersion = 1;

    /// <summary>The application named in the <c>schema_info</c> table of a checkpoint schema.</summary>
    public const string ApplicationName = "StreamForecast checkpoints";

    // The key of the transaction-scoped advisory lock held while the schema is checked and created: the ASCII bytes
    // "SFcp", the same mark the SQLite store writes as its file's application_id.
    private const long SchemaLockKey = 0x53466370;

    private readonly NpgsqlDataSource _dataSource;
    private readonly bool _ownsDataSource;
    private readonly PostgreSqlCheckpointStoreOptions _options;
    private readonly string _schema;
    private readonly string _databaseDescription;
    private readonly string _locationPrefix;
    private readonly string _streamDescription;
    private int _disposed;
    private volatile bool _schemaReady;

    /// <summary>Creates a store with a data source (a connection pool) of its own, disposed with the store.</summary>
    /// <param name="connectionString">
    /// An Npgsql connection string (<c>Host=…;Port=…;Database=…;Username=…;Password=…</c>); nothing is connected until
    /// the first save or load.
    /// </param>
    /// <param name="options">Retention, size limit, stream and schema names; <see cref="PostgreSqlCheckpointStoreOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentException"><paramref name="connectionString"/> is null, empty, white space or not a valid connection string.</exception>
    public PostgreSqlCheckpointStore(string connectionString, PostgreSqlCheckpointStoreOptions? options = null)
        : this(CreateDataSource(connectionString), ownsDataSource: true, options)
    {
    }

    /// <summary>Creates a store that opens its connections from a shared data source, which the store does not dispose.</summary>
    /// <param name="dataSource">The data source (connection pool); it may be shared by any number of stores and other code.</param>
    /// <param name="options">Retention, size limit, stream and schema names; <see cref="PostgreSqlCheckpointStoreOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentNullException"><paramref name="dataSource"/> is null.</exception>
    public PostgreSqlCheckpointStore(NpgsqlDataSource dataSource, PostgreSqlCheckpointStoreOptions? options = null)
        : this(dataSource ?? throw new ArgumentNullException(nameof(dataSource)), ownsDataSource: false, options)
    {
    }

    private PostgreSqlCheckpointStore(NpgsqlDataSource dataSource, bool ownsDataSource, PostgreSqlCheckpointStoreOptions? options)
    {
        _dataSource = dataSource;
        _ownsDataSource = ownsDataSource;
        _options = options ?? PostgreSqlCheckpointStoreOptions.Default;
        _schema = _options.SchemaName;
        var builder = new NpgsqlConnectionStringBuilder(dataSource.ConnectionString);
        _databaseDescription = string.Create(CultureInfo.InvariantCulture, $"{builder.Host}:{builder.Port}/{builder.Database ?? builder.Username}");
        string stream = _options.StreamName;
        _locationPrefix = stream.Length == 0 ? $"{_databaseDescription}/{_schema}" : $"{_databaseDescription}/{_schema}[{stream}]";
        _streamDescription = stream.Length == 0 ? $"schema '{_schema}' of {_databaseDescription}" : $"stream '{stream}' in schema '{_schema}' of {_databaseDescription}";
    }

    /// <summary>The store's settings.</summary>
    public PostgreSqlCheckpointStoreOptions Options => _options;

    /// <inheritdoc/>
    /// <exception cref="ArgumentException">The snapshot is empty or longer than <see cref="PostgreSqlCheckpointStoreOptions.MaxSnapshotLength"/>.</exception>
    /// <exception cref="InvalidDataException">The schema is not a checkpoint schema this version can use.</exception>
    /// <exception cref="NpgsqlException">The server could not be reached or refused the statements (no privilege, disk full...); no checkpoint was added.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>
    /// Cost: one SHA-256 over the snapshot and three round trips to the server (lock the stream, insert and prune,
    /// commit), shared with the other saves of its group (see the class remarks); the first operation of an instance
    /// also checks the schema, one more. Waits while another save to the same stream holds its lock, and while the data
    /// source's transactions are busy.
    /// </remarks>
    public async ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default)
    {
        CheckpointSaveArguments.Check(snapshot, inputPosition, null, _options.MaxSnapshotLength, "PostgreSqlCheckpointStoreOptions.MaxSnapshotLength");
        bool saved = await SaveCoreAsync(snapshot, inputPosition, conditional: false, expectedLatestPosition: null, cancellationToken).ConfigureAwait(false);
        System.Diagnostics.Debug.Assert(saved, "An unconditional save always stores its checkpoint.");
    }

    /// <inheritdoc/>
    /// <exception cref="ArgumentException">The snapshot is empty or longer than <see cref="PostgreSqlCheckpointStoreOptions.MaxSnapshotLength"/>.</exception>
    /// <exception cref="InvalidDataException">The schema is not a checkpoint schema this version can use.</exception>
    /// <exception cref="NpgsqlException">The server could not be reached or refused the statements; no checkpoint was added.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>
    /// <para><b>Newest.</b> Damaged rows are skipped exactly as <see cref="LoadLatestAsync"/> skips them, so a position
    /// just loaded is always a matching expectation.</para>
    /// <para>Cost: that of <see cref="SaveAsync"/>, plus the server hashing the stream's newest stored snapshot
    /// (PostgreSQL's <c>sha256</c>, compared there with the stored hash, so the snapshot is not sent back), in the round
    /// trip that takes the locks (one more round trip per older one, checked only while the newer are damaged; none
    /// when an earlier save of the same group wrote the stream).</para>
    /// <para><b>Thread safety.</b> Atomic with respect to every save to the stream, from this instance, other instances
    /// or other machines, grouped or not: of several conditional saves made with the same expectation, at most one
    /// returns <see langword="true"/>.</para>
    /// </remarks>
    public async ValueTask<bool> TrySaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, long? expectedLatestPosition, CancellationToken cancellationToken = default)
    {
        CheckpointSaveArguments.Check(snapshot, inputPosition, expectedLatestPosition, _options.MaxSnapshotLength, "PostgreSqlCheckpointStoreOptions.MaxSnapshotLength");
        return await SaveCoreAsync(snapshot, inputPosition, conditional: true, expectedLatestPosition, cancellationToken).ConfigureAwait(false);
    }

    /// <inheritdoc/>
    /// <exception cref="InvalidDataException">
    /// Checkpoints of the stream exist but none is usable (the message lists each and why), or the schema is not a
    /// checkpoint schema this version can use (a newer schema version, another application's tables).
    /// </exception>
    /// <exception cref="NpgsqlException">The server could not be reached or refused the statements.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>
    /// Reads the stream's rows newest first, one per round trip, in one REPEATABLE READ transaction, and stops at the
    /// first valid one; usually reads one snapshot. A row longer than the size limit is rejected without its bytes
    /// being sent.
    /// </remarks>
    public async ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default)
    {
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        var rejected = new List<CheckpointRejection>();
        NpgsqlConnection connection = await OpenAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.RepeatableRead, cancellationToken).ConfigureAwait(false);
            await using (transaction.ConfigureAwait(false))
            {
                long before = long.MaxValue;
                while (await ReadOlderRowAsync(connection, transaction, before, cancellationToken).ConfigureAwait(false) is StoredRow row)
                {
                    string location = Location(row.Sequence);
                    if (row.Problem is null)
                    {
                        return new Checkpoint(row.Snapshot!, row.Position, location, rejected);
                    }

                    rejected.Add(new CheckpointRejection(location, row.Problem));
                    before = row.Sequence;
                }
            }
        }

        if (rejected.Count == 0)
        {
            return null;
        }

        var message = new StringBuilder();
        message.Append(CultureInfo.InvariantCulture, $"None of the {rejected.Count} checkpoints in {_streamDescription} is usable:");
        foreach (CheckpointRejection rejection in rejected)
        {
            message.Append(CultureInfo.InvariantCulture, $" {rejection.Location}: {rejection.Reason}");
        }

        throw new InvalidDataException(message.ToString());
    }

    /// <summary>
    /// Ends this store: later saves and loads throw <see cref="ObjectDisposedException"/>, and a data source the store
    /// made from a connection string is disposed (a shared one is not). The stored checkpoints are not touched. Idempotent.
    /// </summary>
    /// <returns>A task that completes once the store's own data source has closed its connections.</returns>
    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) == 0 && _ownsDataSource)
        {
            await _dataSource.DisposeAsync().ConfigureAwait(false);
        }
    }

    /// <summary>Ends this store as <see cref="DisposeAsync"/> does, synchronously. Idempotent.</summary>
    public void Dispose()
    {
        if (Interlocked.Exchange(ref _disposed, 1) == 0 && _ownsDataSource)
        {
            _dataSource.Dispose();
        }
    }

    private static NpgsqlDataSource CreateDataSource(string connectionString)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(connectionString);
        return NpgsqlDataSource.Create(connectionString);
    }

    private async ValueTask<bool> SaveCoreAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, bool conditional, long? expectedLatestPosition, CancellationToken cancellationToken)
    {
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        if (!_schemaReady)
        {
            // Checked by this store before it joins a group, so that a schema it cannot use fails only its own saves.
            NpgsqlConnection connection = await OpenAsync(cancellationToken).ConfigureAwait(false);
            await connection.DisposeAsync().ConfigureAwait(false);
        }

        var save = new PendingSave(this, snapshot, SHA256.HashData(snapshot.Span), inputPosition, conditional, expectedLatestPosition, cancellationToken);
        return await PostgreSqlCommitQueue.For(_dataSource).SaveAsync(save, cancellationToken).ConfigureAwait(false);
    }

    internal async Task<long?> NewestValidPositionAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, CancellationToken cancellationToken)
    {
        long before = long.MaxValue;
        while (await CheckOlderRowAsync(connection, transaction, before, cancellationToken).ConfigureAwait(false) is StoredRow row)
        {
            if (row.Problem is null)
            {
                return row.Position;
            }

            before = row.Sequence;
        }

        return null;
    }

    // Reads the stream's newest row with a sequence below `before`, and checks it; null when there is none.
    private Task<StoredRow?> ReadOlderRowAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, long before, CancellationToken cancellationToken) =>
        QueryRowAsync(connection, transaction, OlderRowCommand(before), ReadRowAsync, cancellationToken);

    // Checks the stream's newest row with a sequence below `before` on the server, without reading its bytes; null when there is none.
    private Task<StoredRow?> CheckOlderRowAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, long before, CancellationToken cancellationToken) =>
        QueryRowAsync(connection, transaction, CheckedRowCommand(before), (reader, ct) => ReadCheckedRowAsync(reader, _options.MaxSnapshotLength, ct), cancellationToken);

    // Runs one row query in the transaction and reads its result with `read`.
    private static async Task<StoredRow?> QueryRowAsync(
        NpgsqlConnection connection,
        NpgsqlTransaction transaction,
        NpgsqlBatchCommand command,
        Func<NpgsqlDataReader, CancellationToken, Task<StoredRow?>> read,
        CancellationToken cancellationToken)
    {
        var select = new NpgsqlBatch(connection, transaction);
        await using (select.ConfigureAwait(false))
        {
            select.BatchCommands.Add(command);
            NpgsqlDataReader reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                return await read(reader, cancellationToken).ConfigureAwait(false);
            }
        }
    }

    private string Location(long sequence) => string.Create(CultureInfo.InvariantCulture, $"{_locationPrefix}#{sequence}");

    private static NpgsqlBatchCommand Command(string sql, params NpgsqlParameter[] parameters)
    {
        var command = new NpgsqlBatchCommand(sql);
        command.Parameters.AddRange(parameters);
        return command;
    }

    private static NpgsqlParameter<string> Text(string value) => new() { TypedValue = value, NpgsqlDbType = NpgsqlDbType.Text };
}
