// One silo of the forecast cluster. Every node points at the same PostgreSQL database, which holds both the cluster's
// membership (who is alive, on which address) and the buckets' state; nothing else is shared. See the Orleans README.
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Orleans.Configuration;
using StreamForecast.Orleans;
using StreamForecast.Orleans.PostgreSql;
using StreamForecast.Samples.ClusterNode;
using StreamForecast.Streaming;

HostApplicationBuilder builder = Host.CreateApplicationBuilder(args);
NodeSettings settings;
try
{
    settings = NodeSettings.Read(builder.Configuration);
    _ = new Npgsql.NpgsqlConnectionStringBuilder(settings.ConnectionString);
}
catch (Exception ex) when (ex is SettingsException or ArgumentException)
{
    Console.Error.WriteLine($"cluster node: {ex.Message}");
    return 2;
}

builder.UseOrleans(silo =>
{
    silo.Configure<ClusterOptions>(o =>
    {
        o.ClusterId = settings.ClusterId;
        o.ServiceId = "streamforecast-sensors";
    });
    silo.ConfigureEndpoints(settings.AdvertisedAddress, settings.SiloPort, settings.GatewayPort, listenOnAnyHostAddress: settings.ListenOnAnyAddress);
    silo.UsePostgreSqlClustering(settings.ConnectionString)
        .AddForecastBuckets(ClusterNodeSetup.EngineOptions(), SnapshotKeyCodecs.Utf8String, ClusterNodeSetup.ClusterOptions())
        .AddPostgreSqlCheckpointGrainStorage(settings.ConnectionString);
    if (settings.ProbeTimeout is { } probe)
    {
        // Declare a dead node dead after two missed probes of this length (Orleans' default is about a minute in all).
        silo.Configure<ClusterMembershipOptions>(o =>
        {
            o.ProbeTimeout = probe;
            o.NumMissedProbesLimit = 2;
            o.TableRefreshTimeout = probe * 2;
        });
    }
});

using IHost host = builder.Build();
await host.StartAsync();
Console.WriteLine($"cluster node ready: cluster {settings.ClusterId}, silo {settings.AdvertisedAddress}:{settings.SiloPort}, gateway port {settings.GatewayPort}, process {Environment.ProcessId}");
await host.WaitForShutdownAsync();
return 0;
