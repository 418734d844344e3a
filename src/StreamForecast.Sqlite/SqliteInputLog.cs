using System.Buffers.Binary;
using System.Collections.Concurrent;
using System.Globalization;
using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using Microsoft.Data.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <summary>
/// A durable input log (<see cref="IInputLog"/>) in a StreamForecast SQLite file, beside the checkpoints of
/// <see cref="SqliteCheckpointStore"/>: appends committed with a synchronous commit, concurrent appends committed
/// together (group commit), positions kept per named stream, truncation behind checkpoints.
/// </summary>
/// <remarks>
/// <para><b>Group commit.</b> Every append is queued; whoever holds the file's writer gate commits everything queued at
/// that moment (up to 1,024 appends) in one transaction, so the appends that arrive while a commit is syncing share the
/// next commit and its disk syncs. No timer delays a lone append. Each caller's task completes when the transaction
/// holding its records has committed, with the position of its first record.</para>
/// <para><b>Durability.</b> The file keeps SQLite's rollback journal with <c>synchronous=FULL</c> (as the checkpoint
/// store does): a committed append survives a crash or power failure, an interrupted one is rolled back when the file is
/// next opened, and a batch is stored whole or not at all.</para>
/// <para><b>Rows.</b> Table <c>input_log</c>: one row per append (<c>stream</c>, <c>first_position</c>,
/// <c>record_count</c>, <c>payload</c>: the records, each as a 4-byte little-endian length and its bytes,
/// <c>payload_sha256</c>), unique on (<c>stream</c>, <c>first_position</c>); table <c>input_log_streams</c>: each
/// stream's start and end position. The tables are created the first time a log opens the file (a file created by a
/// log also gets the checkpoint schema, so a checkpoint store can share it); checkpoint stores ignore them, so the file's
/// schema version (<see cref="SqliteCheckpointStore.SchemaVersion"/>) is unchanged. Reading checks every row's length
/// framing, record count, position and SHA-256, and throws <see cref="InvalidDataException"/> on a damaged row rather
/// than skip it: a skipped record would be an input silently lost.</para>
/// <para><b>Sharing a file.</b> Logs and checkpoint stores on one path in one process share one writer gate; other
/// processes meet on the file's lock (each commit is a <c>BEGIN IMMEDIATE</c> transaction, waiting up to 30 seconds
/// for another writer). Two logs with the same stream name share that stream's positions. Keep the file on a local disk.</para>
/// <para><b>Connections.</b> Appends and truncations run on one connection the log keeps open until
/// <see cref="DisposeAsync"/>; each read opens its own and reads 64 rows at a time, so a long replay does not hold the
/// file's read lock between chunks.</para>
/// <para><b>Thread safety.</b> Thread-safe: every member may be called concurrently. After <see cref="DisposeAsync"/>,
/// appends and truncations throw <see cref="ObjectDisposedException"/>.</para>
/// </remarks>
public sealed partial class SqliteInputLog : IInputLog
{
    private const int MaxAppendsPerCommit = 1_024;
    private const int ReadChunkRows = 64;

    private readonly SqliteFile _file;
    private readonly SqliteInputLogOptions _options;
    private readonly ConcurrentQueue<PendingAppend> _pending = new();
    private readonly SemaphoreSlim _gate;
    private SqliteConnection? _writer;
    private volatile bool _tablesReady;
    private int _disposed;
    private long _commits;

    /// <summary>Creates a log over a database file, which is created (with its directory and schema) when first used if missing.</summary>
    /// <param name="databasePath">The database file; it may be shared with checkpoint stores and other logs.</param>
    /// <param name="options">Stream name and record limit; <see cref="SqliteInputLogOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentException"><paramref name="databasePath"/> is null, empty or white space.</exception>
    public SqliteInputLog(string databasePath, SqliteInputLogOptions? options = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(databasePath);
        DatabasePath = Path.GetFullPath(databasePath);
        _options = options ?? SqliteInputLogOptions.Default;
        _file = new SqliteFile(DatabasePath);
        _gate = _file.WriterGate;
    }

    /// <summary>The full path of the database file.</summary>
    public string DatabasePath { get; }

    /// <summary>The log's settings.</summary>
    public SqliteInputLogOptions Options => _options;

    /// <summary>How many append transactions this instance has committed (for tests of the group commit).</summary>
    internal long CommitCount => Interlocked.Read(ref _commits);

