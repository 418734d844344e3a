using Orleans.Configuration;
using Orleans.Hosting;
using Orleans.TestingHost;

namespace StreamForecast.Tests.Clusters;

/// <summary>
/// Settings for throwaway test clusters whose tests kill silos: a dead silo is declared dead within seconds instead of
/// the production default of about a minute, and calls time out after 5 s. Linked into the Orleans and PostgreSQL test
/// projects.
/// </summary>
internal static class FastFailover
{
    /// <summary>Applies the silo side (membership probes and the response timeout).</summary>
    public static ISiloBuilder Configure(ISiloBuilder silo)
    {
        silo.Configure<ClusterMembershipOptions>(o =>
        {
            o.ProbeTimeout = TimeSpan.FromMilliseconds(500);
            o.NumMissedProbesLimit = 2;
            o.NumVotesForDeathDeclaration = 1;
            o.TableRefreshTimeout = TimeSpan.FromSeconds(1);
            o.IAmAliveTablePublishTimeout = TimeSpan.FromSeconds(1);
        });
        return silo.Configure<SiloMessagingOptions>(o => o.ResponseTimeout = TimeSpan.FromSeconds(5));
    }

    /// <summary>Applies the client side (the response timeout) to a test cluster's client.</summary>
    public static void ConfigureClient(InProcessTestClusterBuilder builder) =>
        builder.ConfigureClient(client => client.Configure<ClientMessagingOptions>(o => o.ResponseTimeout = TimeSpan.FromSeconds(5)));
}
