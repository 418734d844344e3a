using System.Diagnostics;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Orleans.Configuration;
using Orleans.Runtime;
using StreamForecast.Alerts;
using StreamForecast.Orleans;
using StreamForecast.Orleans.PostgreSql;
using StreamForecast.Samples.ClusterNode;
using StreamForecast.Streaming;
using Xunit.Abstractions;

namespace StreamForecast.PostgreSql.Tests;

// Three ClusterNode silos as separate OS processes and a client in the test, on loopback, with membership and bucket
// state in the throwaway PostgreSQL server and nothing else shared. The silo hosting the busiest bucket is killed by
// process id (SIGKILL) mid-stream; the single-process engine on the same input is the oracle.
[Collection(PostgreSqlCollection.Name)]
public sealed class ClusterNodeKillTests : IAsyncLifetime
{
    private static readonly DateTimeOffset Start = new(2025, 6, 2, 0, 0, 0, TimeSpan.Zero);
    private static readonly TimeSpan NodeStartTimeout = TimeSpan.FromSeconds(90);
    private readonly PostgreSqlServer _server;
    private readonly ITestOutputHelper _output;
    private readonly string _clusterId = "kill-test-" + Guid.NewGuid().ToString("N")[..8];
    private readonly List<NodeProcess> _nodes = [];

    public ClusterNodeKillTests(PostgreSqlServer server, ITestOutputHelper output)
    {
        _server = server;
        _output = output;
    }

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync()
    {
        foreach (NodeProcess node in _nodes)
        {
            await node.DisposeAsync();
        }
    }

