using Npgsql;

namespace StreamForecast.PostgreSql.Tests;

/// <summary>
/// The throwaway PostgreSQL server the tests share (<see cref="ThrowawayPostgreSql"/>: the Debian server package's own
/// binaries, a fresh data folder, 127.0.0.1 on a free port, stopped and deleted after the tests), with one data source on
/// it. If the server cannot start, <see cref="InitializeAsync"/> throws with the reason and every test that uses the
/// server fails with it: these tests never skip.
/// </summary>
public sealed class PostgreSqlServer : IAsyncLifetime
{
    /// <summary>The role initdb creates (a superuser of the throwaway cluster).</summary>
    public const string UserName = ThrowawayPostgreSql.UserName;

    private ThrowawayPostgreSql? _server;
    private NpgsqlDataSource? _dataSource;

    /// <summary>The server's TCP port on 127.0.0.1.</summary>
    public int Port => _server?.Port ?? 0;

    /// <summary>A connection string for database <c>postgres</c> as <see cref="UserName"/>.</summary>
    public string ConnectionString { get; private set; } = "";

    /// <summary>A data source (connection pool) on <see cref="ConnectionString"/>, shared by the tests.</summary>
    public NpgsqlDataSource DataSource => _dataSource ?? throw new InvalidOperationException("The PostgreSQL server has not started.");

    /// <inheritdoc/>
    public async Task InitializeAsync()
    {
        try
        {
            _server = await ThrowawayPostgreSql.StartAsync("streamforecast-pg-");
            ConnectionString = _server.ConnectionString(maxPoolSize: 50);
            _dataSource = NpgsqlDataSource.Create(ConnectionString);
            await using NpgsqlCommand probe = _dataSource.CreateCommand("SELECT 1");
            await probe.ExecuteScalarAsync();
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            await DisposeAsync();
            throw new InvalidOperationException(
                "The throwaway PostgreSQL server for these tests could not start, so the tests cannot run (they fail rather than skip). "
                + "It needs the Debian PostgreSQL server package (apt-get install -y postgresql-15), whose initdb and pg_ctl live under /usr/lib/postgresql/<version>/bin. "
                + $"Reason: {ex.Message}",
                ex);
        }
    }

    /// <inheritdoc/>
    public async Task DisposeAsync()
    {
        if (_dataSource is not null)
        {
            await _dataSource.DisposeAsync();
            _dataSource = null;
        }

        if (_server is not null)
        {
            await _server.DisposeAsync();
            _server = null;
        }
    }
}

/// <summary>The tests that share one throwaway server; they run one class at a time.</summary>
[CollectionDefinition(Name)]
public sealed class PostgreSqlCollection : ICollectionFixture<PostgreSqlServer>
{
    /// <summary>The collection's name.</summary>
    public const string Name = "PostgreSQL server";
}
