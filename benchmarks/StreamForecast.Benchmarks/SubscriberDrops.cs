using System.Diagnostics;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Issue 15, target 1, as a count rather than a time: post observations over many keys through an engine with one
/// partition and the default publishing options as fast as the engine takes them, with one push subscriber that only
/// counts, and print how many forecast updates were published, delivered and dropped. Keys are visited in a fresh
/// random order each round; each round is one period, so from the second round on every observation closes its key's
/// previous period (one update each). The drops while posting and in the final flush (every open period closed in one
/// burst) are printed apart.
/// </summary>
internal static class SubscriberDrops
{
    public static async Task<int> RunAsync(int observations, int keys)
    {
        var series = new SeriesOptions(
            new MovingAverageOptions(12),
            PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1)),
            rules: [new TrackingSignalRuleOptions()]);
        await using var engine = new ForecastEngine<long>(new ForecastEngineOptions<long>(series, partitions: 1));
        var observer = new CountingObserver();
        using IDisposable subscription = engine.Forecasts.Subscribe(observer);

        long[] keyIds = new long[keys];
        for (int i = 0; i < keys; i++)
        {
            keyIds[i] = Workload.LongKey(i);
        }

        int rounds = (observations + keys - 1) / keys;
        double[] demand = Workload.Demand(4096, seed: 31);
        var random = new Random(32);
        int[] order = new int[keys];
        for (int i = 0; i < keys; i++)
        {
            order[i] = i;
        }

        long t0 = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero).UtcTicks;
        Console.WriteLine($"load average before: {LoadAverage()}");
        var clock = Stopwatch.StartNew();
        int posted = 0;
        for (int r = 0; r < rounds && posted < observations; r++)
        {
            random.Shuffle(order);
            var time = new DateTimeOffset(t0 + (r * TimeSpan.TicksPerSecond) + (TimeSpan.TicksPerSecond / 2), TimeSpan.Zero);
            for (int j = 0; j < keys && posted < observations; j++, posted++)
            {
                var o = new Observation<long>(keyIds[order[j]], time, demand[posted & 4095]);
                if (!engine.TryPost(o))
                {
                    await engine.PostAsync(o).ConfigureAwait(false);
                }
            }
        }

        // Steady state first: wait until the queue is empty and every update so far was delivered or dropped.
        TimeSpan posting = clock.Elapsed;
        EngineCounters before;
        while (true)
        {
            before = engine.GetCounters();
            if (before.QueueDepth == 0 && observer.Received + before.SubscriberDrops >= before.PeriodsClosed)
            {
                break;
            }

            await Task.Delay(10).ConfigureAwait(false);
        }

        Console.WriteLine($"while posting: updates {before.PeriodsClosed:N0}, dropped {before.SubscriberDrops:N0} ({100.0 * before.SubscriberDrops / Math.Max(1, before.PeriodsClosed):F4} %)");

        // Then the flush: every key's open period closes in one burst on the partition loop.
        await engine.FlushAsync().ConfigureAwait(false);
        await engine.DisposeAsync().ConfigureAwait(false);
        EngineCounters c = engine.GetCounters();
        long published = observer.Received + c.SubscriberDrops;
        Console.WriteLine($"observations {posted:N0} over {keys:N0} keys in {posting.TotalSeconds:F1} s ({posted / posting.TotalSeconds:N0}/s), one partition, default publishing options");
        Console.WriteLine($"flush burst: updates {published - before.PeriodsClosed:N0}, dropped {c.SubscriberDrops - before.SubscriberDrops:N0}");
        Console.WriteLine($"whole run: updates published {published:N0}, delivered {observer.Received:N0}, dropped {c.SubscriberDrops:N0} ({100.0 * c.SubscriberDrops / Math.Max(1, published):F4} %)");
        Console.WriteLine($"load average after: {LoadAverage()}");
        return 0;
    }

    private static string LoadAverage() =>
        File.Exists("/proc/loadavg") ? string.Join(' ', File.ReadAllText("/proc/loadavg").Split(' ').Take(3)) : "n/a";

    private sealed class CountingObserver : IObserver<ForecastUpdate<long>>
    {
        private long _received;

        public long Received => Volatile.Read(ref _received);

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<long> value) => _received++;
    }
}