    /// <summary>Appends records durably at consecutive positions, sharing a transaction with concurrent appends.</summary>
    /// <param name="records">The records; at least one, each 1 to <see cref="SqliteInputLogOptions.MaxRecordLength"/> bytes. Copied before the call returns its task.</param>
    /// <param name="cancellationToken">Checked before the records are queued; a queued append is committed regardless.</param>
    /// <returns>The position of the first record, once the transaction holding them has committed.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="records"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="records"/> is empty or holds a record that is empty or too long.</exception>
    /// <exception cref="ObjectDisposedException">The log has been disposed.</exception>
    /// <exception cref="InvalidDataException">The file is not a StreamForecast database this version can use.</exception>
    /// <exception cref="SqliteException">SQLite failed (disk full, file locked by another process for more than 30 seconds); nothing of the commit was stored.</exception>
    /// <remarks>
    /// Cost: one copy and one SHA-256 of the records, then a share of one transaction (one row insert per append, one
    /// update, one synchronous commit). Allocates the framed copy and a small pending entry per call.
    /// </remarks>
    public async ValueTask<long> AppendAsync(IReadOnlyList<ReadOnlyMemory<byte>> records, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(records);
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        PendingAppend pending = Frame(records);
        cancellationToken.ThrowIfCancellationRequested();
        _pending.Enqueue(pending);

        // The first caller through the gate commits everything queued, its followers' appends included; a follower
        // that gets the gate afterwards finds its append done and leaves at once.
        await _gate.WaitAsync(CancellationToken.None).ConfigureAwait(false);
        try
        {
            while (!pending.Done.Task.IsCompleted)
            {
                await CommitQueuedAsync().ConfigureAwait(false);
            }
        }
        finally
        {
            _gate.Release();
        }

        return await pending.Done.Task.ConfigureAwait(false);
    }

