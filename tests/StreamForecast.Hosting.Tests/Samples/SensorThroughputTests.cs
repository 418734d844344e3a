using StreamForecast.Samples.SensorThroughput;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Samples;

public sealed class SensorThroughputTests
{
    [Fact]
    public async Task RunAsync_OfflineAndDriftingGateways_GapIsMissingNotZeroAndOnlyTheDriftingGatewayAlerts()
    {
        using var output = new StringWriter();
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(60));

        FleetSummary run = await FleetRun.RunAsync(output, timeout.Token);

        // Every reading crossed the loopback broker and was taken by the engine once.
        int expected = FleetScenario.Devices.Count * FleetScenario.Intervals * FleetScenario.ReadingsPerInterval
            - ((FleetScenario.OfflineUntil - FleetScenario.OfflineFrom) * FleetScenario.ReadingsPerInterval);
        Assert.Equal(expected, run.Published);
        Assert.Equal(expected, run.Received);
        Assert.Equal(expected, run.Counters.Observations);
        Assert.Equal(0, run.Counters.Duplicates + run.Counters.Late + run.Counters.Rejected);

        // The offline stretch is missing, not zero: no update (so no scored actual) for those intervals, none with a
        // zero actual, and the engine counted exactly those intervals as gaps.
        int offlineIntervals = FleetScenario.OfflineUntil - FleetScenario.OfflineFrom;
        var offline = run.Updates.Where(u => u.Key == FleetScenario.OfflineDevice).ToList();
        Assert.Equal(FleetScenario.Intervals - offlineIntervals, offline.Count);
        Assert.DoesNotContain(offline, u => u.Actual == 0 || u.IsImputed);
        for (int i = FleetScenario.OfflineFrom; i < FleetScenario.OfflineUntil; i++)
        {
            DateTimeOffset start = FleetScenario.Start + (FleetScenario.Interval * i);
            Assert.DoesNotContain(offline, u => u.PeriodStart == start);
        }

        Assert.Equal(offlineIntervals, run.Counters.GapPeriods);

        // Buckets are the 1-minute sums of the readings: every update starts on an interval boundary, and a steady device's actual is
        // the sum of six readings within ±√rate of its 10 s rate, each rounded (±0.5).
        foreach ((string device, double rate) in FleetScenario.Devices)
        {
            var ofDevice = run.Updates.Where(u => u.Key == device).ToList();
            Assert.All(ofDevice, u => Assert.Equal(0, (u.PeriodStart - FleetScenario.Start).Ticks % FleetScenario.Interval.Ticks));
            if (device != FleetScenario.DriftingDevice)
            {
                Assert.All(ofDevice, u => Assert.InRange(u.Actual, ((rate - Math.Sqrt(rate)) * 6) - 3, ((rate + Math.Sqrt(rate)) * 6) + 3));
            }
        }

        // Drift: the drifting gateway raised an UnderForecast episode (actuals above forecast) after its drift began;
        // no steady gateway, and not the one that was offline, raised anything.
        DriftAlert<string> raised = Assert.Single(run.Alerts, a => a.Transition.Kind == Alerts.DriftTransitionKind.Raised);
        Assert.Equal(FleetScenario.DriftingDevice, raised.Key);
        Assert.Equal(Alerts.DriftDirection.UnderForecast, raised.Transition.Direction);
        Assert.True(raised.PeriodStart >= FleetScenario.Start + (FleetScenario.Interval * FleetScenario.DriftFrom));
        Assert.All(run.Alerts, a => Assert.Equal(FleetScenario.DriftingDevice, a.Key));

        string text = output.ToString();
        Assert.Contains($"broker on 127.0.0.1:{run.Port}", text, StringComparison.Ordinal);
        Assert.Contains($"received {expected} of {expected} readings on fleet/+/throughput", text, StringComparison.Ordinal);
        Assert.Contains($"press-c offline 08:20 to 08:32: {offlineIntervals} intervals missing, not zero (0 zero actuals scored); engine gap periods: {offlineIntervals}", text, StringComparison.Ordinal);
        Assert.Contains("drift: kiln-d raised (CUSUM episode 1, UnderForecast, Warning)", text, StringComparison.Ordinal);
        Assert.Contains("drift reported for kiln-d; none for dock-a, dock-b, press-c", text, StringComparison.Ordinal);
    }
}
