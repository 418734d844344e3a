using System.Data;
using System.Globalization;
using System.Text;
using Npgsql;
using Orleans.Runtime;

namespace StreamForecast.Orleans.PostgreSql;

/// <summary>
/// Orleans' membership table over PostgreSQL. Two tables in a schema of their own: one row per cluster holding the table
/// version and its ETag (a counter that every row change moves), and one row per silo holding the entry and a row ETag (a
/// counter moved by UpdateRow only, so heartbeats leave previously read row ETags valid, as the interface asks).
/// Every change of the table version runs in one transaction: first the version row is moved only if its ETag still
/// matches (so of two writers with the same stale ETag exactly one wins), then the member row is inserted or updated;
/// either failing rolls both back.
/// </summary>
/// <remarks>Thread safety: safe for concurrent use by the silo or client that owns it.</remarks>
internal sealed class PostgreSqlMembershipTable : IMembershipTable
{
    // The key of the transaction-scoped advisory lock held while the schema is created: "SFmember" in ASCII.
    private const long SchemaLockKey = 0x53_46_6D_65_6D_62_65_72;

    private readonly NpgsqlDataSource _dataSource;
    private readonly string _schema;
    private readonly string _clusterId;

    public PostgreSqlMembershipTable(NpgsqlDataSource dataSource, string schema, string clusterId)
    {
        _dataSource = dataSource;
        _schema = schema;
        _clusterId = clusterId;
    }

    public async Task InitializeMembershipTable(bool tryInitTableVersion)
    {
        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.ReadCommitted).ConfigureAwait(false);
        await ExecuteAsync(connection, transaction, $"SELECT pg_advisory_xact_lock({SchemaLockKey})").ConfigureAwait(false);
        await ExecuteAsync(connection, transaction, $"""
            CREATE SCHEMA IF NOT EXISTS {_schema};
            CREATE TABLE IF NOT EXISTS {_schema}.membership_version (
                cluster_id text COLLATE "C" PRIMARY KEY,
                version integer NOT NULL,
                etag bigint NOT NULL);
            CREATE TABLE IF NOT EXISTS {_schema}.members (
                cluster_id text COLLATE "C" NOT NULL,
                address text COLLATE "C" NOT NULL,
                status integer NOT NULL,
                proxy_port integer NOT NULL,
                entry text NOT NULL,
                etag bigint NOT NULL,
                PRIMARY KEY (cluster_id, address));
            """).ConfigureAwait(false);
        if (tryInitTableVersion)
        {
            await ExecuteAsync(connection, transaction,
                $"INSERT INTO {_schema}.membership_version (cluster_id, version, etag) VALUES ($1, 0, 0) ON CONFLICT DO NOTHING", _clusterId).ConfigureAwait(false);
        }

