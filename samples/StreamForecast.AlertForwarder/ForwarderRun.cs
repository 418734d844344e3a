using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Hosting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.AlertForwarder;

/// <summary>What one process lifetime of the run saw.</summary>
/// <param name="ReplayFrom">The input position the engine restored at.</param>
/// <param name="Forwarded">Transitions forwarded.</param>
/// <param name="Repeats">Transitions dropped as already forwarded.</param>
/// <param name="PagerDeliveredWhenIngestionEnded">Alerts the stuck pager had handled when the last event was processed.</param>
/// <param name="PagerWaitingWhenIngestionEnded">Alerts waiting in the stuck pager's buffer at that moment.</param>
/// <param name="WebhookFailures">Exceptions thrown by the failing webhook (each reported, none fatal).</param>
/// <param name="Observations">Observations the engine took.</param>
public sealed record LifetimeSummary(long ReplayFrom, int Forwarded, int Repeats, long PagerDeliveredWhenIngestionEnded, int PagerWaitingWhenIngestionEnded, long WebhookFailures, long Observations);

/// <summary>The sample's run: two lifetimes of a host over the same checkpoint file and alert file.</summary>
public static class ForwarderRun
{
    /// <summary>The number of invented sale events (3 series × 120 days).</summary>
    public const int EventCount = 360;

    /// <summary>Where the first lifetime takes its last checkpoint.</summary>
    public const int CheckpointAt = 180;

    /// <summary>Where the first lifetime stops without a final checkpoint, as in a crash.</summary>
    public const int CrashAt = 240;

    /// <summary>Runs both lifetimes.</summary>
    /// <param name="dataDirectory">Where the checkpoint database and <c>alerts.jsonl</c> live.</param>
    /// <param name="output">Where to write.</param>
    /// <returns>The summaries of both lifetimes.</returns>
    public static async Task<(LifetimeSummary First, LifetimeSummary Second)> RunAsync(string dataDirectory, TextWriter output)
    {
        Directory.CreateDirectory(dataDirectory);
        List<Observation<string>> input = Sales();
        output.WriteLine($"run 1: posting events 0 to {CrashAt - 1} of {EventCount}; checkpoint after event {CheckpointAt - 1}");
        LifetimeSummary first = await LifetimeAsync(dataDirectory, input, stopAt: CrashAt, checkpointAt: CheckpointAt, crash: true, output);
        output.WriteLine($"run 1: stopped without a final checkpoint (as in a crash); {first.Forwarded} transitions forwarded");
        output.WriteLine($"  ingestion finished while the pager was stuck: it had handled {first.PagerDeliveredWhenIngestionEnded} alerts, {first.PagerWaitingWhenIngestionEnded} waiting; the failing webhook threw {first.WebhookFailures} times");

        LifetimeSummary second = await LifetimeAsync(dataDirectory, input, stopAt: EventCount, checkpointAt: null, crash: false, output);
        output.WriteLine($"run 2: restored at input position {second.ReplayFrom} and replayed events {second.ReplayFrom} to {EventCount - 1}: {second.Forwarded} new transitions forwarded, {second.Repeats} repeats ignored");
        output.WriteLine($"alerts.jsonl holds {File.ReadLines(Path.Combine(dataDirectory, "alerts.jsonl")).Count()} transitions, each once");
        return (first, second);
    }

