using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Orleans.Serialization;
using Orleans.Storage;
using StreamForecast.Orleans;
using StreamForecast.Orleans.PostgreSql;

namespace StreamForecast.PostgreSql.Tests;

// AddPostgreSqlCheckpointGrainStorage as silos use it: each "silo" here is a service container built from the same
// registration, so two of them are two silos sharing one database.
[Collection(PostgreSqlCollection.Name)]
public sealed class GrainStorageRegistrationTests : IAsyncLifetime
{
    private static readonly GrainId Bucket = GrainId.Create("bucket", "7");
    private readonly PostgreSqlServer _server;
    private readonly string _schema = "test_" + Guid.NewGuid().ToString("N");
    private readonly List<ServiceProvider> _silos = [];

    public GrainStorageRegistrationTests(PostgreSqlServer server) => _server = server;

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync()
    {
        foreach (ServiceProvider silo in _silos)
        {
            await silo.DisposeAsync();
        }

        await using var drop = _server.DataSource.CreateCommand($"DROP SCHEMA IF EXISTS {_schema} CASCADE");
        await drop.ExecuteNonQueryAsync();
    }

    [Fact]
    public async Task AddPostgreSqlCheckpointGrainStorage_TwoSilos_OneReadsWhatTheOtherWroteAndAStaleWriteIsRefused()
    {
        IGrainStorage first = StorageOfNewSilo();
        IGrainStorage second = StorageOfNewSilo();
        var written = new GrainState<List<int>>([1, 2, 3]);
        await first.WriteStateAsync(ForecastClusterOptions.StorageName, Bucket, written);
        await first.WriteStateAsync(ForecastClusterOptions.StorageName, Bucket, written);

        var read = new GrainState<List<int>>([]);
        await second.ReadStateAsync(ForecastClusterOptions.StorageName, Bucket, read);
        read.State = [4];
        await second.WriteStateAsync(ForecastClusterOptions.StorageName, Bucket, read);
        written.State = [99];
        await Assert.ThrowsAsync<InconsistentStateException>(() => first.WriteStateAsync(ForecastClusterOptions.StorageName, Bucket, written));

        var final = new GrainState<List<int>>([]);
        await first.ReadStateAsync(ForecastClusterOptions.StorageName, Bucket, final);
        Assert.Equal([4], final.State);
        Assert.Equal("3", final.ETag);
        Assert.Equal(2L, await CountAsync($"SELECT count(*) FROM {_schema}.checkpoints")); // retainCount 2
        Assert.Equal(1L, await CountAsync($"SELECT count(*) FROM {_schema}.streams"));
    }

    [Fact]
    public async Task AddPostgreSqlCheckpointGrainStorage_SiloDisposed_ClosesItsConnections()
    {
        IGrainStorage storage = StorageOfNewSilo();
        await storage.WriteStateAsync(ForecastClusterOptions.StorageName, Bucket, new GrainState<List<int>>([1]));
        string applicationName = _schema; // the silo's connections carry the schema as application name

        long before = await CountAsync($"SELECT count(*) FROM pg_stat_activity WHERE application_name = '{applicationName}'");
        await _silos[0].DisposeAsync();
        _silos.Clear();
        long after = before;
        for (int i = 0; i < 100 && after != 0; i++) // a server process leaves pg_stat_activity shortly after its client hangs up
        {
            await Task.Delay(50);
            after = await CountAsync($"SELECT count(*) FROM pg_stat_activity WHERE application_name = '{applicationName}'");
        }

        Assert.True(before >= 1, $"the silo held {before} connections before it was disposed");
        Assert.Equal(0, after);
    }

    [Fact]
    public void AddPostgreSqlCheckpointGrainStorage_BadArguments_ThrowWhenTheSiloIsConfigured()
    {
        Assert.ThrowsAny<ArgumentException>(() => new FakeSiloBuilder().AddPostgreSqlCheckpointGrainStorage("Hots=localhost"));
        Assert.ThrowsAny<ArgumentException>(() => new FakeSiloBuilder().AddPostgreSqlCheckpointGrainStorage(" "));
        Assert.Throws<ArgumentOutOfRangeException>(() => new FakeSiloBuilder().AddPostgreSqlCheckpointGrainStorage(_server.ConnectionString, retainCount: 0));
        Assert.Equal("schemaName", Assert.Throws<ArgumentException>(() => new FakeSiloBuilder().AddPostgreSqlCheckpointGrainStorage(_server.ConnectionString, schemaName: "Bad-Name")).ParamName);
        Assert.ThrowsAny<ArgumentException>(() => new FakeSiloBuilder().AddPostgreSqlCheckpointGrainStorage(_server.ConnectionString, name: ""));
    }

    private IGrainStorage StorageOfNewSilo()
    {
        var silo = new FakeSiloBuilder();
        silo.Services.AddSerializer();
        silo.Services.AddLogging();
        silo.AddPostgreSqlCheckpointGrainStorage(_server.ConnectionString + ";Application Name=" + _schema, schemaName: _schema);
        ServiceProvider services = silo.Services.BuildServiceProvider();
        _silos.Add(services);
        return services.GetRequiredKeyedService<IGrainStorage>(ForecastClusterOptions.StorageName);
    }

    private async Task<long> CountAsync(string sql)
    {
        await using var command = _server.DataSource.CreateCommand(sql);
        return (long)(await command.ExecuteScalarAsync())!;
    }

    private sealed class FakeSiloBuilder : ISiloBuilder
    {
        public IServiceCollection Services { get; } = new ServiceCollection();

        public IConfiguration Configuration { get; } = new ConfigurationBuilder().Build();
    }
}
