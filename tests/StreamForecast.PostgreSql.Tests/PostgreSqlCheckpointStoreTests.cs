using System.Globalization;
using Npgsql;
using StreamForecast.ContractSuites;
using StreamForecast.Streaming;

namespace StreamForecast.PostgreSql.Tests;

// The checkpoint-store contract on the throwaway server, each test in a schema of its own; the store's own schema,
// location, size-limit and lock behaviour are in the other part of this class.
[Collection(PostgreSqlCollection.Name)]
public sealed partial class PostgreSqlCheckpointStoreTests : ConditionalCheckpointStoreContractTests<PostgreSqlCheckpointStore>
{
    private readonly PostgreSqlServer _server;
    private readonly string _schema = "test_" + Guid.NewGuid().ToString("N");

    public PostgreSqlCheckpointStoreTests(PostgreSqlServer server) => _server = server;

    public override async Task DisposeAsync()
    {
        await base.DisposeAsync();
        await ExecuteAsync($"DROP SCHEMA IF EXISTS {_schema} CASCADE");
    }

    protected override PostgreSqlCheckpointStore CreateStoreCore(string stream, int retainCount) =>
        new(_server.DataSource, Options(stream, retainCount));

    protected override Task DamageAsync(string location) =>
        // One flipped bit in the first byte of the snapshot: same length, wrong SHA-256 (# is PostgreSQL's XOR).
        ExecuteAsync($"UPDATE {_schema}.checkpoints SET snapshot = set_byte(snapshot, 0, get_byte(snapshot, 0) # 1) WHERE sequence = {SequenceOf(location)}");

    protected override async Task<int> CountStoredAsync(string stream)
    {
        if (!(bool)(await ScalarAsync($"SELECT to_regclass('{_schema}.checkpoints') IS NOT NULL"))!)
        {
            return 0;
        }

        return (int)(long)(await ScalarAsync($"SELECT count(*) FROM {_schema}.checkpoints WHERE stream = $1", stream))!;
    }

    protected override Task PlantForeignDataAsync(string stream) =>
        ExecuteAsync($"CREATE SCHEMA {_schema}; CREATE TABLE {_schema}.orders (id integer, note text); INSERT INTO {_schema}.orders VALUES (1, 'not a checkpoint')");

    private PostgreSqlCheckpointStoreOptions Options(string stream = "", int retainCount = 3, long maxSnapshotLength = PostgreSqlCheckpointStoreOptions.DefaultMaxSnapshotLength) =>
        new(retainCount, maxSnapshotLength, stream, _schema);

    private static long SequenceOf(string location) =>
        long.Parse(location[(location.LastIndexOf('#') + 1)..], NumberStyles.None, CultureInfo.InvariantCulture);

    private async Task ExecuteAsync(string sql, params object[] parameters)
    {
        await using NpgsqlCommand command = _server.DataSource.CreateCommand(sql);
        foreach (object parameter in parameters)
        {
            command.Parameters.Add(new NpgsqlParameter { Value = parameter });
        }

        await command.ExecuteNonQueryAsync();
    }

    private async Task<object?> ScalarAsync(string sql, params object[] parameters)
    {
        await using NpgsqlCommand command = _server.DataSource.CreateCommand(sql);
        foreach (object parameter in parameters)
        {
            command.Parameters.Add(new NpgsqlParameter { Value = parameter });
        }

        return await command.ExecuteScalarAsync();
    }

    private async Task<List<long>> SequencesAsync(string stream)
    {
        await using NpgsqlCommand command = _server.DataSource.CreateCommand($"SELECT sequence FROM {_schema}.checkpoints WHERE stream = $1 ORDER BY sequence DESC");
        command.Parameters.Add(new NpgsqlParameter { Value = stream });
        await using NpgsqlDataReader reader = await command.ExecuteReaderAsync();
        var sequences = new List<long>();
        while (await reader.ReadAsync())
        {
            sequences.Add(reader.GetInt64(0));
        }

        return sequences;
    }
}
