using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using StreamForecast.PostgreSql;

namespace StreamForecast.Orleans.PostgreSql;

/// <summary>Registers grain storage for the forecast buckets in a PostgreSQL database that every silo reaches.</summary>
public static class PostgreSqlGrainStorageSiloExtensions
{
    /// <summary>
    /// Registers grain storage named <paramref name="name"/> in a PostgreSQL database: each grain's state is a stream
    /// of a <see cref="PostgreSqlCheckpointStore"/> in schema <paramref name="schemaName"/>, written with the store's
    /// conditional save, so a stale activation's write is refused in the same transaction that checks it. This is the
    /// storage for silos on several machines; give every silo the same connection string and schema.
    /// </summary>
    /// <param name="silo">The silo builder.</param>
    /// <param name="connectionString">
    /// An Npgsql connection string for the database (<c>Host=…;Port=…;Database=…;Username=…;Password=…</c>). The silo
    /// makes one data source (connection pool) from it, shared by every grain's store and disposed with the silo's
    /// services; size the pool with <c>Maximum Pool Size</c> (Npgsql's default is 100) for the buckets writing at once.
    /// </param>
    /// <param name="retainCount">How many versions of each grain's state to keep (older ones are the fallback if the newest is damaged), 1 to 1,000; default 2.</param>
    /// <param name="schemaName">The database schema for the tables, created on first use if missing; default <c>streamforecast</c>. See <see cref="PostgreSqlCheckpointStoreOptions.SchemaName"/>.</param>
    /// <param name="name">The storage name; <see cref="ForecastClusterOptions.StorageName"/> for the buckets.</param>
    /// <returns>The silo builder.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="silo"/> or <paramref name="schemaName"/> is null.</exception>
    /// <exception cref="ArgumentException">
    /// <paramref name="connectionString"/> or <paramref name="name"/> is null, empty or white space, or the connection
    /// string is not valid; or <paramref name="schemaName"/> is not an allowed schema name.
    /// </exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="retainCount"/> is outside 1 to 1,000.</exception>
    /// <remarks>
    /// Everything is checked here, when the silo is configured; nothing connects until the first grain reads its state.
    /// To share a data source the application already has (for example one registered with Npgsql's own dependency
    /// injection package), register the store with
    /// <see cref="ForecastClusterSiloExtensions.AddCheckpointGrainStorage"/> instead:
    /// <c>silo.AddCheckpointGrainStorage((services, stream) => new PostgreSqlCheckpointStore(dataSource, new PostgreSqlCheckpointStoreOptions(2, streamName: stream)))</c>.
    /// </remarks>
    public static ISiloBuilder AddPostgreSqlCheckpointGrainStorage(
        this ISiloBuilder silo,
        string connectionString,
        int retainCount = 2,
        string schemaName = PostgreSqlCheckpointStoreOptions.DefaultSchemaName,
        string name = ForecastClusterOptions.StorageName)
    {
        ArgumentNullException.ThrowIfNull(silo);
        ArgumentException.ThrowIfNullOrWhiteSpace(connectionString);
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        _ = new PostgreSqlCheckpointStoreOptions(retainCount, schemaName: schemaName); // validates now, not at the first write
        _ = new NpgsqlConnectionStringBuilder(connectionString); // an unknown keyword or a bad value throws here

        // Keyed by storage name, under a type of this project's own, so it neither meets nor replaces a data source the
        // application registers itself. The container disposes it when the silo's services are disposed.
        silo.Services.AddKeyedSingleton(name, (_, _) => new GrainStorageDataSource(NpgsqlDataSource.Create(connectionString)));
        return silo.AddCheckpointGrainStorage(
            (services, stream) => new PostgreSqlCheckpointStore(
                services.GetRequiredKeyedService<GrainStorageDataSource>(name).DataSource,
                new PostgreSqlCheckpointStoreOptions(retainCount, streamName: stream, schemaName: schemaName)),
            name);
    }

    // The silo's one data source for a grain storage, owned by the silo's service container.
    private sealed class GrainStorageDataSource(NpgsqlDataSource dataSource) : IAsyncDisposable, IDisposable
    {
        public NpgsqlDataSource DataSource { get; } = dataSource;

        public ValueTask DisposeAsync() => DataSource.DisposeAsync();

        public void Dispose() => DataSource.Dispose();
    }
}