        await transaction.CommitAsync().ConfigureAwait(false);
    }

    public async Task DeleteMembershipTableEntries(string clusterId)
    {
        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.ReadCommitted).ConfigureAwait(false);
        await ExecuteAsync(connection, transaction, $"DELETE FROM {_schema}.members WHERE cluster_id = $1", clusterId).ConfigureAwait(false);
        await ExecuteAsync(connection, transaction, $"DELETE FROM {_schema}.membership_version WHERE cluster_id = $1", clusterId).ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
    }

    public async Task CleanupDefunctSiloEntries(DateTimeOffset beforeDate)
    {
        // Only dead entries whose last known update (heartbeat or a vote against them) is older than beforeDate.
        MembershipTableData table = await ReadAsync(address: null).ConfigureAwait(false);
        var defunct = new List<string>();
        foreach (Tuple<MembershipEntry, string> member in table.Members)
        {
            if (member.Item1.Status == SiloStatus.Dead && LastUpdate(member.Item1) < beforeDate)
            {
                defunct.Add(member.Item1.SiloAddress.ToParsableString());
            }
        }

        if (defunct.Count == 0)
        {
            return;
        }

        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using var delete = new NpgsqlCommand($"DELETE FROM {_schema}.members WHERE cluster_id = $1 AND address = ANY($2) AND status = $3", connection);
        delete.Parameters.Add(new NpgsqlParameter { Value = _clusterId });
        delete.Parameters.Add(new NpgsqlParameter { Value = defunct.ToArray() });
        delete.Parameters.Add(new NpgsqlParameter { Value = (int)SiloStatus.Dead });
        await delete.ExecuteNonQueryAsync().ConfigureAwait(false);
    }

    // The latest of the start, the last heartbeat and the last vote against the silo (a death declaration is a vote),
    // so a silo declared dead recently is kept however long ago it last reported itself alive.
    private static DateTimeOffset LastUpdate(MembershipEntry entry)
    {
        DateTime latest = entry.IAmAliveTime > entry.StartTime ? entry.IAmAliveTime : entry.StartTime;
        if (entry.SuspectTimes is not null)
        {
            foreach (Tuple<SiloAddress, DateTime> vote in entry.SuspectTimes)
            {
                latest = vote.Item2 > latest ? vote.Item2 : latest;
            }
        }

        return new DateTimeOffset(DateTime.SpecifyKind(latest, DateTimeKind.Utc));
    }

    public Task<MembershipTableData> ReadRow(SiloAddress key) => ReadAsync(key.ToParsableString());

    public Task<MembershipTableData> ReadAll() => ReadAsync(address: null);

    public Task<bool> InsertRow(MembershipEntry entry, TableVersion tableVersion) =>
        WriteAsync(entry, rowEtag: null, tableVersion);

    public Task<bool> UpdateRow(MembershipEntry entry, string etag, TableVersion tableVersion) =>
        WriteAsync(entry, etag, tableVersion);

    public async Task UpdateIAmAlive(MembershipEntry entry)
    {
        // Only this silo's heartbeat: read the stored entry, set its time, write it back under the row lock. Neither
        // the row ETag nor the table version moves, so reads taken before the heartbeat stay usable for UpdateRow.
        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.ReadCommitted).ConfigureAwait(false);
        string address = entry.SiloAddress.ToParsableString();
        await using var select = new NpgsqlCommand($"SELECT entry FROM {_schema}.members WHERE cluster_id = $1 AND address = $2 FOR UPDATE", connection, transaction);
        select.Parameters.Add(new NpgsqlParameter { Value = _clusterId });
        select.Parameters.Add(new NpgsqlParameter { Value = address });
        if (await select.ExecuteScalarAsync().ConfigureAwait(false) is not string stored)
        {
            throw new InvalidOperationException($"The membership table of cluster '{_clusterId}' has no entry for silo {entry.SiloAddress}, so its heartbeat cannot be written.");
        }

        MembershipEntry current = MembershipEntryText.Read(stored);
        current.IAmAliveTime = entry.IAmAliveTime;
        await ExecuteAsync(connection, transaction, $"UPDATE {_schema}.members SET entry = $3 WHERE cluster_id = $1 AND address = $2",
            _clusterId, address, MembershipEntryText.Write(current)).ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
    }

    private async Task<bool> WriteAsync(MembershipEntry entry, string? rowEtag, TableVersion tableVersion)
    {
        if (!long.TryParse(tableVersion.VersionEtag, NumberStyles.None, CultureInfo.InvariantCulture, out long tableEtag))
        {
            return false; // not an ETag this table handed out
        }

        long expectedRowEtag = 0;
        if (rowEtag is not null && !long.TryParse(rowEtag, NumberStyles.None, CultureInfo.InvariantCulture, out expectedRowEtag))
        {
            return false;
        }

        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.ReadCommitted).ConfigureAwait(false);

        // A cluster initialised without its version row (InitializeMembershipTable(false) first, or entries deleted)
        // starts at version 0, ETag 0, as ReadAll reports it; an existing row is left alone.
        await ExecuteAsync(connection, transaction,
            $"INSERT INTO {_schema}.membership_version (cluster_id, version, etag) VALUES ($1, 0, 0) ON CONFLICT DO NOTHING", _clusterId).ConfigureAwait(false);

        // The version row is the one point every writer of this cluster passes: its row lock orders them, and the ETag
        // comparison under that lock lets exactly one of several writers holding the same ETag through.
        int moved = await ExecuteAsync(connection, transaction,
            $"UPDATE {_schema}.membership_version SET version = $3, etag = etag + 1 WHERE cluster_id = $1 AND etag = $2",
            _clusterId, tableEtag, tableVersion.Version).ConfigureAwait(false);
        if (moved != 1)
        {
            await transaction.RollbackAsync().ConfigureAwait(false);
            return false;
        }

        string address = entry.SiloAddress.ToParsableString();
        int written = rowEtag is null
            ? await ExecuteAsync(connection, transaction,
                $"INSERT INTO {_schema}.members (cluster_id, address, status, proxy_port, entry, etag) VALUES ($1, $2, $3, $4, $5, 0) ON CONFLICT DO NOTHING",
                _clusterId, address, (int)entry.Status, entry.ProxyPort, MembershipEntryText.Write(entry)).ConfigureAwait(false)
            : await ExecuteAsync(connection, transaction,
                $"UPDATE {_schema}.members SET status = $3, proxy_port = $4, entry = $5, etag = etag + 1 WHERE cluster_id = $1 AND address = $2 AND etag = $6",
                _clusterId, address, (int)entry.Status, entry.ProxyPort, MembershipEntryText.Write(entry), expectedRowEtag).ConfigureAwait(false);
        if (written != 1)
        {
            await transaction.RollbackAsync().ConfigureAwait(false);
            return false;
        }

        await transaction.CommitAsync().ConfigureAwait(false);
        return true;
    }

    // The version and the rows in one snapshot: a repeatable-read transaction sees both as of its first statement.
    private async Task<MembershipTableData> ReadAsync(string? address)
    {
        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.RepeatableRead).ConfigureAwait(false);
        var version = new TableVersion(0, "0");
        await using (var selectVersion = new NpgsqlCommand($"SELECT version, etag FROM {_schema}.membership_version WHERE cluster_id = $1", connection, transaction))
        {
            selectVersion.Parameters.Add(new NpgsqlParameter { Value = _clusterId });
            await using NpgsqlDataReader reader = await selectVersion.ExecuteReaderAsync().ConfigureAwait(false);
            if (await reader.ReadAsync().ConfigureAwait(false))
            {
                version = new TableVersion(reader.GetInt32(0), reader.GetInt64(1).ToString(CultureInfo.InvariantCulture));
            }
        }

        var members = new List<Tuple<MembershipEntry, string>>();
        string filter = address is null ? "" : " AND address = $2";
        await using (var selectMembers = new NpgsqlCommand($"SELECT entry, etag FROM {_schema}.members WHERE cluster_id = $1{filter}", connection, transaction))
        {
            selectMembers.Parameters.Add(new NpgsqlParameter { Value = _clusterId });
            if (address is not null)
            {
                selectMembers.Parameters.Add(new NpgsqlParameter { Value = address });
            }

            await using NpgsqlDataReader reader = await selectMembers.ExecuteReaderAsync().ConfigureAwait(false);
            while (await reader.ReadAsync().ConfigureAwait(false))
            {
                members.Add(Tuple.Create(MembershipEntryText.Read(reader.GetString(0)), reader.GetInt64(1).ToString(CultureInfo.InvariantCulture)));
            }
        }

        await transaction.CommitAsync().ConfigureAwait(false);
        return new MembershipTableData(members, version);
    }

    internal async Task<List<Uri>> ReadGatewaysAsync()
    {
        await using NpgsqlConnection connection = await _dataSource.OpenConnectionAsync().ConfigureAwait(false);
        await using var select = new NpgsqlCommand($"SELECT entry FROM {_schema}.members WHERE cluster_id = $1 AND status = $2 AND proxy_port > 0", connection);
        select.Parameters.Add(new NpgsqlParameter { Value = _clusterId });
        select.Parameters.Add(new NpgsqlParameter { Value = (int)SiloStatus.Active });
        var gateways = new List<Uri>();
        try
        {
            await using NpgsqlDataReader reader = await select.ExecuteReaderAsync().ConfigureAwait(false);
            while (await reader.ReadAsync().ConfigureAwait(false))
            {
                MembershipEntry entry = MembershipEntryText.Read(reader.GetString(0));
                var gateway = SiloAddress.New(new System.Net.IPEndPoint(entry.SiloAddress.Endpoint.Address, entry.ProxyPort), entry.SiloAddress.Generation);
                gateways.Add(gateway.ToGatewayUri());
            }
        }
        catch (PostgresException ex) when (ex.SqlState is PostgresErrorCodes.UndefinedTable or PostgresErrorCodes.InvalidSchemaName)
        {
            // No silo has created the tables yet: no gateways.
        }

        return gateways;
    }

    private static async Task<int> ExecuteAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, string sql, params object[] values)
    {
        await using var command = new NpgsqlCommand(sql, connection, transaction);
        foreach (object value in values)
        {
            command.Parameters.Add(new NpgsqlParameter { Value = value });
        }

        return await command.ExecuteNonQueryAsync().ConfigureAwait(false);
    }
}