    [Fact]
    public async Task PostBatchAsync_NodeProcessKilledMidStream_ForecastsAlertsAndCountersEqualTheSingleProcessEngine()
    {
        var clock = Stopwatch.StartNew();
        List<Observation<string>> input = Stream(keys: 80, hours: 24, seed: 2027);

        // Oracle: the single-process engine with the node's own rules, on the same input in the same order.
        var expected = new Recorder();
        EngineCounters expectedCounters;
        var engine = new ForecastEngine<string>(ClusterNodeSetup.EngineOptions());
        using (engine.Forecasts.Subscribe(expected.Forecasts))
        using (engine.Alerts.Subscribe(expected.Alerts))
        {
            await engine.PostBatchAsync(input.ToArray());
            await engine.FlushAsync();
            expectedCounters = engine.GetCounters();
            await engine.DisposeAsync(); // completes after every subscriber has been handed everything
        }

        // The first node creates the tables; the other two then start together.
        _nodes.Add(await NodeProcess.StartAsync(_server.ConnectionString, _clusterId, NodeStartTimeout));
        NodeProcess[] more = await Task.WhenAll(
            NodeProcess.StartAsync(_server.ConnectionString, _clusterId, NodeStartTimeout),
            NodeProcess.StartAsync(_server.ConnectionString, _clusterId, NodeStartTimeout));
        _nodes.AddRange(more);
        _output.WriteLine($"three nodes up after {clock.Elapsed.TotalSeconds:F1} s");

        using IHost clientHost = new HostBuilder()
            .UseOrleansClient(client => client
                .UsePostgreSqlClustering(_server.ConnectionString)
                .Configure<ClusterOptions>(o =>
                {
                    o.ClusterId = _clusterId;
                    o.ServiceId = "streamforecast-sensors";
                })
                .Configure<ClientMessagingOptions>(o => o.ResponseTimeout = TimeSpan.FromSeconds(5))
                .Configure<GatewayOptions>(o => o.GatewayListRefreshPeriod = TimeSpan.FromSeconds(2)))
            .Build();
        await clientHost.StartAsync();
        IClusterClient orleans = clientHost.Services.GetRequiredService<IClusterClient>();

        var actual = new Recorder();
        int reposted = 0;
        NodeProcess? victim = null;
        await using (ForecastClusterClient<string> client = await ForecastCluster.ConnectAsync(orleans, ClusterNodeSetup.ClusterOptions(), SnapshotKeyCodecs.Utf8String))
        {
            using IDisposable forecasts = client.Forecasts.Subscribe(actual.Forecasts);
            using IDisposable alerts = client.Alerts.Subscribe(actual.Alerts);
            Observation<string>[][] batches = [.. input.Chunk(200)];
            int killAt = batches.Length * 2 / 5;
            for (int i = 0; i < batches.Length; i++)
            {
                Task inFlight = PostAsync(client, batches[i], () => reposted++);
                if (i == killAt)
                {
                    // kill -9 the process hosting the busiest sensor's bucket while a batch is in flight.
                    BucketStatus status = await client.Bucket(client.BucketOf("site-0/sensor-0")).GetStatusAsync();
                    victim = _nodes.Single(n => status.Silo.Contains($":{n.SiloPort}:", StringComparison.Ordinal));
                    await victim.KillAsync();
                    _output.WriteLine($"killed process {victim.ProcessId} (silo port {victim.SiloPort}) at batch {i} of {batches.Length}, {clock.Elapsed.TotalSeconds:F1} s");
                }

                await inFlight;
            }

            await client.FlushAsync();
            EngineCounters actualCounters = await client.GetCountersAsync();
            BucketStatus after = await client.Bucket(client.BucketOf("site-0/sensor-0")).GetStatusAsync();
            _output.WriteLine($"{input.Count} observations in {batches.Length} batches; busiest bucket now on {after.Silo}; client retries {client.Retries}, batches posted again {reposted}, missed outputs {client.MissedOutputs}, repeated outputs {client.RepeatedOutputs}");

            // The busiest bucket moved off the dead process, and nothing acknowledged was lost or counted twice.
            Assert.NotNull(victim);
            Assert.DoesNotContain($":{victim.SiloPort}:", after.Silo, StringComparison.Ordinal);
            Assert.Equal(expectedCounters.Observations, actualCounters.Observations);
            Assert.Equal(expectedCounters.PeriodsClosed, actualCounters.PeriodsClosed);
            Assert.Equal(expectedCounters.Restated, actualCounters.Restated);
            Assert.Equal(expectedCounters.Late, actualCounters.Late);
            Assert.Equal(expectedCounters.AlertsRaised, actualCounters.AlertsRaised);
            if (reposted == 0)
            {
                // A batch posted again by the test (not by the client's own retry) meets its applied part as duplicates.
                Assert.Equal(expectedCounters.Duplicates, actualCounters.Duplicates);
            }

            // Every forecast update and alert transition reached the subscriber once, in per-key order, equal to the engine's.
            Assert.Equal(0, client.MissedOutputs);
            for (int i = 0; i < 400 && actual.Count < expected.Count; i++)
            {
                await Task.Delay(25); // output travels one-way after each acknowledgement; the last may still be on the wire
            }
        }

        Assert.Equal(expected.ForecastsByKey.Keys.Order(StringComparer.Ordinal), actual.ForecastsByKey.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<ForecastUpdate<string>> updates) in expected.ForecastsByKey)
        {
            Assert.Equal(updates, actual.ForecastsByKey[key]);
        }

        Assert.NotEmpty(expected.AlertsByKey);
        Assert.Equal(expected.AlertsByKey.Keys.Order(StringComparer.Ordinal), actual.AlertsByKey.Keys.Order(StringComparer.Ordinal));
        foreach ((string key, List<DriftAlert<string>> list) in expected.AlertsByKey)
        {
            Assert.Equal(list, actual.AlertsByKey[key]);
        }

        Assert.True(_nodes.Count(n => !n.HasExited) == 2, "the two other node processes kept running");

        // The membership the nodes found each other by is in the database: three silos, the killed one declared dead.
        var statuses = new Dictionary<int, int>();
        await using (var members = _server.DataSource.CreateCommand($"SELECT address, status FROM {PostgreSqlClusteringExtensions.DefaultSchemaName}.members WHERE cluster_id = $1"))
        {
            members.Parameters.Add(new Npgsql.NpgsqlParameter { Value = _clusterId });
            await using var reader = await members.ExecuteReaderAsync();
            while (await reader.ReadAsync())
            {
                statuses.Add(SiloAddress.FromParsableString(reader.GetString(0)).Endpoint.Port, reader.GetInt32(1));
            }
        }

