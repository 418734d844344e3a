using System.Globalization;
using System.Runtime.InteropServices;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Benchmarks;

/// <summary>
/// The two keyed paths of <see cref="KeyedProcessingBenchmarks{TKey}"/> (long keys) as a plain program, for counting
/// instructions and simulated cache misses under valgrind, which do not depend on the machine's load. The series are
/// built in key order, warmed for 14 rounds, then run for <c>rounds</c> shuffled rounds of one observation per key;
/// run it with two round counts and divide the difference of the totals by the difference of the observations.
/// </summary>
internal static class KeyedSimulation
{
    public static int Run(string path, int keys, int rounds)
    {
        const int WarmRounds = 14;
        long t0 = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero).UtcTicks;
        var keyList = new long[keys];
        for (int i = 0; i < keys; i++)
        {
            keyList[i] = Workload.LongKey(i);
        }

        int[] order = Workload.ShuffledRounds(keys, WarmRounds + rounds, seed: 6);
        double[] data = Workload.Demand(4096, seed: 7);
        double check;
        if (path == "engine")
        {
            var options = new SeriesOptions(new MovingAverageOptions(12), PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1)), rules: [new TrackingSignalRuleOptions()]);
            var sink = new DiscardingOutput<long>();
            var series = new Dictionary<long, SeriesState<long>>();
            foreach (long key in keyList)
            {
                series[key] = new SeriesState<long>(key, options, 0);
            }

            int i = 0;
            for (int r = 0; r < WarmRounds + rounds; r++)
            {
                var time = new DateTimeOffset(t0 + (r * TimeSpan.TicksPerSecond) + (TimeSpan.TicksPerSecond / 2), TimeSpan.Zero);
                for (int j = 0; j < keys; j++, i++)
                {
                    long key = keyList[order[i]];
                    ref SeriesState<long>? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(series, key, out bool exists);
                    if (!exists)
                    {
                        slot = new SeriesState<long>(key, options, 0);
                    }

                    _ = options.Calendar.TryPeriodOf(time, out long period);
                    slot!.Observe(time, period, data[i & 4095], null, 0, sink);
                }
            }

            check = sink.Check;
        }
        else if (path == "dictionary")
        {
            var raw = new Dictionary<long, SeriesStep>();
            foreach (long key in keyList)
            {
                raw[key] = new SeriesStep(new MovingAverageOptions(12));
            }

            check = 0;
            int i = 0;
            for (int r = 0; r < WarmRounds + rounds; r++)
            {
                for (int j = 0; j < keys; j++, i++)
                {
                    ref SeriesStep? slot = ref CollectionsMarshal.GetValueRefOrAddDefault(raw, keyList[order[i]], out bool exists);
                    if (!exists)
                    {
                        slot = new SeriesStep(new MovingAverageOptions(12));
                    }

                    check += slot!.Step(data[i & 4095]);
                }
            }
        }
        else
        {
            Console.Error.WriteLine("keyed-sim <engine|dictionary> <keys> <rounds>");
            return 2;
        }

        Console.WriteLine(check.ToString(CultureInfo.InvariantCulture));
        return 0;
    }
}
