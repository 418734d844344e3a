using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// The workload of <see cref="EngineThroughputBenchmarks"/> (one partition, long keys, MA(12) with a tracking-signal
/// rule, one counting subscriber) as a plain program, for counting instructions and simulated cache misses under
/// valgrind, which do not depend on the machine's load. Builds the series in key order (<c>warm</c> rounds, the first
/// in key order), then posts <c>rounds</c> shuffled rounds of one observation per key and waits until the subscriber
/// has every forecast. Run it with two round counts and divide the difference of the totals by the difference of the
/// observations. Uses only the public engine surface, so the same file builds against older commits.
/// </summary>
internal static class EngineInstructions
{
    public static async Task<int> RunAsync(int keys, int rounds, int warm)
    {
        long t0 = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero).UtcTicks;
        var keyList = new long[keys];
        for (int i = 0; i < keys; i++)
        {
            keyList[i] = Workload.LongKey(i);
        }

        int[] order = Workload.ShuffledRounds(keys, rounds, seed: 8);
        double[] data = Workload.Demand(4096, seed: 9);
        var series = new SeriesOptions(
            new MovingAverageOptions(12),
            PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1)),
            rules: [new TrackingSignalRuleOptions()]);
        var engine = new ForecastEngine<long>(new ForecastEngineOptions<long>(
            series,
            partitions: 1,
            publishing: new PublishingOptions(subscriberCapacity: 2_000_000)));
        var counter = new Counter();
        using (engine.Forecasts.Subscribe(counter))
        {
            // Each observation of round r ≥ 1 closes its key's round r − 1: one forecast per observation after the first round.
            long expected = ((long)(warm + rounds) - 1) * keys;
            counter.Target = expected;
            for (int r = 0; r < warm + rounds; r++)
            {
                var time = new DateTimeOffset(t0 + (r * TimeSpan.TicksPerSecond) + (TimeSpan.TicksPerSecond / 2), TimeSpan.Zero);
                int m = r - warm;
                for (int j = 0; j < keys; j++)
                {
                    int index = m < 0 ? j : order[(m * keys) + j];
                    var o = new Observation<long>(keyList[index], time, data[((r * keys) + j) & 4095]);
                    if (!engine.TryPost(o))
                    {
                        await engine.PostAsync(o).ConfigureAwait(false);
                    }
                }
            }

            await counter.Done.Task.ConfigureAwait(false);
            EngineCounters c = engine.GetCounters();
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"keys {keys}, warm {warm}, rounds {rounds}: {counter.Received} forecasts, checksum {counter.Check}, drops {c.SubscriberDrops}, rejected {c.Rejected}"));
        }

        await engine.DisposeAsync().ConfigureAwait(false);
        return 0;
    }

    private sealed class Counter : IObserver<ForecastUpdate<long>>
    {
        public TaskCompletionSource Done { get; } = new(TaskCreationOptions.RunContinuationsAsynchronously);

        public long Target { get; set; }

        public long Received { get; private set; }

        public double Check { get; private set; }

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<long> value)
        {
            Check += value.Actual;
            if (++Received == Target)
            {
                Done.TrySetResult();
            }
        }
    }
}
