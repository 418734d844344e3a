using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using Npgsql;
using Orleans.Configuration;
using Orleans.Messaging;
using StreamForecast.PostgreSql;

namespace StreamForecast.Orleans.PostgreSql;

/// <summary>Keeps Orleans cluster membership in a PostgreSQL database, so silos and clients need no other service to find each other.</summary>
public static class PostgreSqlClusteringExtensions
{
    /// <summary>The schema of the membership tables unless another is given: <c>streamforecast_cluster</c>.</summary>
    /// <remarks>A schema apart from the checkpoint store's, which must hold only the store's own tables.</remarks>
    public const string DefaultSchemaName = "streamforecast_cluster";

    /// <summary>
    /// Makes the silo keep the cluster's membership (which silos are alive, their addresses and gateway ports, the
    /// votes against suspected silos) in a PostgreSQL database. Give every silo of the cluster, and every client, the
    /// same database, schema and <see cref="ClusterOptions.ClusterId"/>; several clusters can share one schema under
    /// different cluster ids.
    /// </summary>
    /// <param name="silo">The silo builder.</param>
    /// <param name="connectionString">An Npgsql connection string for the database. The silo makes one data source (connection pool) from it for membership, disposed with the silo's services.</param>
    /// <param name="schemaName">The database schema for the membership tables, created with them on first use if missing; default <see cref="DefaultSchemaName"/>. Same rules as <see cref="PostgreSqlCheckpointStoreOptions.SchemaName"/>.</param>
    /// <returns>The silo builder.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="silo"/> or <paramref name="schemaName"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="connectionString"/> is null, empty, white space or not a valid connection string, or <paramref name="schemaName"/> is not an allowed schema name.</exception>
    /// <remarks>
    /// Everything is checked here; nothing connects until the silo starts. Each write of the membership protocol is
    /// one transaction that moves the table's version only if the version the writer read is still current, so of
    /// two silos writing on the same stale version exactly one succeeds (the other rereads and retries, as Orleans
    /// does with every membership table). A heartbeat changes only the silo's own alive time and leaves every version
    /// as it was. The silo's user needs the <c>CREATE</c> privilege on the database the first time, or an
    /// administrator creates the schema beforehand.
    /// </remarks>
    public static ISiloBuilder UsePostgreSqlClustering(this ISiloBuilder silo, string connectionString, string schemaName = DefaultSchemaName)
    {
        ArgumentNullException.ThrowIfNull(silo);
        Validate(connectionString, schemaName);
        silo.Services.AddSingleton(_ => new MembershipDataSource(NpgsqlDataSource.Create(connectionString)));
        silo.Services.AddSingleton(services => new PostgreSqlMembershipTable(
            services.GetRequiredService<MembershipDataSource>().DataSource,
            schemaName,
            services.GetRequiredService<IOptions<ClusterOptions>>().Value.ClusterId));
        silo.Services.AddSingleton<IMembershipTable>(services => services.GetRequiredService<PostgreSqlMembershipTable>());
        return silo;
    }

    /// <summary>
    /// Makes the client find the cluster's gateways in the PostgreSQL membership tables its silos keep
    /// (<see cref="UsePostgreSqlClustering(ISiloBuilder, string, string)"/>): the active silos of its
    /// <see cref="ClusterOptions.ClusterId"/> that listen for clients.
    /// </summary>
    /// <param name="client">The client builder.</param>
    /// <param name="connectionString">An Npgsql connection string for the silos' database. The client makes one data source from it, disposed with the client's services.</param>
    /// <param name="schemaName">The silos' membership schema; default <see cref="DefaultSchemaName"/>.</param>
    /// <returns>The client builder.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="client"/> or <paramref name="schemaName"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="connectionString"/> is null, empty, white space or not a valid connection string, or <paramref name="schemaName"/> is not an allowed schema name.</exception>
    /// <remarks>The list is reread every <see cref="GatewayOptions.GatewayListRefreshPeriod"/>; the client only reads the tables.</remarks>
    public static IClientBuilder UsePostgreSqlClustering(this IClientBuilder client, string connectionString, string schemaName = DefaultSchemaName)
    {
        ArgumentNullException.ThrowIfNull(client);
        Validate(connectionString, schemaName);
        client.Services.AddSingleton(_ => new MembershipDataSource(NpgsqlDataSource.Create(connectionString)));
        client.Services.AddSingleton<IGatewayListProvider>(services => new PostgreSqlGatewayListProvider(
            new PostgreSqlMembershipTable(
                services.GetRequiredService<MembershipDataSource>().DataSource,
                schemaName,
                services.GetRequiredService<IOptions<ClusterOptions>>().Value.ClusterId),
            services.GetRequiredService<IOptions<GatewayOptions>>().Value.GatewayListRefreshPeriod));
        return client;
    }

    private static void Validate(string connectionString, string schemaName)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(connectionString);
        ArgumentNullException.ThrowIfNull(schemaName);
        _ = new PostgreSqlCheckpointStoreOptions(1, schemaName: schemaName); // the same schema-name rules, checked now
        _ = new NpgsqlConnectionStringBuilder(connectionString);
    }

    // The membership data source, owned by the silo's or client's service container.
    private sealed class MembershipDataSource(NpgsqlDataSource dataSource) : IAsyncDisposable, IDisposable
    {
        public NpgsqlDataSource DataSource { get; } = dataSource;

        public ValueTask DisposeAsync() => DataSource.DisposeAsync();

        public void Dispose() => DataSource.Dispose();
    }
}
