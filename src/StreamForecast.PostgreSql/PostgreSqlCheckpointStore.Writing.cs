using System.Globalization;
using System.Security.Cryptography;
using Npgsql;
using NpgsqlTypes;

namespace StreamForecast.PostgreSql;

/// <content>The statements of a save, written by a group's transaction (<see cref="PostgreSqlCommitQueue"/>), and the reading of one row.</content>
public sealed partial class PostgreSqlCheckpointStore
{
    /// <summary>The number of statements <see cref="AddLockCommands"/> adds.</summary>
    internal const int LockCommandCount = 2;

    /// <summary>The number of columns <see cref="CheckedRowCommand"/> returns.</summary>
    internal const int CheckedRowColumnCount = 5;

    /// <summary>The stream this store writes.</summary>
    internal StreamKey Key => new(_schema, _options.StreamName);

    /// <summary>Adds the statements that lock a stream's row in <c>streams</c>, inserting it if missing.</summary>
    internal static void AddLockCommands(NpgsqlBatch batch, StreamKey stream)
    {
        batch.BatchCommands.Add(Command($"INSERT INTO {stream.Schema}.streams (name) VALUES ($1) ON CONFLICT (name) DO NOTHING", Text(stream.Stream)));
        batch.BatchCommands.Add(Command($"SELECT 1 FROM {stream.Schema}.streams WHERE name = $1 FOR UPDATE", Text(stream.Stream)));
    }

    /// <summary>Adds a save's insert and the pruning of its stream beyond the retention count (run after the insert).</summary>
    internal void AddWriteCommands(NpgsqlBatch batch, PendingSave save)
    {
        batch.BatchCommands.Add(Command(
            $"INSERT INTO {_schema}.checkpoints (stream, input_position, snapshot_length, snapshot_sha256, snapshot) VALUES ($1, $2, $3, $4, $5)",
            Text(_options.StreamName),
            new NpgsqlParameter<long> { TypedValue = save.InputPosition },
            new NpgsqlParameter<long> { TypedValue = save.Snapshot.Length },
            new NpgsqlParameter<byte[]> { TypedValue = save.Hash, NpgsqlDbType = NpgsqlDbType.Bytea },
            new NpgsqlParameter<ReadOnlyMemory<byte>> { TypedValue = save.Snapshot, NpgsqlDbType = NpgsqlDbType.Bytea }));
        batch.BatchCommands.Add(Command(
            $"""
            DELETE FROM {_schema}.checkpoints WHERE stream = $1 AND sequence <
                (SELECT sequence FROM {_schema}.checkpoints WHERE stream = $1 ORDER BY sequence DESC OFFSET $2 LIMIT 1)
            """,
            Text(_options.StreamName),
            new NpgsqlParameter<int> { TypedValue = _options.RetainCount - 1 }));
    }

    /// <summary>The statement reading the stream's newest row with a sequence below <paramref name="before"/>; its bytes only when within the size limit.</summary>
    internal NpgsqlBatchCommand OlderRowCommand(long before) => Command(
        $"""
        SELECT sequence, input_position, snapshot_length, snapshot_sha256, octet_length(snapshot),
               CASE WHEN octet_length(snapshot) <= $3 THEN snapshot END
        FROM {_schema}.checkpoints WHERE stream = $1 AND sequence < $2 ORDER BY sequence DESC LIMIT 1
        """,
        Text(_options.StreamName),
        new NpgsqlParameter<long> { TypedValue = before },
        new NpgsqlParameter<long> { TypedValue = _options.MaxSnapshotLength });

    /// <summary>
    /// The statement checking the stream's newest row with a sequence below <paramref name="before"/> without sending
    /// its bytes: the server compares the length and, within the size limit, the SHA-256 (PostgreSQL's <c>sha256</c>)
    /// with the ones stored beside the snapshot, the same checks <see cref="ReadRowAsync"/> makes on the bytes.
    /// </summary>
    internal NpgsqlBatchCommand CheckedRowCommand(long before) => Command(
        $"""
        SELECT sequence, input_position, snapshot_length, octet_length(snapshot),
               CASE WHEN octet_length(snapshot) <= $3 THEN sha256(snapshot) = snapshot_sha256 END
        FROM {_schema}.checkpoints WHERE stream = $1 AND sequence < $2 ORDER BY sequence DESC LIMIT 1
        """,
        Text(_options.StreamName),
        new NpgsqlParameter<long> { TypedValue = before },
        new NpgsqlParameter<long> { TypedValue = _options.MaxSnapshotLength });

    /// <summary>
    /// Reads the outcome of the reader's current result (of <see cref="CheckedRowCommand"/>): the row's position and
    /// its problem, if any, with the same messages as <see cref="ReadRowAsync"/>, and no bytes; null when it has none.
    /// </summary>
    internal static async Task<StoredRow?> ReadCheckedRowAsync(NpgsqlDataReader reader, long maxSnapshotLength, CancellationToken cancellationToken)
    {
        if (!await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
        {
            return null;
        }

        long sequence = reader.GetInt64(0);
        long position = reader.GetInt64(1);
        long declared = reader.GetInt64(2);
        long stored = reader.GetInt32(3);
        if (position < 0)
        {
            return new StoredRow(sequence, position, null, string.Create(CultureInfo.InvariantCulture, $"The input position {position} is negative."));
        }

        if (stored != declared)
        {
            return new StoredRow(sequence, position, null, string.Create(CultureInfo.InvariantCulture, $"The snapshot is {stored} bytes but its row declares {declared}."));
        }

        if (stored > maxSnapshotLength || reader.IsDBNull(4))
        {
            return new StoredRow(sequence, position, null, string.Create(CultureInfo.InvariantCulture, $"The snapshot is {stored} bytes, more than the limit of {maxSnapshotLength} bytes."));
        }

        return reader.GetBoolean(4)
            ? new StoredRow(sequence, position, null, null)
            : new StoredRow(sequence, position, null, "The snapshot's SHA-256 does not match the one stored with it.");
    }

    /// <summary>Reads and checks the row of the reader's current result (of <see cref="OlderRowCommand"/>); null when it has none.</summary>
    internal async Task<StoredRow?> ReadRowAsync(NpgsqlDataReader reader, CancellationToken cancellationToken)
    {
        if (!await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
        {
            return null;
        }

        long sequence = reader.GetInt64(0);
        long position = reader.GetInt64(1);
        long declared = reader.GetInt64(2);
        byte[] storedHash = reader.GetFieldValue<byte[]>(3);
        long stored = reader.GetInt32(4);
        if (position < 0)
        {
            return new StoredRow(sequence, position, null, string.Create(CultureInfo.InvariantCulture, $"The input position {position} is negative."));
        }

        if (stored != declared)
        {
            return new StoredRow(sequence, position, null, string.Create(CultureInfo.InvariantCulture, $"The snapshot is {stored} bytes but its row declares {declared}."));
        }

        if (stored > _options.MaxSnapshotLength || reader.IsDBNull(5))
        {
            return new StoredRow(sequence, position, null, string.Create(CultureInfo.InvariantCulture, $"The snapshot is {stored} bytes, more than the limit of {_options.MaxSnapshotLength} bytes."));
        }

        byte[] bytes = reader.GetFieldValue<byte[]>(5);
        if (!SHA256.HashData(bytes).AsSpan().SequenceEqual(storedHash))
        {
            return new StoredRow(sequence, position, null, "The snapshot's SHA-256 does not match the one stored with it.");
        }

        return new StoredRow(sequence, position, bytes, null);
    }
}
