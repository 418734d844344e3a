using System.Buffers;
using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text.Json;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using MQTTnet;
using MQTTnet.Protocol;
using MQTTnet.Server;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Hosting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.SensorThroughput;

/// <summary>What the run saw.</summary>
/// <param name="Port">The loopback port the broker listened on.</param>
/// <param name="Published">Readings the devices published.</param>
/// <param name="Received">Readings the subscriber received and posted.</param>
/// <param name="Updates">Every forecast update the engine published (one per device and closed, non-missing interval).</param>
/// <param name="Alerts">Every drift transition the engine published.</param>
/// <param name="Counters">The engine's counters at the end.</param>
public sealed record FleetSummary(int Port, int Published, int Received, IReadOnlyList<ForecastUpdate<string>> Updates, IReadOnlyList<DriftAlert<string>> Alerts, EngineCounters Counters);

/// <summary>The sample's run: broker, devices, subscriber and engine in one process, all on 127.0.0.1.</summary>
public static class FleetRun
{
    /// <summary>The topic filter the subscriber listens on; devices publish to <c>fleet/&lt;device&gt;/throughput</c>.</summary>
    public const string TopicFilter = "fleet/+/throughput";

    private static readonly JsonSerializerOptions s_json = new(JsonSerializerDefaults.Web);

    /// <summary>Runs the scenario and writes its report.</summary>
    /// <param name="output">Where to write.</param>
    /// <param name="cancellationToken">Stops the run.</param>
    /// <returns>What the run saw.</returns>
    public static async Task<FleetSummary> RunAsync(TextWriter output, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(output);
        int port = FreeLoopbackPort();
        MqttServerOptions brokerOptions = new MqttServerOptionsBuilder()
            .WithDefaultEndpoint()
            .WithDefaultEndpointBoundIPAddress(IPAddress.Loopback)
            .WithDefaultEndpointBoundIPV6Address(IPAddress.None)
            .WithDefaultEndpointPort(port)
            .Build();
        using MqttServer broker = new MqttServerFactory().CreateMqttServer(brokerOptions);
        await broker.StartAsync();
        output.WriteLine($"broker on 127.0.0.1:{port}; {FleetScenario.Devices.Count} gateways publish a message count every 10 s of simulated time from {FleetScenario.Start:yyyy-MM-dd HH:mm} UTC");

        using IHost host = BuildHost();
        await host.StartAsync(cancellationToken);
        ForecastEngine<string> engine = host.Services.GetRequiredService<HostedForecastEngine<string>>().Engine;
        var updates = new Collected<ForecastUpdate<string>>();
        var alerts = new Collected<DriftAlert<string>>();
        using IDisposable forecastFeed = engine.Forecasts.Subscribe(updates);
        using IDisposable alertFeed = engine.Alerts.Subscribe(alerts);

        var clients = new MqttClientFactory();
        using IMqttClient subscriber = clients.CreateMqttClient();
        int received = 0;
        subscriber.ApplicationMessageReceivedAsync += async e =>
        {
            ThroughputReading? reading = JsonSerializer.Deserialize<ThroughputReading>(e.ApplicationMessage.Payload.ToArray(), s_json);
            if (reading is null || e.ApplicationMessage.Topic != $"fleet/{reading.Device}/throughput")
            {
                return;
            }

            await engine.PostAsync(new Observation<string>(reading.Device, reading.At, reading.Messages, $"{reading.Device}#{reading.Sequence}"), cancellationToken);
            Interlocked.Increment(ref received);
        };
        await subscriber.ConnectAsync(ClientOptions(port, "throughput-forecaster"), cancellationToken);
        await subscriber.SubscribeAsync(clients.CreateSubscribeOptionsBuilder().WithTopicFilter(TopicFilter, MqttQualityOfServiceLevel.AtLeastOnce).Build(), cancellationToken);

        var clock = Stopwatch.StartNew();
        int[] published = await Task.WhenAll(FleetScenario.Devices.Select((d, i) => PublishDeviceAsync(clients, port, d.Device, d.Rate, seed: 100 + i, cancellationToken)));
        int sent = published.Sum();
        var deadline = Stopwatch.StartNew();
        while (Volatile.Read(ref received) < sent && deadline.Elapsed < TimeSpan.FromSeconds(15))
        {
            await Task.Delay(20, cancellationToken);
        }

        output.WriteLine($"received {received} of {sent} readings on {TopicFilter} in {clock.Elapsed.TotalSeconds:0.0} s; bucketed into {FleetScenario.Interval.TotalMinutes:0}-minute intervals by event time");
        await subscriber.DisconnectAsync(cancellationToken: cancellationToken);
        await engine.FlushAsync(cancellationToken); // end of input: close every device's last interval
        EngineCounters counters = engine.GetCounters();
        await host.StopAsync(cancellationToken); // waits until every subscriber has been told everything
        await broker.StopAsync();

        var summary = new FleetSummary(port, sent, received, updates.Items, alerts.Items, counters);
        Report(summary, output);
        return summary;
    }