    private static async Task<LifetimeSummary> LifetimeAsync(string data, List<Observation<string>> input, int stopAt, int? checkpointAt, bool crash, TextWriter output)
    {
        HostApplicationBuilder builder = Host.CreateApplicationBuilder(new HostApplicationBuilderSettings { DisableDefaults = true });
        builder.Configuration.AddInMemoryCollection(new Dictionary<string, string?>
        {
            ["StreamForecast:Checkpoints:File"] = Path.Combine(data, "engine.db"),
            ["StreamForecast:Checkpoints:OnStop"] = crash ? "false" : "true",
            ["StreamForecast:SubscriberCapacity"] = "1000",
        });
        builder.Logging.AddSimpleConsole().SetMinimumLevel(LogLevel.Error);
        builder.Services.AddStreamForecast<string>(builder.Configuration.GetSection("StreamForecast"), o =>
        {
            o.DefaultSeries = new SeriesOptions(
                new ExponentialSmoothingOptions(alpha: 0.1),
                PeriodCalendar.Daily(TimeZoneInfo.Utc),
                rules: [new CusumRuleOptions(decisionInterval: 5, warmUpPeriods: 21, periodsToClear: 5)]);
            o.KeyComparer = StringComparer.Ordinal;
            o.Partitions = 2;
        });
        using IHost host = builder.Build();
        await host.StartAsync();
        var handle = host.Services.GetRequiredService<HostedForecastEngine<string>>();
        ForecastEngine<string> engine = handle.Engine;
        long from = handle.Start.ReplayFrom;

        using var forwarder = new AlertForwarder(Path.Combine(data, "alerts.jsonl"), output);
        using var pagerGate = new SemaphoreSlim(0);
        using var forwarding = engine.Alerts.Subscribe(forwarder);
        var pager = (DeliverySubscription)engine.Alerts.Subscribe(new StuckPager(pagerGate));
        var webhook = (DeliverySubscription)engine.Alerts.Subscribe(new FailingWebhook());

        for (int i = (int)from; i < stopAt; i++)
        {
            await engine.PostAsync(input[i]);
            handle.MarkPosted(i + 1);
            if (i + 1 == checkpointAt)
            {
                await handle.CheckpointAsync();
            }
        }

        if (!crash)
        {
            await engine.FlushAsync(); // end of input: close the last day
        }
        else
        {
            await engine.AdvanceAsync(input[stopAt - 1].Timestamp.Date); // close the days before the last one, as a running process would
        }

        long pagerDone = pager.DeliveredCount;
        int pagerWaiting = pager.PendingCount; // buffered plus the batch the stuck call holds
        pagerGate.Release(int.MaxValue / 2); // the pager comes back; the engine's stop waits for every subscriber to be told
        await host.StopAsync();
        pager.Dispose();
        webhook.Dispose();
        return new LifetimeSummary(from, forwarder.Forwarded, forwarder.Repeats, pagerDone, pagerWaiting, webhook.FaultCount, engine.GetCounters().Observations);
    }

    /// <summary>Invented daily sales of three series (all names and numbers made up); one sells half as much again from day 70 on (an office opened next door).</summary>
    private static List<Observation<string>> Sales()
    {
        var rng = new Random(11);
        var start = new DateTimeOffset(2025, 5, 5, 12, 0, 0, TimeSpan.Zero);
        (string Key, double Level)[] series = [("harbour-street/sourdough-loaf", 40), ("mill-lane/rye-roll", 25), ("station-square/cinnamon-bun", 80)];
        var list = new List<Observation<string>>(EventCount);
        for (int d = 0; d < EventCount / series.Length; d++)
        {
            foreach (var (key, level) in series)
            {
                double mean = level * (key.StartsWith("station", StringComparison.Ordinal) && d >= 70 ? 1.5 : 1.0);
                double sold = Math.Round(mean + ((rng.NextDouble() - 0.5) * 2 * Math.Sqrt(mean)));
                list.Add(new Observation<string>(key, start.AddDays(d), sold, $"{key}#{d}"));
            }
        }

        return list;
    }

    /// <summary>A pager whose service is down: each call blocks until the gate opens.</summary>
    private sealed class StuckPager(SemaphoreSlim gate) : IObserver<DriftAlert<string>>
    {
        public void OnNext(DriftAlert<string> value) => gate.Wait();

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }
    }

    /// <summary>A webhook that always fails: each exception is caught and counted by the engine, which carries on.</summary>
    private sealed class FailingWebhook : IObserver<DriftAlert<string>>
    {
        public void OnNext(DriftAlert<string> value) => throw new HttpRequestException("The webhook answered 502.");

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }
    }
}