    /// <summary>Reads the records at and after <paramref name="fromPosition"/>, 64 stored appends at a time.</summary>
    /// <param name="fromPosition">The first position to read, between the log's start and end.</param>
    /// <param name="cancellationToken">Ends the enumeration.</param>
    /// <returns>The records, consecutive from <paramref name="fromPosition"/>; the payloads are slices of buffers the enumeration does not reuse.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="fromPosition"/> is negative (at the call), or before the start or after the end (when enumerated).</exception>
    /// <exception cref="InvalidDataException">A stored row is damaged (framing, count, position or SHA-256), or the records being read were truncated meanwhile.</exception>
    public IAsyncEnumerable<InputLogRecord> ReadAsync(long fromPosition, CancellationToken cancellationToken = default)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(fromPosition);
        return ReadCoreAsync(fromPosition, cancellationToken);
    }

    /// <summary>Deletes the stored appends whose records all lie before <paramref name="beforePosition"/> and moves the start there, in one transaction.</summary>
    /// <param name="beforePosition">The new start, 0 to the log's end.</param>
    /// <param name="cancellationToken">Cancels the truncation before it commits.</param>
    /// <returns>A task that completes once the new start is committed.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="beforePosition"/> is negative or after the log's end.</exception>
    /// <exception cref="ObjectDisposedException">The log has been disposed.</exception>
    /// <remarks>An append straddling the new start stays stored (its earlier records are no longer read). Waits for the file's writer gate.</remarks>
    public async ValueTask TruncateAsync(long beforePosition, CancellationToken cancellationToken = default)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(beforePosition);
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        await _gate.WaitAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
            SqliteConnection connection = await WriterAsync(cancellationToken).ConfigureAwait(false);
            using SqliteTransaction transaction = connection.BeginTransaction(deferred: false);
            InputLogRange range = ReadRange(connection, transaction);
            if (beforePosition > range.End)
            {
                throw new ArgumentOutOfRangeException(
                    nameof(beforePosition),
                    beforePosition,
                    string.Create(CultureInfo.InvariantCulture, $"The log ends at position {range.End}; it cannot be truncated beyond its end."));
            }

            if (beforePosition <= range.Start)
            {
                return;
            }

            using (SqliteCommand delete = connection.CreateCommand())
            {
                delete.Transaction = transaction;
                delete.CommandText = "DELETE FROM input_log WHERE stream = $stream AND first_position < $before AND first_position + record_count <= $before";
                delete.Parameters.AddWithValue("$stream", _options.StreamName);
                delete.Parameters.AddWithValue("$before", beforePosition);
                delete.ExecuteNonQuery();
            }

            WriteRange(connection, transaction, new InputLogRange(beforePosition, range.End));
            cancellationToken.ThrowIfCancellationRequested();
            transaction.Commit();
        }
        finally
        {
            _gate.Release();
        }
    }

    /// <summary>Reads the stream's start and end positions.</summary>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The range; (0, 0) for a stream never appended to.</returns>
    /// <exception cref="InvalidDataException">The file is not a StreamForecast database this version can use.</exception>
    public async ValueTask<InputLogRange> GetRangeAsync(CancellationToken cancellationToken = default)
    {
        await EnsureTablesAsync(cancellationToken).ConfigureAwait(false);
        using SqliteConnection connection = await _file.OpenAsync(cancellationToken).ConfigureAwait(false);
        return ReadRange(connection, transaction: null);
    }

    /// <summary>Ends the log: waits for a commit in progress, then closes the writing connection. The file is not touched. Idempotent.</summary>
    /// <returns>A task that completes when the connection is closed.</returns>
    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        await _gate.WaitAsync(CancellationToken.None).ConfigureAwait(false);
        try
        {
            if (_writer is not null)
            {
                await _writer.DisposeAsync().ConfigureAwait(false);
                _writer = null;
            }
        }
        finally
        {
            _gate.Release();
        }
    }

    private PendingAppend Frame(IReadOnlyList<ReadOnlyMemory<byte>> records)
    {
        int count = records.Count;
        if (count == 0)
        {
            throw new ArgumentException("An append needs at least one record.", nameof(records));
        }

        long total = 0;
        for (int i = 0; i < count; i++)
        {
            int length = records[i].Length;
            if (length == 0 || length > _options.MaxRecordLength)
            {
                throw new ArgumentException(
                    string.Create(CultureInfo.InvariantCulture, $"Record {i} is {length} bytes; a record holds 1 to {_options.MaxRecordLength} bytes (SqliteInputLogOptions.MaxRecordLength). Nothing was appended."),
                    nameof(records));
            }

            total += 4 + length;
        }

        if (total > Array.MaxLength)
        {
            throw new ArgumentException("The records are too large for one append; split them. Nothing was appended.", nameof(records));
        }

        byte[] payload = new byte[total];
        int at = 0;
        for (int i = 0; i < count; i++)
        {
            ReadOnlySpan<byte> record = records[i].Span;
            BinaryPrimitives.WriteInt32LittleEndian(payload.AsSpan(at), record.Length);
            record.CopyTo(payload.AsSpan(at + 4));
            at += 4 + record.Length;
        }

        return new PendingAppend(payload, SHA256.HashData(payload), count);
    }

    // Runs under the writer gate. Commits up to MaxAppendsPerCommit queued appends in one transaction and completes their
    // tasks; a failure fails exactly those appends (the transaction rolled back, nothing of them stored).
    private async Task CommitQueuedAsync()
    {
        var group = new List<PendingAppend>(Math.Min(_pending.Count, MaxAppendsPerCommit));
        while (group.Count < MaxAppendsPerCommit && _pending.TryDequeue(out PendingAppend? next))
        {
            group.Add(next);
        }

        if (group.Count == 0)
        {
            return;
        }

        var positions = new long[group.Count];
        try
        {
            ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
            SqliteConnection connection = await WriterAsync(CancellationToken.None).ConfigureAwait(false);
            using SqliteTransaction transaction = connection.BeginTransaction(deferred: false);
            InputLogRange range = ReadRange(connection, transaction);
            long end = range.End;
            using (SqliteCommand insert = connection.CreateCommand())
            {
                insert.Transaction = transaction;
                insert.CommandText =
                    "INSERT INTO input_log (stream, first_position, record_count, payload, payload_sha256) VALUES ($stream, $first, $count, $payload, $hash)";
                SqliteParameter first = insert.Parameters.Add("$first", SqliteType.Integer);
                SqliteParameter count = insert.Parameters.Add("$count", SqliteType.Integer);
                SqliteParameter payload = insert.Parameters.Add("$payload", SqliteType.Blob);
                SqliteParameter hash = insert.Parameters.Add("$hash", SqliteType.Blob);
                insert.Parameters.AddWithValue("$stream", _options.StreamName);
                for (int i = 0; i < group.Count; i++)
                {
                    PendingAppend p = group[i];
                    positions[i] = end;
                    first.Value = end;
                    count.Value = p.Count;
                    payload.Value = p.Payload;
                    hash.Value = p.Hash;
                    insert.ExecuteNonQuery();
                    end += p.Count;
                }
            }

            WriteRange(connection, transaction, new InputLogRange(range.Start, end));
            transaction.Commit();
            Interlocked.Increment(ref _commits);
        }
        catch (Exception ex)
        {
            if (ex is SqliteException && _writer is not null)
            {
                // The connection may be unusable (I/O error): open a fresh one for the next commit.
                await _writer.DisposeAsync().ConfigureAwait(false);
                _writer = null;
            }

            foreach (PendingAppend p in group)
            {
                p.Done.TrySetException(ex);
            }

            return;
        }

        for (int i = 0; i < group.Count; i++)
        {
            group[i].Done.TrySetResult(positions[i]);
        }
    }

    private async Task<SqliteConnection> WriterAsync(CancellationToken cancellationToken)
    {
        if (_writer is null)
        {
            SqliteConnection connection = await _file.OpenAsync(cancellationToken).ConfigureAwait(false);
            try
            {
                CreateTables(connection);
            }
            catch
            {
                await connection.DisposeAsync().ConfigureAwait(false);
                throw;
            }

            _writer = connection;
        }

        return _writer;
    }

    private string Describe() => _options.StreamName.Length == 0 ? DatabasePath : $"{DatabasePath}[{_options.StreamName}]";

    private sealed class PendingAppend(byte[] payload, byte[] hash, int count)
    {
        public byte[] Payload { get; } = payload;

        public byte[] Hash { get; } = hash;

        public int Count { get; } = count;

        public TaskCompletionSource<long> Done { get; } = new(TaskCreationOptions.RunContinuationsAsynchronously);
    }

    private readonly record struct StoredAppend(long FirstPosition, long Count, byte[] Payload, byte[] Hash);
}
