using System.Net;
using Orleans.Runtime;
using StreamForecast.Orleans.PostgreSql;

namespace StreamForecast.PostgreSql.Tests;

// The contract of Orleans' IMembershipTable (as its interface documents it: atomic row + version writes guarded by the
// table ETag, heartbeat-neutral row ETags, cleanup of old dead entries) checked on the PostgreSQL implementation.
[Collection(PostgreSqlCollection.Name)]
public sealed class PostgreSqlMembershipTableTests : IAsyncLifetime
{
    private static readonly DateTime Now = new(2026, 3, 1, 12, 0, 0, DateTimeKind.Utc);
    private readonly PostgreSqlServer _server;
    private readonly string _schema = "test_" + Guid.NewGuid().ToString("N");

    public PostgreSqlMembershipTableTests(PostgreSqlServer server) => _server = server;

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync()
    {
        await using var drop = _server.DataSource.CreateCommand($"DROP SCHEMA IF EXISTS {_schema} CASCADE");
        await drop.ExecuteNonQueryAsync();
    }

    [Fact]
    public async Task InitializeMembershipTable_SeveralSilosAtOnce_OneEmptyTableAtVersionZero()
    {
        PostgreSqlMembershipTable[] tables = [Table(), Table(), Table(), Table()];
        await Task.WhenAll(tables.Select(t => t.InitializeMembershipTable(true)));

        MembershipTableData data = await tables[0].ReadAll();

        Assert.Empty(data.Members);
        Assert.Equal(0, data.Version.Version);
    }

    [Fact]
    public async Task InsertRow_TableInitialisedWithoutVersion_FirstWriterOnTheReadVersionSucceeds()
    {
        PostgreSqlMembershipTable table = Table();
        await table.InitializeMembershipTable(false);
        MembershipTableData empty = await table.ReadAll();

        Assert.True(await table.InsertRow(Entry(11111, SiloStatus.Joining), empty.Version.Next()));
        Assert.False(await table.InsertRow(Entry(22222, SiloStatus.Joining), empty.Version.Next()));
        Assert.Equal(1, (await table.ReadAll()).Version.Version);
    }

    [Fact]
    public async Task InsertRow_CurrentVersion_RowReadsBackFieldForFieldAndVersionMoves()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();
        MembershipTableData before = await table.ReadAll();
        MembershipEntry entry = Entry(11111, SiloStatus.Joining);
        entry.AddSuspector(Silo(22222), Now.AddSeconds(-3));

        Assert.True(await table.InsertRow(entry, before.Version.Next()));
        MembershipTableData after = await table.ReadRow(entry.SiloAddress);

