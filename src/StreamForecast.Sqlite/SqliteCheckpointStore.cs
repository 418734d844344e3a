using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Microsoft.Data.Sqlite;
using StreamForecast.Shared;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <summary>
/// Keeps engine checkpoints in one SQLite database file, optionally as several named streams side by side: each save
/// is one row written in a transaction together with the deletion of the stream's rows beyond the retention count, so
/// a checkpoint is either wholly stored or absent.
/// </summary>
/// <remarks>
/// <para><b>File.</b> The file is created, with its schema, the first time the store touches it. The schema is
/// versioned with SQLite's <c>user_version</c> header field (version <see cref="SchemaVersion"/>) and the file is
/// marked with an <c>application_id</c> (<see cref="ApplicationId"/>); a file of a newer schema version, a file
/// belonging to another application, or a non-empty database without the mark is refused with an
/// <see cref="InvalidDataException"/> rather than changed. A version-1 file (written before streams existed) is
/// upgraded in place, in one transaction, the first time a store opens it: its rows become stream "". The upgrade
/// is one-way: a StreamForecast.Sqlite that reads only version 1 refuses the file afterwards, so upgrade every
/// process that shares a file before any of them opens it with this version.</para>
/// <para><b>Rows.</b> Table <c>checkpoints</c>: <c>sequence</c> (1, 2, 3… in save order across the whole file),
/// <c>input_position</c>, <c>snapshot_length</c>, <c>snapshot_sha256</c>, <c>snapshot</c> and <c>stream</c> (text,
/// "" by default), with an index on (<c>stream</c>, <c>sequence</c>). A store reads, writes and prunes only the rows
/// of its <see cref="SqliteCheckpointStoreOptions.StreamName"/>; the retention count applies per stream. The length and
/// SHA-256 are checked on load, so a damaged row is detected and skipped: loading falls back to the next older
/// checkpoint of the stream and reports the skipped one in <see cref="Checkpoint.Rejected"/>. Locations read
/// <c>path#sequence</c> for stream "" and <c>path[stream]#sequence</c> otherwise.</para>
/// <para><b>Durability.</b> SQLite's default rollback journal with <c>synchronous=FULL</c>: a committed save
/// survives a crash or power failure; an interrupted one is rolled back the next time the file is opened. The store
/// does not switch the file to write-ahead logging: writers are serialised in either mode, loads (made once, when an
/// engine starts) gain little from reading beside a writer, and with the rollback journal the database stays a
/// single file that can be copied on its own, without the <c>-wal</c> and <c>-shm</c> files that WAL adds.</para>
/// <para><b>Sharing a file.</b> Any number of stores, in one process or in several on the same machine, may use one
/// file at once, each with its own stream. Every save is a <c>BEGIN IMMEDIATE</c> transaction, so writers take the
/// file's write lock one at a time; a store that finds the file locked waits for it (SQLite's busy timeout and
/// Microsoft.Data.Sqlite's retries, 30 seconds in all) instead of failing, and only a lock held longer than that
/// surfaces as a <see cref="SqliteException"/> (SQLITE_BUSY). SQLite's file locks are not reliable on network file
/// systems: keep a shared file on a local disk. An input log (<see cref="SqliteInputLog"/>) may share the file too: its
/// tables sit beside <c>checkpoints</c>, it takes the same in-process writer gate, and this store ignores its tables.
/// Two stores given the same stream name share that stream:
/// <see cref="SaveAsync"/> is then last-writer-wins, and <see cref="TrySaveAsync"/> detects the other writer.</para>
/// <para><b>Group commit.</b> The saves of every instance on the same file in one process queue on one in-process
/// gate (so they never sleep in SQLite's busy handler waiting for each other), and the saves that wait while a
/// transaction runs are written together, in queue order, in the next transaction: one synchronous commit for all of
/// them instead of one each. Each save keeps its own meaning inside it (its conditional check sees the saves before it,
/// a mismatch writes nothing of that save only, its stream is pruned to its own retention count) and completes only
/// when the transaction has committed; a failure of the transaction fails every save in it, and none is stored.</para>
/// <para><b>Thread safety.</b> Thread-safe: saves are written one at a time (see group commit) and loads run alongside
/// them, each on its own connection; across processes the file's locks keep transactions apart. Saving after
/// <see cref="Dispose"/> throws <see cref="ObjectDisposedException"/>.</para>
/// </remarks>
public sealed class SqliteCheckpointStore : IConditionalCheckpointStore, IAsyncDisposable, IDisposable
{
    /// <summary>The schema version this store writes and reads; version 1 files are upgraded to it when opened.</summary>
    public const int SchemaVersion = 2;