    private static void Report(FleetSummary s, TextWriter output)
    {
        string offline = FleetScenario.OfflineDevice;
        List<ForecastUpdate<string>> offlineUpdates = s.Updates.Where(u => u.Key == offline && !u.IsRestatement).ToList();
        int missing = FleetScenario.Intervals - offlineUpdates.Count;
        int zeroScored = offlineUpdates.Count(u => u.Actual == 0);
        output.WriteLine($"{offline} offline {FleetScenario.Start + (FleetScenario.Interval * FleetScenario.OfflineFrom):HH:mm} to {FleetScenario.Start + (FleetScenario.Interval * FleetScenario.OfflineUntil):HH:mm}: {missing} intervals missing, not zero ({zeroScored} zero actuals scored); engine gap periods: {s.Counters.GapPeriods}");
        output.WriteLine("messages per minute (last interval; next-interval forecast with 80% interval; MAD; tracking signal):");
        foreach ((string device, _) in FleetScenario.Devices)
        {
            ForecastUpdate<string> last = s.Updates.Last(u => u.Key == device);
            output.WriteLine($"  {device,-7} {last.Actual,5:0}; next {last.Next.Value,6:0.0} (80%: {last.Next.Lower:0.0} to {last.Next.Upper:0.0}); MAD {last.Errors.Mad:0.0}, tracking signal {last.Errors.TrackingSignal:0.00}");
        }

        foreach (DriftAlert<string> a in s.Alerts)
        {
            DriftTransition t = a.Transition;
            output.WriteLine($"drift: {a.Key} {t.Kind.ToString().ToLowerInvariant()} (CUSUM episode {t.EpisodeId}, {t.Direction}, {t.Severity}) at the interval starting {a.PeriodStart:HH:mm}");
        }

        var drifting = s.Alerts.Select(a => a.Key).Distinct().ToList();
        var steady = FleetScenario.Devices.Select(d => d.Device).Where(d => !drifting.Contains(d)).ToList();
        output.WriteLine($"drift reported for {(drifting.Count == 0 ? "no gateway" : string.Join(", ", drifting))}; none for {string.Join(", ", steady)}");
    }

    private static IHost BuildHost()
    {
        HostApplicationBuilder builder = Host.CreateApplicationBuilder(new HostApplicationBuilderSettings { DisableDefaults = true });
        builder.Configuration.AddInMemoryCollection(new Dictionary<string, string?>
        {
            ["StreamForecast:SubscriberCapacity"] = "10000",
        });
        builder.Logging.AddSimpleConsole().SetMinimumLevel(LogLevel.Error);
        builder.Services.AddStreamForecast<string>(builder.Configuration.GetSection("StreamForecast"), o =>
        {
            o.DefaultSeries = SeriesFor(TimeSpan.FromSeconds(30));
            o.KeyComparer = StringComparer.Ordinal;
            o.Partitions = 2;
        });
        return builder.Build();
    }

    /// <summary>How a gateway's throughput is forecast, in both modes.</summary>
    /// <param name="allowedLateness">How late (by event time) a reading may arrive and still count.</param>
    /// <returns>The series options.</returns>
    internal static SeriesOptions SeriesFor(TimeSpan allowedLateness) => new(
        new ExponentialSmoothingOptions(alpha: 0.2),
        PeriodCalendar.FixedInterval(FleetScenario.Interval),
        lateness: new LatenessPolicy(allowedLateness),
        gaps: GapPolicy.Missing, // an offline gateway's silence is no data, not zero traffic
        rules: [new CusumRuleOptions(decisionInterval: 5, warmUpPeriods: 10)]);

    private static async Task<int> PublishDeviceAsync(MqttClientFactory clients, int port, string device, double rate, int seed, CancellationToken cancellationToken)
    {
        using IMqttClient client = clients.CreateMqttClient();
        await client.ConnectAsync(ClientOptions(port, device), cancellationToken);
        List<ThroughputReading> readings = FleetScenario.Readings(device, rate, seed);
        foreach (ThroughputReading reading in readings)
        {
            MqttApplicationMessage message = new MqttApplicationMessageBuilder()
                .WithTopic($"fleet/{device}/throughput")
                .WithPayload(JsonSerializer.SerializeToUtf8Bytes(reading, s_json))
                .WithQualityOfServiceLevel(MqttQualityOfServiceLevel.AtLeastOnce)
                .Build();
            await client.PublishAsync(message, cancellationToken);
        }

        await client.DisconnectAsync(cancellationToken: cancellationToken);
        return readings.Count;
    }

    private static MqttClientOptions ClientOptions(int port, string clientId) =>
        new MqttClientOptionsBuilder().WithTcpServer("127.0.0.1", port).WithClientId(clientId).WithCleanSession().Build();

    private static int FreeLoopbackPort()
    {
        var probe = new TcpListener(IPAddress.Loopback, 0);
        probe.Start();
        int port = ((IPEndPoint)probe.LocalEndpoint).Port;
        probe.Stop();
        return port;
    }

    /// <summary>A push subscriber that keeps what it is given (delivery calls it one item at a time).</summary>
    private sealed class Collected<T> : IObserver<T>
    {
        private readonly List<T> _items = [];

        public IReadOnlyList<T> Items
        {
            get
            {
                lock (_items)
                {
                    return _items.ToList();
                }
            }
        }

        public void OnNext(T value)
        {
            lock (_items)
            {
                _items.Add(value);
            }
        }

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }
    }
}
