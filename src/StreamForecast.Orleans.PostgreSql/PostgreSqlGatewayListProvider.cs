using Orleans.Messaging;

namespace StreamForecast.Orleans.PostgreSql;

/// <summary>
/// The client's list of gateways: the active silos of its cluster in the membership table, with their gateway ports.
/// </summary>
/// <remarks>Thread safety: safe for concurrent use by the silo or client that owns it.</remarks>
internal sealed class PostgreSqlGatewayListProvider(PostgreSqlMembershipTable table, TimeSpan refreshPeriod) : IGatewayListProvider
{
    public TimeSpan MaxStaleness { get; } = refreshPeriod;

    public bool IsUpdatable => true;

    public Task InitializeGatewayListProvider() => Task.CompletedTask;

    public async Task<IList<Uri>> GetGateways() => await table.ReadGatewaysAsync().ConfigureAwait(false);
}