        Assert.Equal(1, after.Version.Version);
        Assert.NotEqual(before.Version.VersionEtag, after.Version.VersionEtag);
        MembershipEntry read = Assert.Single(after.Members).Item1;
        Assert.Equal(entry.ToFullString(), read.ToFullString());
        Assert.Equal(entry.SiloAddress, read.SiloAddress);
        Assert.Equal(entry.IAmAliveTime, read.IAmAliveTime);
        Assert.Equal(entry.StartTime, read.StartTime);
        Assert.Equal(entry.SuspectTimes!.Single(), read.SuspectTimes!.Single());
    }

    [Fact]
    public async Task InsertRow_ManyWritersOnTheSameVersion_ExactlyOneSucceeds()
    {
        PostgreSqlMembershipTable[] tables = [Table(), Table(), Table(), Table(), Table(), Table()];
        await tables[0].InitializeMembershipTable(true);
        TableVersion stale = (await tables[0].ReadAll()).Version;

        bool[] results = await Task.WhenAll(tables.Select((t, i) => t.InsertRow(Entry(30000 + i, SiloStatus.Joining), stale.Next())));

        Assert.Equal(1, results.Count(r => r));
        MembershipTableData data = await tables[0].ReadAll();
        Assert.Single(data.Members);
        Assert.Equal(1, data.Version.Version);
    }

    [Fact]
    public async Task InsertRow_StaleVersionOrExistingSilo_RefusedWithNoChange()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();
        TableVersion first = (await table.ReadAll()).Version;
        Assert.True(await table.InsertRow(Entry(11111, SiloStatus.Joining), first.Next()));
        MembershipTableData current = await table.ReadAll();

        Assert.False(await table.InsertRow(Entry(22222, SiloStatus.Joining), first.Next()));          // stale version ETag
        Assert.False(await table.InsertRow(Entry(11111, SiloStatus.Joining), current.Version.Next())); // silo already there

        MembershipTableData after = await table.ReadAll();
        Assert.Equal(current.Version, after.Version);
        Assert.Single(after.Members);
    }

    [Fact]
    public async Task UpdateRow_StaleRowOrVersionETag_RefusedAndCurrentOnesAccepted()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();
        MembershipEntry entry = Entry(11111, SiloStatus.Joining);
        Assert.True(await table.InsertRow(entry, (await table.ReadAll()).Version.Next()));
        MembershipTableData read = await table.ReadAll();
        string rowEtag = read.Members[0].Item2;

        entry.Status = SiloStatus.Active;
        Assert.True(await table.UpdateRow(entry, rowEtag, read.Version.Next()));
        MembershipTableData after = await table.ReadAll();

        entry.Status = SiloStatus.Dead;
        Assert.False(await table.UpdateRow(entry, rowEtag, after.Version.Next()));                  // stale row ETag
        Assert.False(await table.UpdateRow(entry, after.Members[0].Item2, read.Version.Next()));    // stale version ETag
        Assert.False(await table.UpdateRow(Entry(19999, SiloStatus.Dead), after.Members[0].Item2, after.Version.Next())); // no such row
        MembershipTableData unchanged = await table.ReadAll();
        Assert.Equal(after.Version, unchanged.Version);
        Assert.Equal(SiloStatus.Active, unchanged.Members[0].Item1.Status);
    }

    [Fact]
    public async Task UpdateIAmAlive_BetweenReadAndUpdate_TimeWrittenAndEarlierReadStillUsable()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();
        MembershipEntry entry = Entry(11111, SiloStatus.Active);
        Assert.True(await table.InsertRow(entry, (await table.ReadAll()).Version.Next()));
        MembershipTableData read = await table.ReadAll();

        MembershipEntry heartbeat = Entry(11111, SiloStatus.Active);
        heartbeat.IAmAliveTime = Now.AddMinutes(5);
        await table.UpdateIAmAlive(heartbeat);
        MembershipTableData afterHeartbeat = await table.ReadAll();

        Assert.Equal(read.Version, afterHeartbeat.Version);
        Assert.Equal(read.Members[0].Item2, afterHeartbeat.Members[0].Item2);
        Assert.Equal(Now.AddMinutes(5), afterHeartbeat.Members[0].Item1.IAmAliveTime);
        Assert.Equal(SiloStatus.Active, afterHeartbeat.Members[0].Item1.Status);
        MembershipEntry vote = afterHeartbeat.Members[0].Item1;
        vote.AddSuspector(Silo(22222), Now.AddMinutes(6));
        Assert.True(await table.UpdateRow(vote, read.Members[0].Item2, read.Version.Next()));
    }

    [Fact]
    public async Task UpdateIAmAlive_NoSuchSilo_Throws()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();

        await Assert.ThrowsAsync<InvalidOperationException>(() => table.UpdateIAmAlive(Entry(11111, SiloStatus.Active)));
    }

    [Fact]
    public async Task CleanupDefunctSiloEntries_OldAndRecentDeadAndAlive_RemovesOnlyOldDead()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();
        MembershipEntry oldDead = Entry(11111, SiloStatus.Dead, alive: Now.AddHours(-2));
        MembershipEntry recentlyDeclaredDead = Entry(22222, SiloStatus.Dead, alive: Now.AddHours(-2));
        recentlyDeclaredDead.AddSuspector(Silo(33333), Now.AddMinutes(-1));
        MembershipEntry oldAlive = Entry(33333, SiloStatus.Active, alive: Now.AddHours(-2));
        foreach (MembershipEntry entry in new[] { oldDead, recentlyDeclaredDead, oldAlive })
        {
            Assert.True(await table.InsertRow(entry, (await table.ReadAll()).Version.Next()));
        }

        await table.CleanupDefunctSiloEntries(Now.AddHours(-1));

        MembershipTableData data = await table.ReadAll();
        Assert.Equal([22222, 33333], data.Members.Select(m => m.Item1.SiloAddress.Endpoint.Port).Order());
    }

    [Fact]
    public async Task DeleteMembershipTableEntries_TwoClusters_OnlyTheNamedOneIsEmptied()
    {
        PostgreSqlMembershipTable blue = await InitializedAsync("blue");
        PostgreSqlMembershipTable green = await InitializedAsync("green");
        Assert.True(await blue.InsertRow(Entry(11111, SiloStatus.Active), (await blue.ReadAll()).Version.Next()));
        Assert.True(await green.InsertRow(Entry(11111, SiloStatus.Active), (await green.ReadAll()).Version.Next()));

        await blue.DeleteMembershipTableEntries("blue");

        Assert.Empty((await blue.ReadAll()).Members);
        Assert.Single((await green.ReadAll()).Members);
    }

    [Fact]
    public async Task GetGateways_ActiveJoiningAndDeadSilos_ListsTheActiveOnesGatewayPorts()
    {
        PostgreSqlMembershipTable table = await InitializedAsync();
        Assert.True(await table.InsertRow(Entry(11111, SiloStatus.Active, proxyPort: 21111), (await table.ReadAll()).Version.Next()));
        Assert.True(await table.InsertRow(Entry(11112, SiloStatus.Joining, proxyPort: 21112), (await table.ReadAll()).Version.Next()));
        Assert.True(await table.InsertRow(Entry(11113, SiloStatus.Dead, proxyPort: 21113), (await table.ReadAll()).Version.Next()));
        Assert.True(await table.InsertRow(Entry(11114, SiloStatus.Active, proxyPort: 0), (await table.ReadAll()).Version.Next()));
        var provider = new PostgreSqlGatewayListProvider(table, TimeSpan.FromSeconds(30));

        IList<Uri> gateways = await provider.GetGateways();

        Uri gateway = Assert.Single(gateways);
        Assert.Equal(21111, gateway.Port);
        Assert.Equal("127.0.0.1", gateway.Host);
    }

    [Fact]
    public async Task GetGateways_TablesNotCreatedYet_Empty()
    {
        var provider = new PostgreSqlGatewayListProvider(Table(), TimeSpan.FromSeconds(30));

        Assert.Empty(await provider.GetGateways());
    }

    private PostgreSqlMembershipTable Table(string clusterId = "kilns") => new(_server.DataSource, _schema, clusterId);

    private async Task<PostgreSqlMembershipTable> InitializedAsync(string clusterId = "kilns")
    {
        PostgreSqlMembershipTable table = Table(clusterId);
        await table.InitializeMembershipTable(true);
        return table;
    }

    private static SiloAddress Silo(int port) => SiloAddress.New(new IPEndPoint(IPAddress.Loopback, port), 42);

    private static MembershipEntry Entry(int port, SiloStatus status, int proxyPort = 0, DateTime? alive = null) => new()
    {
        SiloAddress = Silo(port),
        Status = status,
        SuspectTimes = [],
        ProxyPort = proxyPort,
        HostName = "oven-host",
        SiloName = "silo-" + port,
        RoleName = "kilns",
        UpdateZone = 1,
        FaultZone = 2,
        StartTime = Now.AddHours(-3),
        IAmAliveTime = alive ?? Now,
    };
}
