using System.Buffers.Binary;
using System.Collections.Concurrent;
using System.Globalization;
using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using Microsoft.Data.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <content>Creating the log's tables on first use.</content>
public sealed partial class SqliteInputLog
{
    private async Task EnsureTablesAsync(CancellationToken cancellationToken)
    {
        if (_tablesReady)
        {
            return;
        }

        await _gate.WaitAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            if (!_tablesReady)
            {
                using SqliteConnection connection = await _file.OpenAsync(cancellationToken).ConfigureAwait(false);
                CreateTables(connection);
            }
        }
        finally
        {
            _gate.Release();
        }
    }

    private void CreateTables(SqliteConnection connection)
    {
        using SqliteTransaction transaction = connection.BeginTransaction(deferred: false);
        SqliteFile.Execute(connection, transaction, """
            CREATE TABLE IF NOT EXISTS input_log (
                sequence INTEGER PRIMARY KEY,
                stream TEXT NOT NULL,
                first_position INTEGER NOT NULL,
                record_count INTEGER NOT NULL,
                payload BLOB NOT NULL,
                payload_sha256 BLOB NOT NULL);
            CREATE UNIQUE INDEX IF NOT EXISTS input_log_stream_position ON input_log (stream, first_position);
            CREATE TABLE IF NOT EXISTS input_log_streams (
                stream TEXT PRIMARY KEY,
                start_position INTEGER NOT NULL,
                end_position INTEGER NOT NULL);
            """);
        transaction.Commit();
        _tablesReady = true;
    }
}
