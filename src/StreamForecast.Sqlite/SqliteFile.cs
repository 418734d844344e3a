using System.Collections.Concurrent;
using System.Globalization;
using Microsoft.Data.Sqlite;

namespace StreamForecast.Sqlite;

/// <summary>
/// One StreamForecast SQLite file as every store and log of this package sees it: the connection settings, the
/// in-process writer gate shared by everything that writes the file, and the file's schema check (version, mark,
/// the upgrade of version 1). Checkpoint stores (<see cref="SqliteCheckpointStore"/>) and input logs
/// (<see cref="SqliteInputLog"/>) on the same path share one gate, so their writers queue in order instead of meeting
/// on SQLite's file lock.
/// </summary>
/// <remarks>Thread-safe. Cheap to create: the gate is looked up by path.</remarks>
internal sealed class SqliteFile
{
    /// <summary>How long a statement waits for another connection's lock before failing with SQLITE_BUSY.</summary>
    public const int LockWaitSeconds = 30;

    // SQLite result codes (https://www.sqlite.org/rescode.html) for a lock held by another connection.
    private const int SqliteBusy = 5;
    private const int SqliteLocked = 6;

    // One writer gate per database file and process, shared by every store and log on that file: writers of one process
    // queue here, in order, instead of meeting on SQLite's file lock, whose busy handler sleeps (1 ms, then longer)
    // between retries. Other processes still meet on the file lock. Never disposed: a file's gate lives as long as the process.
    private static readonly ConcurrentDictionary<string, SemaphoreSlim> s_fileGates = new(StringComparer.Ordinal);

    // One commit queue per database file and process, for the same reason: checkpoint saves of every store on the file
    // that wait for the gate are written together, in one transaction, by the next writer to take it.
    private static readonly ConcurrentDictionary<string, SqliteCommitQueue> s_commitQueues = new(StringComparer.Ordinal);

    private readonly string _connectionString;
    private volatile bool _schemaReady;

    /// <summary>Describes a database file.</summary>
    /// <param name="databasePath">The file's full path.</param>
    public SqliteFile(string databasePath)
    {
        DatabasePath = databasePath;
        WriterGate = s_fileGates.GetOrAdd(databasePath, static _ => new SemaphoreSlim(1, 1));
        Commits = s_commitQueues.GetOrAdd(databasePath, static (_, gate) => new SqliteCommitQueue(gate), WriterGate);

        // No pooling: an unpooled connection releases the file when closed. DefaultTimeout bounds Microsoft.Data.Sqlite's
        // own retries on SQLITE_BUSY, including the implicit BEGIN and COMMIT.
        _connectionString = new SqliteConnectionStringBuilder
        {
            DataSource = DatabasePath,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Pooling = false,
            DefaultTimeout = LockWaitSeconds,
        }.ToString();
    }

    /// <summary>The file's full path.</summary>
    public string DatabasePath { get; }

    /// <summary>The in-process gate every writer of this file takes around its write transaction.</summary>
    public SemaphoreSlim WriterGate { get; }

    /// <summary>The group commit of checkpoint saves to this file (shared by every store on the path in this process).</summary>
    public SqliteCommitQueue Commits { get; }

    /// <summary>Whether an exception is SQLite's "another connection holds the lock" after the busy timeout.</summary>
    public static bool IsLockTimeout(SqliteException ex) => ex.SqliteErrorCode is SqliteBusy or SqliteLocked;

    /// <summary>Opens a connection with the busy timeout set, creating or checking the file's schema on first use.</summary>
    public async Task<SqliteConnection> OpenAsync(CancellationToken cancellationToken)
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

            // SQLite's own busy handler: a statement that meets another connection's lock sleeps in short, growing
            // steps and retries, up to the same limit as Microsoft.Data.Sqlite's retries, instead of failing at once.
            using (SqliteCommand busy = connection.CreateCommand())
            {
                busy.CommandText = string.Create(CultureInfo.InvariantCulture, $"PRAGMA busy_timeout = {LockWaitSeconds * 1000}");
                await busy.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
            }

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

            Execute(connection, transaction, string.Create(CultureInfo.InvariantCulture, $"""
                CREATE TABLE checkpoints (
                    sequence INTEGER PRIMARY KEY AUTOINCREMENT,
                    input_position INTEGER NOT NULL,
                    snapshot_length INTEGER NOT NULL,
                    snapshot_sha256 BLOB NOT NULL,
                    snapshot BLOB NOT NULL,
                    stream TEXT NOT NULL DEFAULT '');
                CREATE INDEX checkpoints_stream_sequence ON checkpoints (stream, sequence);
                PRAGMA application_id = {SqliteCheckpointStore.ApplicationId};
                PRAGMA user_version = {SqliteCheckpointStore.SchemaVersion};
                """));
            transaction.Commit();
            return;
        }

        if (application != SqliteCheckpointStore.ApplicationId)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"'{DatabasePath}' is not a StreamForecast checkpoint database (its application_id is {application}, a checkpoint file has {SqliteCheckpointStore.ApplicationId})."));
        }

        if (version > SqliteCheckpointStore.SchemaVersion)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"The checkpoint database '{DatabasePath}' has schema version {version}, newer than version {SqliteCheckpointStore.SchemaVersion} that this StreamForecast.Sqlite reads. Use the newer StreamForecast.Sqlite that wrote it, or another file."));
        }

        if (version == 1)
        {
            // Version 1 had no streams: its rows become stream "". The column goes last, so an upgraded table has the
            // same columns, in the same order, as one created at version 2. All of it commits or none of it does.
            Execute(connection, transaction, string.Create(CultureInfo.InvariantCulture, $"""
                ALTER TABLE checkpoints ADD COLUMN stream TEXT NOT NULL DEFAULT '';
                CREATE INDEX checkpoints_stream_sequence ON checkpoints (stream, sequence);
                PRAGMA user_version = {SqliteCheckpointStore.SchemaVersion};
                """));
        }
        else if (version != SqliteCheckpointStore.SchemaVersion)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                $"The checkpoint database '{DatabasePath}' has schema version {version}, which this StreamForecast.Sqlite does not know (it reads versions 1 and {SqliteCheckpointStore.SchemaVersion})."));
        }

        transaction.Commit();
    }

    public static void Execute(SqliteConnection connection, SqliteTransaction transaction, string sql)
    {
        using SqliteCommand command = connection.CreateCommand();
        command.Transaction = transaction;
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    public static long Scalar(SqliteConnection connection, SqliteTransaction transaction, string sql)
    {
        using SqliteCommand command = connection.CreateCommand();
        command.Transaction = transaction;
        command.CommandText = sql;
        return Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture);
    }
}
