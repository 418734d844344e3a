using System.Data;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Npgsql;
using NpgsqlTypes;
using StreamForecast.Streaming;

namespace StreamForecast.PostgreSql;

/// <content>Connections, the schema check and creation, and small statement helpers.</content>
public sealed partial class PostgreSqlCheckpointStore
{
    private async Task<NpgsqlConnection> OpenAsync(CancellationToken cancellationToken)
    {
        NpgsqlConnection connection = await _dataSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            if (!_schemaReady)
            {
                await EnsureSchemaAsync(connection, cancellationToken).ConfigureAwait(false);
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

    private async Task EnsureSchemaAsync(NpgsqlConnection connection, CancellationToken cancellationToken)
    {
        // The usual case, one round trip: the schema exists and says what it is.
        try
        {
            await CheckSchemaInfoAsync(connection, transaction: null, cancellationToken).ConfigureAwait(false);
            return;
        }
        catch (PostgresException ex) when (ex.SqlState is PostgresErrorCodes.UndefinedTable or PostgresErrorCodes.InvalidSchemaName)
        {
            // Not created yet (or not a checkpoint schema): look again under the lock.
        }

        NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.ReadCommitted, cancellationToken).ConfigureAwait(false);
        await using (transaction.ConfigureAwait(false))
        {
            await ScalarAsync(connection, transaction, $"SELECT pg_advisory_xact_lock({SchemaLockKey})", cancellationToken).ConfigureAwait(false);
            bool schemaExists = (bool)(await ScalarAsync(connection, transaction, "SELECT EXISTS (SELECT 1 FROM pg_namespace WHERE nspname = $1)", cancellationToken, _schema).ConfigureAwait(false))!;
            if (schemaExists)
            {
                bool infoExists = (bool)(await ScalarAsync(connection, transaction, "SELECT to_regclass($1) IS NOT NULL", cancellationToken, _schema + ".schema_info").ConfigureAwait(false))!;
                if (infoExists)
                {
                    // Another store created it meanwhile.
                    await CheckSchemaInfoAsync(connection, transaction, cancellationToken).ConfigureAwait(false);
                    return;
                }

                long relations = (long)(await ScalarAsync(connection, transaction,
                    "SELECT count(*) FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname = $1", cancellationToken, _schema).ConfigureAwait(false))!;
                if (relations != 0)
                {
                    throw new InvalidDataException(
                        $"The schema '{_schema}' of {_databaseDescription} already holds other tables; checkpoints need a schema of their own (PostgreSqlCheckpointStoreOptions.SchemaName).");
                }
            }
            else
            {
                await ScalarAsync(connection, transaction, $"CREATE SCHEMA {_schema}", cancellationToken).ConfigureAwait(false);
            }

            await ScalarAsync(connection, transaction, string.Create(CultureInfo.InvariantCulture, $"""
                CREATE TABLE {_schema}.schema_info (
                    application text NOT NULL,
                    version integer NOT NULL);
                INSERT INTO {_schema}.schema_info (application, version) VALUES ('{ApplicationName}', {SchemaVersion});
                CREATE TABLE {_schema}.streams (
                    name text COLLATE "C" PRIMARY KEY);
                CREATE TABLE {_schema}.checkpoints (
                    sequence bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
                    stream text COLLATE "C" NOT NULL,
                    input_position bigint NOT NULL,
                    snapshot_length bigint NOT NULL,
                    snapshot_sha256 bytea NOT NULL,
                    snapshot bytea NOT NULL);
                CREATE INDEX checkpoints_stream_sequence ON {_schema}.checkpoints (stream, sequence);
                """), cancellationToken).ConfigureAwait(false);

            // Snapshots over about 2 KB are compressed by the server. Its default method (pglz) took a fifth to a
            // quarter of the Orleans cluster benchmark's time on PostgreSQL; lz4 (PostgreSQL 14 and later, when the
            // server was built with it) kept nearly as much room at a fraction of the cost. A storage setting only:
            // the rows read the same, so the schema version stays.
            bool lz4 = await ScalarAsync(connection, transaction,
                "SELECT EXISTS (SELECT 1 FROM pg_settings WHERE name = 'default_toast_compression' AND 'lz4' = ANY (enumvals))", cancellationToken).ConfigureAwait(false) is true;
            if (lz4)
            {
                await ScalarAsync(connection, transaction, $"ALTER TABLE {_schema}.checkpoints ALTER COLUMN snapshot SET COMPRESSION lz4", cancellationToken).ConfigureAwait(false);
            }

            await transaction.CommitAsync(cancellationToken).ConfigureAwait(false);
        }
    }

    private async Task CheckSchemaInfoAsync(NpgsqlConnection connection, NpgsqlTransaction? transaction, CancellationToken cancellationToken)
    {
        var select = new NpgsqlCommand($"SELECT application, version FROM {_schema}.schema_info", connection, transaction);
        await using (select.ConfigureAwait(false))
        {
            NpgsqlDataReader reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                string? application = null;
                int version = 0;
                int rows = 0;
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    rows++;
                    application = reader.IsDBNull(0) ? null : reader.GetString(0);
                    version = reader.IsDBNull(1) ? 0 : reader.GetInt32(1);
                }

                if (rows != 1 || application != ApplicationName)
                {
                    throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                        $"The schema '{_schema}' of {_databaseDescription} is not a StreamForecast checkpoint schema (its schema_info table holds {rows} rows, application '{application}'; a checkpoint schema holds one row, application '{ApplicationName}')."));
                }

                if (version > SchemaVersion)
                {
                    throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                        $"The checkpoint schema '{_schema}' of {_databaseDescription} has schema version {version}, newer than version {SchemaVersion} that this StreamForecast.PostgreSql reads. Use the newer StreamForecast.PostgreSql that wrote it, or another schema."));
                }

                if (version != SchemaVersion)
                {
                    throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                        $"The checkpoint schema '{_schema}' of {_databaseDescription} has schema version {version}, which this StreamForecast.PostgreSql does not know (it reads version {SchemaVersion})."));
                }
            }
        }
    }

    private static async Task<object?> ScalarAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, string sql, CancellationToken cancellationToken, string? textParameter = null)
    {
        var command = new NpgsqlCommand(sql, connection, transaction);
        await using (command.ConfigureAwait(false))
        {
            if (textParameter is not null)
            {
                command.Parameters.Add(Text(textParameter));
            }

            return await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false);
        }
    }

    internal readonly record struct StoredRow(long Sequence, long Position, byte[]? Snapshot, string? Problem);
}
