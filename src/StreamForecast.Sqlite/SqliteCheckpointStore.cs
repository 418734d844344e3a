using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Microsoft.Data.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <summary>
/// Keeps engine checkpoints in one SQLite database file: each save is one row written in a transaction together with
/// the deletion of rows beyond the retention count, so a checkpoint is either wholly stored or absent.
/// </summary>
/// <remarks>
/// <para><b>File.</b> The file is created, with its schema, the first time the store touches it. The schema is
/// versioned with SQLite's <c>user_version</c> header field (version <see cref="SchemaVersion"/>) and the file is
/// marked with an <c>application_id</c> (<see cref="ApplicationId"/>); a file of a newer schema version, a file
/// belonging to another application, or a non-empty database without the mark is refused with an
/// <see cref="InvalidDataException"/> rather than changed.</para>
/// <para><b>Rows.</b> Table <c>checkpoints</c>: <c>sequence</c> (1, 2, 3… in save order), <c>input_position</c>,
/// <c>snapshot_length</c>, <c>snapshot_sha256</c> and <c>snapshot</c>. The length and SHA-256 are checked on load,
/// so a damaged row is detected and skipped: loading falls back to the next older checkpoint and reports the skipped
/// one in <see cref="Checkpoint.Rejected"/>, whose locations read <c>path#sequence</c>.</para>
/// <para><b>Durability.</b> SQLite's default rollback journal with <c>synchronous=FULL</c>: a committed save
/// survives a crash or power failure; an interrupted one is rolled back the next time the file is opened.</para>
/// <para><b>Thread safety.</b> Thread-safe within one instance: saves run one at a time, loads run alongside them,
/// each on its own connection. Use one instance (one process) per file. Dispose the store when done with it (it holds
/// a semaphore); saving after that throws <see cref="ObjectDisposedException"/>.</para>
/// </remarks>
public sealed class SqliteCheckpointStore : ICheckpointStore, IDisposable
{
    /// <summary>The schema version this store writes and reads.</summary>
    public const int SchemaVersion = 1;

    /// <summary>The value of SQLite's <c>application_id</c> header field in a checkpoint file (the ASCII bytes "SFcp").</summary>
    public const int ApplicationId = 0x53466370;

    private readonly SqliteCheckpointStoreOptions _options;
    private readonly SemaphoreSlim _gate = new(1, 1);
    private readonly string _connectionString;
    private volatile bool _schemaReady;

    /// <summary>Creates a store over a database file, which is created (with its directory) when first used if missing.</summary>
    /// <param name="databasePath">The database file; used only by this store.</param>
    /// <param name="options">Retention and size limit; <see cref="SqliteCheckpointStoreOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentException"><paramref name="databasePath"/> is null, empty or white space.</exception>
    public SqliteCheckpointStore(string databasePath, SqliteCheckpointStoreOptions? options = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(databasePath);
        DatabasePath = Path.GetFullPath(databasePath);
        _options = options ?? SqliteCheckpointStoreOptions.Default;

        // No pooling: a checkpoint is written every few minutes, and an unpooled connection releases the file when closed.
        _connectionString = new SqliteConnectionStringBuilder
        {
            DataSource = DatabasePath,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Pooling = false,
        }.ToString();
    }

    /// <summary>The full path of the database file.</summary>
    public string DatabasePath { get; }

    /// <summary>The store's settings.</summary>
    public SqliteCheckpointStoreOptions Options => _options;