    /// <summary>The value of SQLite's <c>application_id</c> header field in a checkpoint file (the ASCII bytes "SFcp").</summary>
    public const int ApplicationId = 0x53466370;

    private readonly SqliteCheckpointStoreOptions _options;
    private readonly SqliteFile _file;
    private int _disposed;
    private readonly string _locationPrefix;
    private readonly string _streamDescription;

    /// <summary>Creates a store over a database file, which is created (with its directory) when first used if missing.</summary>
    /// <param name="databasePath">The database file; it may be shared with other stores that use other streams.</param>
    /// <param name="options">Retention, size limit and stream name; <see cref="SqliteCheckpointStoreOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentException"><paramref name="databasePath"/> is null, empty or white space.</exception>
    public SqliteCheckpointStore(string databasePath, SqliteCheckpointStoreOptions? options = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(databasePath);
        DatabasePath = Path.GetFullPath(databasePath);
        _options = options ?? SqliteCheckpointStoreOptions.Default;
        _file = new SqliteFile(DatabasePath);
        string stream = _options.StreamName;
        _locationPrefix = stream.Length == 0 ? DatabasePath : $"{DatabasePath}[{stream}]";
        _streamDescription = stream.Length == 0 ? $"'{DatabasePath}'" : $"stream '{stream}' of '{DatabasePath}'";
    }

    /// <summary>The full path of the database file.</summary>
    public string DatabasePath { get; }

    /// <summary>The store's settings.</summary>
    public SqliteCheckpointStoreOptions Options => _options;