        Assert.Equal(_nodes.Select(n => n.SiloPort).Order(), statuses.Keys.Order());
        Assert.Equal((int)SiloStatus.Dead, statuses[victim!.SiloPort]);
        Assert.All(_nodes.Where(n => n != victim), n => Assert.Equal((int)SiloStatus.Active, statuses[n.SiloPort]));
        await clientHost.StopAsync();
        _output.WriteLine($"whole test {clock.Elapsed.TotalSeconds:F1} s");
    }

    [Fact]
    public async Task StartAsync_NoConnectionString_ExitsWithCode2NamingTheSetting()
    {
        var error = await Assert.ThrowsAsync<InvalidOperationException>(() => NodeProcess.StartAsync("", _clusterId, NodeStartTimeout));

        Assert.Contains("exited with code 2", error.Message, StringComparison.Ordinal);
        Assert.Contains("ClusterNode:ConnectionString is missing", error.Message, StringComparison.Ordinal);
    }

    // The client retries a call with the same call id itself; if it gives up, the test posts the batch again with the
    // same event ids, as a producer would, so the part already applied is recognised by id and not counted twice.
    private static async Task PostAsync(ForecastClusterClient<string> client, Observation<string>[] batch, Action reposted)
    {
        for (int attempt = 1; ; attempt++)
        {
            try
            {
                await client.PostBatchAsync(batch);
                return;
            }
            catch (Exception) when (attempt < 3)
            {
                reposted();
            }
        }
    }

    // An invented fleet of sensors: key i reports about 1 + 30 / (i + 1) readings an hour; a fifth of them step up by 15
    // in the second half (so drift alerts open); now and then a reading is delivered twice; order shuffled within the hour.
    private static List<Observation<string>> Stream(int keys, int hours, int seed)
    {
        var random = new Random(seed);
        var events = new List<Observation<string>>();
        int id = 0;
        for (int h = 0; h < hours; h++)
        {
            var hour = new List<Observation<string>>();
            for (int k = 0; k < keys; k++)
            {
                string key = $"site-{k % 7}/sensor-{k}";
                int readings = 1 + (30 / (k + 1)) - (random.Next(3) == 0 ? 1 : 0);
                double level = 20 + (k % 13) + (h > hours / 2 && k % 5 == 0 ? 15 : 0);
                for (int r = 0; r < readings; r++)
                {
                    var o = new Observation<string>(key, Start.AddHours(h).AddSeconds(random.Next(3600)), Math.Round(level + (random.NextDouble() * 6) - 3, 2), $"e{id++}");
                    hour.Add(o);
                    if (random.Next(40) == 0)
                    {
                        hour.Add(o);
                    }
                }
            }

            events.AddRange(hour.OrderBy(_ => random.Next()));
        }

        return events;
    }

    private sealed class Recorder
    {
        private int _count;

        public Recorder()
        {
            Forecasts = new Sink<ForecastUpdate<string>>(this, u => u.Key, ForecastsByKey);
            Alerts = new Sink<DriftAlert<string>>(this, a => a.Key, AlertsByKey);
        }

        public Dictionary<string, List<ForecastUpdate<string>>> ForecastsByKey { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, List<DriftAlert<string>>> AlertsByKey { get; } = new(StringComparer.Ordinal);

        public IObserver<ForecastUpdate<string>> Forecasts { get; }

        public IObserver<DriftAlert<string>> Alerts { get; }

        public int Count => Volatile.Read(ref _count);

        private sealed class Sink<T>(Recorder owner, Func<T, string> keyOf, Dictionary<string, List<T>> byKey) : IObserver<T>
        {
            public void OnCompleted()
            {
            }

            public void OnError(Exception error)
            {
            }

            public void OnNext(T value)
            {
                lock (owner)
                {
                    string key = keyOf(value);
                    if (!byKey.TryGetValue(key, out List<T>? list))
                    {
                        byKey[key] = list = [];
                    }

                    list.Add(value);
                    owner._count++;
                }
            }
        }
    }
}
