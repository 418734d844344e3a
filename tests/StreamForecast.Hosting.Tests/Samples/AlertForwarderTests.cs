using System.Text.Json;
using StreamForecast.Samples.AlertForwarder;

namespace StreamForecast.Hosting.Tests.Samples;

public sealed class AlertForwarderTests : IDisposable
{
    private readonly TempPath _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public async Task RunAsync_CrashAndReplay_ForwardsEachTransitionOnceAndAStuckOrFailingSubscriberDoesNotHoldIngestion()
    {
        using var output = new StringWriter();

        var (first, second) = await ForwarderRun.RunAsync(_temp.Directory, output);

        // Run 1 raised (and escalated) the shifted series' episode; ingestion ended while the pager was still stuck on
        // its first alert, and every webhook failure was absorbed.
        Assert.Equal(ForwarderRun.CrashAt, first.Observations);
        Assert.True(first.Forwarded >= 1);
        Assert.Equal(0, first.PagerDeliveredWhenIngestionEnded);
        Assert.Equal(first.Forwarded, first.WebhookFailures);

        // Run 2 restored at the checkpoint, replayed the rest, and the repeats of run 1's transitions were dropped.
        Assert.Equal(ForwarderRun.CheckpointAt, second.ReplayFrom);
        Assert.Equal(ForwarderRun.EventCount - ForwarderRun.CheckpointAt, second.Observations);
        Assert.Equal(first.Forwarded, second.Repeats);

        string[] lines = File.ReadAllLines(_temp.File("alerts.jsonl"));
        Assert.Equal(first.Forwarded + second.Forwarded, lines.Length);
        var alerts = lines.Select(l => JsonSerializer.Deserialize<ForwardedAlert>(l, JsonSerializerOptions.Web)!).ToList();
        Assert.Equal(alerts.Count, alerts.Select(a => (a.Series, a.Rule, a.EpisodeId, a.Transition)).Distinct().Count());
        ForwardedAlert raised = alerts[0];
        Assert.Equal(("station-square/cinnamon-bun", 1L, "Raised", "UnderForecast"), (raised.Series, raised.EpisodeId, raised.Transition, raised.Direction));

        string text = output.ToString();
        Assert.Contains("forwarded: station-square/cinnamon-bun raised (episode 1, UnderForecast", text, StringComparison.Ordinal);
        Assert.Contains($"run 2: restored at input position {ForwarderRun.CheckpointAt}", text, StringComparison.Ordinal);
        Assert.Contains($"{first.Forwarded} repeats ignored", text, StringComparison.Ordinal);
        Assert.Contains($"alerts.jsonl holds {lines.Length} transitions, each once", text, StringComparison.Ordinal);
    }
}