    /// <inheritdoc/>
    /// <exception cref="ArgumentException">The snapshot is empty or longer than <see cref="SqliteCheckpointStoreOptions.MaxSnapshotLength"/>.</exception>
    /// <exception cref="InvalidDataException">The file is not a checkpoint database this version can use.</exception>
    /// <exception cref="SqliteException">SQLite failed (disk full, file locked by another writer for more than 30 seconds...); no checkpoint was added.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>
    /// <para>The checkpoint becomes a new row of the store's stream, and all but the stream's newest
    /// <see cref="SqliteCheckpointStoreOptions.RetainCount"/> rows are deleted, in one transaction. Cancellation works
    /// while the save waits for its transaction; once the transaction has started, the save completes with its outcome.</para>
    /// <para>Cost: one SHA-256 over the snapshot, one row insert, one delete, and a share of one synchronous commit: saves to
    /// one file from one process that wait for each other are committed together (see the type's remarks); saves from
    /// other processes wait for the file's write lock.</para>
    /// </remarks>
    public async ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default)
    {
        CheckpointSaveArguments.Check(snapshot, inputPosition, null, _options.MaxSnapshotLength, "SqliteCheckpointStoreOptions.MaxSnapshotLength");
        bool saved = await SaveCoreAsync(snapshot, inputPosition, conditional: false, expectedLatestPosition: null, cancellationToken).ConfigureAwait(false);
        System.Diagnostics.Debug.Assert(saved, "An unconditional save always stores its checkpoint.");
    }

    /// <inheritdoc/>
    /// <exception cref="ArgumentException">The snapshot is empty or longer than <see cref="SqliteCheckpointStoreOptions.MaxSnapshotLength"/>.</exception>
    /// <exception cref="InvalidDataException">The file is not a checkpoint database this version can use.</exception>
    /// <exception cref="SqliteException">SQLite failed (disk full, file locked by another writer for more than 30 seconds...); no checkpoint was added.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>
    /// <para>The comparison, the insert and the pruning are one transaction; cancellation works as for <see cref="SaveAsync"/>.
    /// When the newest row is damaged and a load fell back to an older checkpoint, the older checkpoint's position
    /// matches and the damaged row's position does not.</para>
    /// <para>Cost: that of <see cref="SaveAsync"/>, plus reading and hashing the stream's newest stored snapshot (and
    /// older ones only while the newer are damaged) inside the write transaction.</para>
    /// <para><b>Thread safety.</b> Atomic with respect to every save to the file, from this instance, other instances
    /// or other processes: of several conditional saves made with the same expectation, at most one returns
    /// <see langword="true"/>.</para>
    /// </remarks>
    public async ValueTask<bool> TrySaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, long? expectedLatestPosition, CancellationToken cancellationToken = default)
    {
        CheckpointSaveArguments.Check(snapshot, inputPosition, expectedLatestPosition, _options.MaxSnapshotLength, "SqliteCheckpointStoreOptions.MaxSnapshotLength");
        return await SaveCoreAsync(snapshot, inputPosition, conditional: true, expectedLatestPosition, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>
    /// Loads the stream's newest checkpoint whose length and SHA-256 match its bytes, falling back to older rows.
    /// </summary>
    /// <param name="cancellationToken">Cancels the load.</param>
    /// <returns>The checkpoint, with any newer rows skipped; null when the stream holds no checkpoint (a new file or stream).</returns>
    /// <exception cref="InvalidDataException">
    /// Checkpoints of the stream exist but none is usable (the message lists each and why), or the file is not a
    /// checkpoint database this version can use (a newer schema version, another application's file, a damaged file).
    /// </exception>
    /// <exception cref="SqliteException">Another connection held the file locked for more than 30 seconds (SQLITE_BUSY).</exception>
    /// <remarks>Reads the stream's rows newest first and stops at the first valid one; usually reads one snapshot.</remarks>
    public async ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default)
    {
        var rejected = new List<CheckpointRejection>();
        try
        {
            using SqliteConnection connection = await _file.OpenAsync(cancellationToken).ConfigureAwait(false);
            using SqliteCommand select = SelectNewestFirst(connection, transaction: null);
            using SqliteDataReader reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
            {
                string location = Location(reader.GetInt64(0));
                if (TryReadRow(reader, out long position, out byte[]? snapshot, out string? problem))
                {
                    return new Checkpoint(snapshot, position, location, rejected);
                }

                rejected.Add(new CheckpointRejection(location, problem));
            }
        }
        catch (SqliteException ex) when (!SqliteFile.IsLockTimeout(ex))
        {
            throw new InvalidDataException($"The checkpoint database '{DatabasePath}' could not be read: {ex.Message}", ex);
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

    /// <summary>Ends this store: later saves throw <see cref="ObjectDisposedException"/>. The file is not touched. Idempotent.</summary>
    public void Dispose() => Volatile.Write(ref _disposed, 1);

    /// <summary>Ends this store as <see cref="Dispose"/> does (nothing to await; present so every store disposes alike). Idempotent.</summary>
    /// <returns>A completed task.</returns>
    public ValueTask DisposeAsync()
    {
        Dispose();
        return ValueTask.CompletedTask;
    }

    private async ValueTask<bool> SaveCoreAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, bool conditional, long? expectedLatestPosition, CancellationToken cancellationToken)
    {
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        var save = new PendingSave(this, snapshot.ToArray(), SHA256.HashData(snapshot.Span), inputPosition, conditional, expectedLatestPosition);
        return await _file.Commits.SaveAsync(save, _file, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>
    /// Writes one queued save inside a transaction of the file's commit queue (<see cref="SqliteCommitQueue"/>): the
    /// conditional check, the insert and the pruning of this store's stream.
    /// </summary>
    /// <returns><see langword="false"/> when the expectation did not match; nothing was written for this save then.</returns>
    internal async Task<bool> WriteAsync(SqliteConnection connection, SqliteTransaction transaction, PendingSave save)
    {
        if (save.Conditional)
        {
            long? latest = await NewestValidPositionAsync(connection, transaction, CancellationToken.None).ConfigureAwait(false);
            if (latest != save.ExpectedLatestPosition)
            {
                return false;
            }
        }

        using (SqliteCommand insert = connection.CreateCommand())
        {
            insert.Transaction = transaction;
            insert.CommandText =
                "INSERT INTO checkpoints (stream, input_position, snapshot_length, snapshot_sha256, snapshot) VALUES ($stream, $position, $length, $hash, $snapshot)";
            insert.Parameters.AddWithValue("$stream", _options.StreamName);
            insert.Parameters.AddWithValue("$position", save.InputPosition);
            insert.Parameters.AddWithValue("$length", (long)save.Snapshot.Length);
            insert.Parameters.AddWithValue("$hash", save.Hash);
            insert.Parameters.AddWithValue("$snapshot", save.Snapshot);
            await insert.ExecuteNonQueryAsync(CancellationToken.None).ConfigureAwait(false);
        }

        using (SqliteCommand prune = connection.CreateCommand())
        {
            prune.Transaction = transaction;
            prune.CommandText = """
                DELETE FROM checkpoints WHERE stream = $stream AND sequence NOT IN
                    (SELECT sequence FROM checkpoints WHERE stream = $stream ORDER BY sequence DESC LIMIT $keep)
                """;
            prune.Parameters.AddWithValue("$stream", _options.StreamName);
            prune.Parameters.AddWithValue("$keep", _options.RetainCount);
            await prune.ExecuteNonQueryAsync(CancellationToken.None).ConfigureAwait(false);
        }

        return true;
    }

    private async Task<long?> NewestValidPositionAsync(SqliteConnection connection, SqliteTransaction transaction, CancellationToken cancellationToken)
    {
        using SqliteCommand select = SelectNewestFirst(connection, transaction);
        using SqliteDataReader reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
        {
            if (TryReadRow(reader, out long position, out _, out _))
            {
                return position;
            }
        }

        return null;
    }

    private SqliteCommand SelectNewestFirst(SqliteConnection connection, SqliteTransaction? transaction)
    {
        SqliteCommand select = connection.CreateCommand();
        select.Transaction = transaction;
        select.CommandText =
            "SELECT sequence, input_position, snapshot_length, snapshot_sha256, snapshot FROM checkpoints WHERE stream = $stream ORDER BY sequence DESC";
        select.Parameters.AddWithValue("$stream", _options.StreamName);
        return select;
    }

    private string Location(long sequence) => string.Create(CultureInfo.InvariantCulture, $"{_locationPrefix}#{sequence}");

    private bool TryReadRow(SqliteDataReader reader, out long position, [System.Diagnostics.CodeAnalysis.NotNullWhen(true)] out byte[]? snapshot, [System.Diagnostics.CodeAnalysis.NotNullWhen(false)] out string? problem)
    {
        position = 0;
        snapshot = null;
        problem = null;
        if (reader.GetFieldType(1) != typeof(long) || reader.GetFieldType(2) != typeof(long)
            || reader.GetFieldType(3) != typeof(byte[]) || reader.GetFieldType(4) != typeof(byte[]))
        {
            problem = "A column holds a value of the wrong type.";
            return false;
        }

        position = reader.GetInt64(1);
        long declared = reader.GetInt64(2);
        long stored = reader.GetBytes(4, 0, null, 0, 0);
        if (position < 0)
        {
            problem = string.Create(CultureInfo.InvariantCulture, $"The input position {position} is negative.");
            return false;
        }

        if (stored != declared)
        {
            problem = string.Create(CultureInfo.InvariantCulture, $"The snapshot is {stored} bytes but its row declares {declared}.");
            return false;
        }

        if (stored > _options.MaxSnapshotLength)
        {
            problem = string.Create(CultureInfo.InvariantCulture, $"The snapshot is {stored} bytes, more than the limit of {_options.MaxSnapshotLength} bytes.");
            return false;
        }

        byte[] bytes = reader.GetFieldValue<byte[]>(4);
        byte[] expected = reader.GetFieldValue<byte[]>(3);
        if (!SHA256.HashData(bytes).AsSpan().SequenceEqual(expected))
        {
            problem = "The snapshot's SHA-256 does not match the one stored with it.";
            return false;
        }

        snapshot = bytes;
        return true;
    }
}
