using System.Buffers.Binary;
using System.Collections.Concurrent;
using System.Globalization;
using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using Microsoft.Data.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <content>Reading appends back in position order, and the stored range.</content>
public sealed partial class SqliteInputLog
{
    private async IAsyncEnumerable<InputLogRecord> ReadCoreAsync(long fromPosition, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        await EnsureTablesAsync(cancellationToken).ConfigureAwait(false);
        using SqliteConnection connection = await _file.OpenAsync(cancellationToken).ConfigureAwait(false);
        InputLogRange range = ReadRange(connection, transaction: null);
        if (fromPosition < range.Start || fromPosition > range.End)
        {
            throw new ArgumentOutOfRangeException(
                nameof(fromPosition),
                fromPosition,
                string.Create(CultureInfo.InvariantCulture, $"The log holds positions {range.Start} to {range.End} (exclusive); records before {range.Start} were truncated."));
        }

        long next = fromPosition;

        // The stored append holding `next` may start before it (a straddling append kept by a truncation).
        List<StoredAppend> chunk = ReadChunk(connection, next, containing: true);
        while (true)
        {
            foreach (StoredAppend row in chunk)
            {
                cancellationToken.ThrowIfCancellationRequested();
                if (row.FirstPosition > next)
                {
                    InputLogRange now = ReadRange(connection, transaction: null);
                    throw new InvalidDataException(now.Start > next
                        ? string.Create(CultureInfo.InvariantCulture, $"The input log '{Describe()}' was truncated to position {now.Start} while position {next} was being read.")
                        : string.Create(CultureInfo.InvariantCulture, $"The input log '{Describe()}' has no record at position {next} (the next stored append starts at {row.FirstPosition}): rows are missing."));
                }

                ReadOnlyMemory<byte>[] records = Unframe(row);
                for (long position = Math.Max(next, row.FirstPosition); position < row.FirstPosition + row.Count; position++)
                {
                    yield return new InputLogRecord(position, records[position - row.FirstPosition]);
                }

                next = row.FirstPosition + row.Count;
            }

            chunk = ReadChunk(connection, next, containing: false);
            if (chunk.Count == 0)
            {
                yield break;
            }
        }
    }

    private List<StoredAppend> ReadChunk(SqliteConnection connection, long next, bool containing)
    {
        using SqliteCommand select = connection.CreateCommand();
        select.CommandText = containing
            ? "SELECT first_position, record_count, payload, payload_sha256 FROM input_log WHERE stream = $stream AND first_position <= $next AND first_position + record_count > $next ORDER BY first_position DESC LIMIT 1"
            : "SELECT first_position, record_count, payload, payload_sha256 FROM input_log WHERE stream = $stream AND first_position >= $next ORDER BY first_position LIMIT $limit";
        select.Parameters.AddWithValue("$stream", _options.StreamName);
        select.Parameters.AddWithValue("$next", next);
        select.Parameters.AddWithValue("$limit", ReadChunkRows);
        var rows = new List<StoredAppend>();
        using SqliteDataReader reader = select.ExecuteReader();
        while (reader.Read())
        {
            long first = reader.GetInt64(0);
            if (reader.GetFieldType(2) != typeof(byte[]) || reader.GetFieldType(3) != typeof(byte[]))
            {
                throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"The input log '{Describe()}' row at position {first} holds a value of the wrong type."));
            }

            rows.Add(new StoredAppend(first, reader.GetInt64(1), reader.GetFieldValue<byte[]>(2), reader.GetFieldValue<byte[]>(3)));
        }

        if (containing && rows.Count == 0)
        {
            // Nothing holds `next`: either the log ends there, or the first row is after it (checked by the caller).
            return ReadChunk(connection, next, containing: false);
        }

        return rows;
    }

    private ReadOnlyMemory<byte>[] Unframe(StoredAppend row)
    {
        string where = string.Create(CultureInfo.InvariantCulture, $"The input log '{Describe()}' append at position {row.FirstPosition}");
        if (!SHA256.HashData(row.Payload).AsSpan().SequenceEqual(row.Hash))
        {
            throw new InvalidDataException(where + " is damaged: its SHA-256 does not match the one stored with it.");
        }

        if (row.Count is < 1 or > int.MaxValue)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"{where} declares {row.Count} records."));
        }

        var records = new ReadOnlyMemory<byte>[row.Count];
        int at = 0;
        for (int i = 0; i < records.Length; i++)
        {
            if (row.Payload.Length - at < 4)
            {
                throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"{where} ends inside record {i} of {row.Count}."));
            }

            int length = BinaryPrimitives.ReadInt32LittleEndian(row.Payload.AsSpan(at));
            if (length < 1 || length > row.Payload.Length - at - 4)
            {
                throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"{where} frames record {i} with an impossible length ({length})."));
            }

            records[i] = row.Payload.AsMemory(at + 4, length);
            at += 4 + length;
        }

        if (at != row.Payload.Length)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"{where} holds {row.Payload.Length - at} bytes after its {row.Count} records."));
        }

        return records;
    }

    private InputLogRange ReadRange(SqliteConnection connection, SqliteTransaction? transaction)
    {
        using SqliteCommand select = connection.CreateCommand();
        select.Transaction = transaction;
        select.CommandText = "SELECT start_position, end_position FROM input_log_streams WHERE stream = $stream";
        select.Parameters.AddWithValue("$stream", _options.StreamName);
        using SqliteDataReader reader = select.ExecuteReader();
        if (!reader.Read())
        {
            return default;
        }

        long start = reader.GetInt64(0), end = reader.GetInt64(1);
        if (start < 0 || end < start)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"The input log '{Describe()}' records an impossible range ({start} to {end})."));
        }

        return new InputLogRange(start, end);
    }

    private void WriteRange(SqliteConnection connection, SqliteTransaction transaction, InputLogRange range)
    {
        using SqliteCommand upsert = connection.CreateCommand();
        upsert.Transaction = transaction;
        upsert.CommandText = """
            INSERT INTO input_log_streams (stream, start_position, end_position) VALUES ($stream, $start, $end)
            ON CONFLICT (stream) DO UPDATE SET start_position = excluded.start_position, end_position = excluded.end_position
            """;
        upsert.Parameters.AddWithValue("$stream", _options.StreamName);
        upsert.Parameters.AddWithValue("$start", range.Start);
        upsert.Parameters.AddWithValue("$end", range.End);
        upsert.ExecuteNonQuery();
    }

    // Runs under the writer gate.
}
