using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Bytes per series, all-in: the live managed heap (<see cref="GC.GetTotalMemory(bool)"/> after a full, compacting
/// collection) before and after building the states of <c>count</c> MA(12) series with error tracking, divided by the
/// count. Shared options objects are created before the first reading, so only per-series memory is counted.
/// </summary>
internal static class MemoryFootprint
{
    public static async Task<int> RunAsync(int count)
    {
        var ma12 = new MovingAverageOptions(12);
        var calendar = PeriodCalendar.FixedInterval(TimeSpan.FromSeconds(1));
        var noRules = new SeriesOptions(ma12, calendar);
        var oneRule = new SeriesOptions(ma12, calendar, rules: [new TrackingSignalRuleOptions()]);
        var time = new DateTimeOffset(2024, 1, 1, 0, 0, 0, TimeSpan.Zero);

        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"| What is built for each of {count:N0} series | Bytes per series |"));
        Console.WriteLine("|---|---:|");

        Report("floor: an MA(12) ring + sum held by value in an array of structs", count, () => new MovingAverageSlot[count]);

        Report("MA(12) forecaster alone (MovingAverage), array of references", count, () =>
        {
            var all = new Forecaster[count];
            for (int i = 0; i < count; i++)
            {
                all[i] = ma12.CreateForecaster();
            }

            return all;
        });

        Report("MA(12) + error tracking (TrackedForecaster), array of references", count, () =>
        {
            var all = new TrackedForecaster[count];
            for (int i = 0; i < count; i++)
            {
                all[i] = new TrackedForecaster(ma12);
            }

            return all;
        });

        Report("MA(12) + error tracking, in a Dictionary<long, TrackedForecaster>", count, () =>
        {
            var all = new Dictionary<long, TrackedForecaster>();
            for (int i = 0; i < count; i++)
            {
                all.Add(Workload.LongKey(i), new TrackedForecaster(ma12));
            }

            return all;
        });

        await ReportEngineAsync("engine, long keys: MA(12) + error tracking, no alert rule (SeriesState in the partition's dictionary)", count, noRules, time).ConfigureAwait(false);
        await ReportEngineAsync("engine, long keys: MA(12) + error tracking + tracking-signal rule", count, oneRule, time).ConfigureAwait(false);

        // Where the bytes go: what creating each part allocates (objects and arrays it creates, headers included).
        Console.WriteLine();
        Console.WriteLine("| Part, created once | Bytes allocated |");
        Console.WriteLine("|---|---:|");
        Part("MovingAverage MA(12) (object + its ring of 12)", () => ma12.CreateForecaster());
        Part("ErrorTracker, default options (m = 1)", () => ErrorTrackerOptions.Default.CreateTracker());
        Part("TrackedForecaster MA(12) (its object + the two above)", () => new TrackedForecaster(ma12));
        var signalRule = new TrackingSignalRuleOptions();
        Part("Tracking-signal rule, default options", () => signalRule.CreateRule());
        Part("SeriesState<long>, no rule (the TrackedForecaster included)", () => new SeriesState<long>(1, noRules, 0));
        Part("SeriesState<long>, one tracking-signal rule (TrackedForecaster and rule included)", () => new SeriesState<long>(1, oneRule, 0));
        return 0;
    }

    private static void Part(string what, Func<object> create)
    {
        GC.KeepAlive(create()); // JIT and type loading first, so only the instances are counted
        long before = GC.GetAllocatedBytesForCurrentThread();
        object created = create();
        long after = GC.GetAllocatedBytesForCurrentThread();
        GC.KeepAlive(created);
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"| {what} | {after - before} |"));
    }

    private static void Report(string what, int count, Func<object> build)
    {
        long before = LiveBytes();
        object built = build();
        long after = LiveBytes();
        GC.KeepAlive(built);
        Print(what, count, after - before);
    }

    private static async Task ReportEngineAsync(string what, int count, SeriesOptions series, DateTimeOffset time)
    {
        var engine = new ForecastEngine<long>(new ForecastEngineOptions<long>(series, partitions: 1, maxEventTimeAhead: Timeout.InfiniteTimeSpan));
        await engine.FlushAsync().ConfigureAwait(false);
        long before = LiveBytes();
        for (int i = 0; i < count; i++)
        {
            await engine.PostAsync(new Observation<long>(Workload.LongKey(i), time, 100)).ConfigureAwait(false);
        }

        await engine.FlushAsync().ConfigureAwait(false); // every observation handled, every series built and its period closed
        long after = LiveBytes();
        if (engine.SeriesCount != count)
        {
            throw new InvalidOperationException($"Expected {count} series, the engine holds {engine.SeriesCount}.");
        }

        Print(what, count, after - before);
        await engine.DisposeAsync().ConfigureAwait(false);
    }

    private static long LiveBytes()
    {
        GC.Collect(GC.MaxGeneration, GCCollectionMode.Forced, blocking: true, compacting: true);
        GC.WaitForPendingFinalizers();
        GC.Collect(GC.MaxGeneration, GCCollectionMode.Forced, blocking: true, compacting: true);
        return GC.GetTotalMemory(forceFullCollection: true);
    }

    private static void Print(string what, int count, long bytes) =>
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"| {what} | {(double)bytes / count:F1} |"));
}
