using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using StreamForecast.Samples.SensorThroughput;
using Xunit.Abstractions;

namespace StreamForecast.Hosting.Tests.Samples;

/// <summary>
/// The sensor sample's broker mode against a real Mosquitto broker (a throwaway one on a free loopback port): readings
/// published with <c>mosquitto_pub -q 1</c>, the consumer killed by process id mid-stream and restarted with the same
/// client id: every reading is counted exactly once, the redelivered and resent ones as duplicates; a garbled message is
/// refused; a third start after a graceful stop has nothing to replay.
/// </summary>
public sealed partial class SensorBrokerKillTests(ITestOutputHelper log) : IDisposable
{
    private const string TopicFilter = "plant/+/throughput";
    private const int KillAfter = 300;
    private static readonly TimeSpan s_wait = TimeSpan.FromSeconds(40);
    private static readonly JsonSerializerOptions s_json = new(JsonSerializerDefaults.Web);
    private readonly TempPath _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public async Task Restart_AfterKillMidStream_CountsEveryPublishedReadingOnce()
    {
        var clock = Stopwatch.StartNew();
        // The sample's invented fleet: four gateways, one offline for twelve minutes; 1,368 readings with distinct event ids.
        List<ThroughputReading> readings = [.. FleetScenario.Devices.SelectMany((d, i) => FleetScenario.Readings(d.Device, d.Rate, seed: 100 + i))];
        int total = readings.Count;
        await using MosquittoBroker broker = await MosquittoBroker.StartAsync(TimeSpan.FromSeconds(10));
        string[] args =
        [
            "--broker", $"127.0.0.1:{broker.Port}", "--topic", TopicFilter, "--client-id", "throughput-forecaster", "--data", _temp.File("data"),
            // No periodic checkpoint during the test: after the kill, everything taken so far is replayed from the
            // input log, so the restarted engine's counters cover every reading (the start line below checks it).
            "--StreamForecast:Checkpoints:Interval=01:00:00",
        ];

        // Run 1: subscribes (creating the persistent session), takes readings as they arrive and is killed mid-stream.
        int killedPid;
        int acknowledgedBeforeKill;
        await using (SensorConsumerProcess first = SensorConsumerProcess.Start(args))
        {
            killedPid = first.Id;
            string ready = await first.WaitForLineAsync(l => l.StartsWith(BrokerSubscriber.ReadyPrefix, StringComparison.Ordinal), s_wait, "subscribing");
            Assert.Contains("(QoS 1, new session); engine started empty (no checkpoint yet), then replayed 0 logged readings (0 refused)", ready, StringComparison.Ordinal);

            // Four publishers at once, one per gateway topic; the broker queues what the consumer has not taken yet.
            // The consumer is killed by its id as soon as it reports 300 acknowledgements, whether or not the
            // publishers are done.
            Task published = Task.WhenAll(FleetScenario.Devices.Select(d => broker.PublishAsync(
                $"plant/{d.Device}/throughput", "gateway-" + d.Device, readings.Where(r => r.Device == d.Device).Select(r => JsonSerializer.Serialize(r, s_json)))));
            string status = await first.WaitForLineAsync(l => Parse(l, BrokerSubscriber.StatusPrefix) is { Acknowledged: >= KillAfter }, s_wait, $"acknowledging {KillAfter} readings");
            first.Kill();
            acknowledgedBeforeKill = Parse(status, BrokerSubscriber.StatusPrefix)!.Value.Acknowledged;
            await published;
        }

        // Run 2: the same client id and data folder. The engine replays the input log (every acknowledged reading is in
        // it; so may be a few taken but not yet acknowledged), the broker delivers the rest of the session's messages.
        await using SensorConsumerProcess second = SensorConsumerProcess.Start(args);
        string resumed = await second.WaitForLineAsync(l => l.StartsWith(BrokerSubscriber.ReadyPrefix, StringComparison.Ordinal), s_wait, "subscribing again");
        Match start = StartLine().Match(resumed);
        Assert.True(start.Success, resumed);
        int replayed = int.Parse(start.Groups["replayed"].Value, CultureInfo.InvariantCulture);
        Assert.InRange(replayed, acknowledgedBeforeKill, total - 1); // mid-stream: nothing acknowledged lost, not everything taken yet

        await second.WaitForLineAsync(l => Parse(l, BrokerSubscriber.StatusPrefix) is { } c && c.Taken >= total, s_wait, $"taking all {total} readings");

        // A gateway that never saw the broker's acknowledgement publishes its last reading again: counted once.
        ThroughputReading repeat = readings.FindLast(r => r.Device == FleetScenario.Devices[0].Device)!;
        await broker.PublishAsync($"plant/{repeat.Device}/throughput", "gateway-resend", [JsonSerializer.Serialize(repeat, s_json)]);
        await second.WaitForLineAsync(l => Parse(l, BrokerSubscriber.StatusPrefix) is { } c && c.Taken >= total && c.Duplicates >= 1 && c.Acknowledged >= total - replayed + 1, s_wait, "ignoring the resent reading");

        // A message that is not a reading is refused (and acknowledged, so the broker does not send it forever).
        await broker.PublishAsync("plant/dock-b/throughput", "gateway-garbled", ["{\"device\":\"dock-b\",\"sequence\":"]);
        await second.WaitForLineAsync(l => Parse(l, BrokerSubscriber.StatusPrefix) is { Refused: 1 }, s_wait, "refusing the garbled message");
        Assert.Equal(0, await second.StopAsync(TimeSpan.FromSeconds(30)));
        string stopped = (await second.WaitForLineAsync(l => l.StartsWith(BrokerSubscriber.StoppedPrefix, StringComparison.Ordinal), TimeSpan.FromSeconds(1), "its stop report"));
        Counts end = Parse(stopped, BrokerSubscriber.StoppedPrefix)!.Value;

        // Every published reading counted exactly once: the engine took each event id once (1,368 distinct), refused,
        // dropped as late or rejected none, and ignored as duplicates exactly the redelivered messages that were already
        // in the log and the resent one: run 2 acknowledged the readings the log did not hold plus those repeats.
        Assert.Equal(total, end.Taken);
        Assert.Equal((1, 0, 0), (end.Refused, end.Late, end.Rejected));
        Assert.Equal(end.Acknowledged - (total - replayed), end.Duplicates);
        Assert.True(end.Duplicates >= 1, stopped);
        // Each gateway's open interval is the one its last reading's time, less the allowed lateness, falls in: the
        // intervals before it closed with all their readings.
        DateTimeOffset last = readings.Max(r => r.At) - BrokerMode.AllowedLateness;
        var open = new DateTimeOffset(last.Year, last.Month, last.Day, last.Hour, last.Minute, 0, TimeSpan.Zero);
        foreach ((string device, _) in FleetScenario.Devices)
        {
            Assert.Contains($"  {device,-7} open interval from {open:yyyy-MM-dd HH:mm}; next ", second.Output, StringComparison.Ordinal);
        }

        // Run 3, after the graceful stop: the on-stop checkpoint holds every logged reading (the replayed ones and
        // every one run 2 acknowledged, duplicates included), so nothing is replayed and the session has nothing queued.
        await using (SensorConsumerProcess third = SensorConsumerProcess.Start(args))
        {
            string again = await third.WaitForLineAsync(l => l.StartsWith(BrokerSubscriber.ReadyPrefix, StringComparison.Ordinal), s_wait, "subscribing a third time");
            Assert.EndsWith($"(QoS 1, session resumed); engine restored {FleetScenario.Devices.Count} series from the checkpoint at input position {replayed + end.Acknowledged}, then replayed 0 logged readings (0 refused)", again, StringComparison.Ordinal);
            Assert.Equal(0, await third.StopAsync(TimeSpan.FromSeconds(30)));
            string idle = await third.WaitForLineAsync(l => l.StartsWith(BrokerSubscriber.StoppedPrefix, StringComparison.Ordinal), TimeSpan.FromSeconds(1), "its stop report");
            Assert.Equal(new Counts(0, 0, 0, 0, 0, 0), Parse(idle, BrokerSubscriber.StoppedPrefix));
        }

        log.WriteLine($"{total} readings published; consumer PID {killedPid} killed after {acknowledgedBeforeKill}+ acknowledgements; restart replayed {replayed} from the input log, " +
            $"then acknowledged {end.Acknowledged} ({end.Duplicates} duplicates, 1 of them resent on purpose); engine took {end.Taken}; {clock.Elapsed.TotalSeconds:0.0} s");
    }

    private static Counts? Parse(string line, string prefix)
    {
        if (!line.StartsWith(prefix, StringComparison.Ordinal))
        {
            return null;
        }

        Match m = CountsLine().Match(line);
        Assert.True(m.Success, line);
        int N(string group) => int.Parse(m.Groups[group].Value, CultureInfo.InvariantCulture);
        return new Counts(N("ack"), N("refused"), N("taken"), N("duplicates"), N("late"), N("rejected"));
    }

    [GeneratedRegex(@"acknowledged (?<ack>\d+) readings this run \((?<refused>\d+) refused\); engine: (?<taken>\d+) taken, (?<duplicates>\d+) duplicates, (?<late>\d+) late, (?<rejected>\d+) rejected$")]
    private static partial Regex CountsLine();

    [GeneratedRegex(@"\(QoS 1, session resumed\); engine started empty \(no checkpoint yet\), then replayed (?<replayed>\d+) logged readings \(0 refused\)$")]
    private static partial Regex StartLine();

    private readonly record struct Counts(int Acknowledged, int Refused, int Taken, int Duplicates, int Late, int Rejected);
}