    /// <summary>
    /// Saves a checkpoint as a new row and deletes all but the newest <see cref="SqliteCheckpointStoreOptions.RetainCount"/>
    /// rows, in one transaction.
    /// </summary>
    /// <param name="snapshot">The snapshot's bytes.</param>
    /// <param name="inputPosition">The input position the snapshot accounts for, ≥ 0.</param>
    /// <param name="cancellationToken">Cancels the save before the commit; the stored checkpoints are then unchanged.</param>
    /// <returns>A task that completes once the transaction has committed.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <exception cref="ArgumentException">The snapshot is empty or longer than <see cref="SqliteCheckpointStoreOptions.MaxSnapshotLength"/>.</exception>
    /// <exception cref="InvalidDataException">The file is not a checkpoint database this version can use.</exception>
    /// <exception cref="SqliteException">SQLite failed (disk full, file locked...); no checkpoint was added.</exception>
    /// <exception cref="ObjectDisposedException">The store has been disposed.</exception>
    /// <remarks>Cost: one SHA-256 over the snapshot, one row insert, one delete, one synchronous commit. Saves are serialised.</remarks>
    public async ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        if (snapshot.IsEmpty || snapshot.Length > _options.MaxSnapshotLength)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"The snapshot is {snapshot.Length} bytes; a checkpoint holds 1 to {_options.MaxSnapshotLength} bytes (SqliteCheckpointStoreOptions.MaxSnapshotLength)."),
                nameof(snapshot));
        }

        byte[] hash = SHA256.HashData(snapshot.Span);
        byte[] bytes = snapshot.ToArray();
        await _gate.WaitAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            using SqliteConnection connection = await OpenAsync(cancellationToken).ConfigureAwait(false);
            using SqliteTransaction transaction = connection.BeginTransaction(deferred: false);
            using (SqliteCommand insert = connection.CreateCommand())
            {
                insert.Transaction = transaction;
                insert.CommandText =
                    "INSERT INTO checkpoints (input_position, snapshot_length, snapshot_sha256, snapshot) VALUES ($position, $length, $hash, $snapshot)";
                insert.Parameters.AddWithValue("$position", inputPosition);
                insert.Parameters.AddWithValue("$length", (long)bytes.Length);
                insert.Parameters.AddWithValue("$hash", hash);
                insert.Parameters.AddWithValue("$snapshot", bytes);
                await insert.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
            }

            using (SqliteCommand prune = connection.CreateCommand())
            {
                prune.Transaction = transaction;
                prune.CommandText = "DELETE FROM checkpoints WHERE sequence NOT IN (SELECT sequence FROM checkpoints ORDER BY sequence DESC LIMIT $keep)";
                prune.Parameters.AddWithValue("$keep", _options.RetainCount);
                await prune.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
            }

            cancellationToken.ThrowIfCancellationRequested();
            await transaction.CommitAsync(CancellationToken.None).ConfigureAwait(false);
        }
        finally
        {
            _gate.Release();
        }
    }

    /// <summary>
    /// Loads the newest checkpoint whose length and SHA-256 match its bytes, falling back to older rows.
    /// </summary>
    /// <param name="cancellationToken">Cancels the load.</param>
    /// <returns>The checkpoint, with any newer rows skipped; null when the database holds no checkpoint (a new file).</returns>
    /// <exception cref="InvalidDataException">
    /// Checkpoints exist but none is usable (the message lists each and why), or the file is not a checkpoint database
    /// this version can use (a newer schema version, another application's file, a damaged file).
    /// </exception>
    /// <remarks>Reads rows newest first and stops at the first valid one; usually reads one snapshot.</remarks>
    public async ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default)
    {
        var rejected = new List<CheckpointRejection>();
        try
        {
            using SqliteConnection connection = await OpenAsync(cancellationToken).ConfigureAwait(false);
            using SqliteCommand select = connection.CreateCommand();
            select.CommandText = "SELECT sequence, input_position, snapshot_length, snapshot_sha256, snapshot FROM checkpoints ORDER BY sequence DESC";
            using SqliteDataReader reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
            {
                long sequence = reader.GetInt64(0);
                string location = string.Create(CultureInfo.InvariantCulture, $"{DatabasePath}#{sequence}");
                if (TryReadRow(reader, out long position, out byte[]? snapshot, out string? problem))
                {
                    return new Checkpoint(snapshot, position, location, rejected);
                }

                rejected.Add(new CheckpointRejection(location, problem));
            }
        }
        catch (SqliteException ex)
        {
            throw new InvalidDataException($"The checkpoint database '{DatabasePath}' could not be read: {ex.Message}", ex);
        }

        if (rejected.Count == 0)
        {
            return null;
        }

        var message = new StringBuilder();
        message.Append(CultureInfo.InvariantCulture, $"None of the {rejected.Count} checkpoints in '{DatabasePath}' is usable:");
        foreach (CheckpointRejection rejection in rejected)
        {
            message.Append(CultureInfo.InvariantCulture, $" {rejection.Location}: {rejection.Reason}");
        }

        throw new InvalidDataException(message.ToString());
    }

    /// <summary>Releases the semaphore that serialises saves. The file is not touched. Idempotent.</summary>
    public void Dispose() => _gate.Dispose();

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

    private async Task<SqliteConnection> OpenAsync(CancellationToken cancellationToken)
    {
        string? directory = Path.GetDirectoryName(DatabasePath);
        if (!string.IsNullOrEmpty(directory))
        {
            Directory.CreateDirectory(directory);
        }

        var connection = new SqliteConnection(_connectionString);
        try
        {
            await connection.OpenAsync(cancellationToken).ConfigureAwait(false);
            if (!_schemaReady)
            {
                EnsureSchema(connection);
                _schemaReady = true;
            }

            return connection;
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    private void EnsureSchema(SqliteConnection connection)
    {
        using SqliteTransaction transaction = connection.BeginTransaction(deferred: false);
        long version = Scalar(connection, transaction, "PRAGMA user_version");
        long application = Scalar(connection, transaction, "PRAGMA application_id");
        if (version == 0 && application == 0)
        {
            if (Scalar(connection, transaction, "SELECT count(*) FROM sqlite_schema") != 0)
            {
                throw new InvalidDataException($"'{DatabasePath}' is an SQLite database that already holds other tables; checkpoints need a file of their own.");
            }

            using SqliteCommand create = connection.CreateCommand();
            create.Transaction = transaction;
            create.CommandText = string.Create(CultureInfo.InvariantCulture, $"""
                CREATE TABLE checkpoints (
                    sequence INTEGER PRIMARY KEY AUTOINCREMENT,
                    input_position INTEGER NOT NULL,
                    snapshot_length INTEGER NOT NULL,
                    snapshot_sha256 BLOB NOT NULL,
                    snapshot BLOB NOT NULL);
                PRAGMA application_id = {ApplicationId};
                PRAGMA user_version = {SchemaVersion};
                """);
            create.ExecuteNonQuery();
            transaction.Commit();
            return;
        }

        if (application != ApplicationId)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"'{DatabasePath}' is not a StreamForecast checkpoint database (its application_id is {application}, a checkpoint file has {ApplicationId})."));
        }

        if (version > SchemaVersion)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"The checkpoint database '{DatabasePath}' has schema version {version}, newer than version {SchemaVersion} that this StreamForecast.Sqlite reads. Use the newer StreamForecast.Sqlite that wrote it, or another file."));
        }

        if (version != SchemaVersion)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"The checkpoint database '{DatabasePath}' has schema version {version}, which this StreamForecast.Sqlite does not know (it reads version {SchemaVersion})."));
        }

        transaction.Commit();
    }

    private static long Scalar(SqliteConnection connection, SqliteTransaction transaction, string sql)
    {
        using SqliteCommand command = connection.CreateCommand();
        command.Transaction = transaction;
        command.CommandText = sql;
        return Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture);
    }
}
