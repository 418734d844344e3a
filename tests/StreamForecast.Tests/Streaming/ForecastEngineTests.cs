using System.Collections.Immutable;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Streaming;

public sealed class ForecastEngineTests
{
    private static readonly DateTimeOffset s_origin = new(2026, 3, 1, 0, 0, 0, TimeSpan.Zero);
    private static readonly TimeSpan s_lateness = TimeSpan.FromMinutes(3);

    private static SeriesOptions MinuteSeries(ForecasterOptions? method = null, GapPolicy gaps = GapPolicy.Zero, LatenessPolicy? lateness = null, TimeSpan? idle = null) =>
        new(
            method ?? new MovingAverageOptions(3),
            PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)),
            lateness ?? new LatenessPolicy(s_lateness),
            gaps,
            rules: [new TrackingSignalRuleOptions(warmUpPeriods: 4)],
            horizon: 3,
            idleTimeout: idle);

    private static ForecastEngineOptions<string> EngineOptions(SeriesOptions series, int partitions, TimeProvider? time = null, int? evict = null) =>
        new(
            series,
            partitions: partitions,
            timeProvider: time ?? new FakeTimeProvider(new DateTimeOffset(2026, 6, 1, 0, 0, 0, TimeSpan.Zero)),
            evictAfterQuietPeriods: evict,
            publishing: new PublishingOptions(subscriberCapacity: 1_000_000, readerCapacity: 1_000_000));

    /// <summary>
    /// A random stream: several keys, each with increasing event times (the first is the earliest), some adjacent
    /// events swapped within half the lateness, periods with no events (gaps), re-posted duplicates with the same
    /// event id, all keys randomly interleaved. Quantities are multiples of 1/4 so sums are exact in any order.
    /// </summary>
    internal static List<Observation<string>> RandomStream(int seed, int keys = 6, int eventsPerKey = 60)
    {
        var rng = new Random(seed);
        var perKey = new List<List<Observation<string>>>();
        for (int k = 0; k < keys; k++)
        {
            string key = $"shop-{k % 3}/item-{k}";
            var times = new List<DateTimeOffset>();
            DateTimeOffset t = s_origin.AddSeconds(rng.Next(0, 600));
            for (int i = 0; i < eventsPerKey; i++)
            {
                times.Add(t);
                t = t.AddSeconds(rng.Next(0, 150));
            }

            var events = times.Select((time, i) => new Observation<string>(key, time, rng.Next(0, 81) / 4.0, $"{key}#{i}")).ToList();
            for (int i = 1; i + 1 < events.Count; i++)
            {
                if (rng.NextDouble() < 0.3 && events[i + 1].Timestamp - events[i].Timestamp < s_lateness / 2)
                {
                    (events[i], events[i + 1]) = (events[i + 1], events[i]);
                }
            }

            var withDuplicates = new List<Observation<string>>();
            for (int i = 0; i < events.Count; i++)
            {
                withDuplicates.Add(events[i]);
                if (i > 0 && rng.NextDouble() < 0.1)
                {
                    withDuplicates.Add(events[rng.Next(Math.Max(0, i - 5), i)]);
                }
            }

            perKey.Add(withDuplicates);
        }

        var merged = new List<Observation<string>>();
        var positions = new int[keys];
        while (true)
        {
            var open = Enumerable.Range(0, keys).Where(k => positions[k] < perKey[k].Count).ToList();
            if (open.Count == 0)
            {
                break;
            }

            int pick = open[rng.Next(open.Count)];
            merged.Add(perKey[pick][positions[pick]++]);
        }

        return merged;
    }

    /// <summary>
    /// The oracle: each key's period actuals (duplicates removed, summed per period from the first event's period to
    /// the last one's, empty periods as zero) fed straight into a <see cref="TrackedForecaster"/>.
    /// </summary>
    private static Dictionary<string, List<ForecastUpdate<string>>> Oracle(IEnumerable<Observation<string>> stream, SeriesOptions options)
    {
        var result = new Dictionary<string, List<ForecastUpdate<string>>>();
        foreach (var group in stream.GroupBy(o => o.Key))
        {
            var seen = new HashSet<string>();
            var sums = new SortedDictionary<long, double>();
            foreach (var o in group)
            {
                if (o.EventId is not null && !seen.Add(o.EventId))
                {
                    continue;
                }

                long p = options.Calendar.PeriodOf(o.Timestamp);
                sums[p] = sums.GetValueOrDefault(p) + o.Quantity;
            }

            var model = new TrackedForecaster(options.Method, options.Tracking);
            var list = new List<ForecastUpdate<string>>();
            for (long p = sums.Keys.First(); p <= sums.Keys.Last(); p++)
            {
                bool has = sums.TryGetValue(p, out double actual);
                PeriodScore score = model.Update(actual);
                list.Add(new ForecastUpdate<string>(
                    group.Key, p, options.Calendar.StartOf(p), actual, !has, score.Forecast, score.Error,
                    Point(model, 1, options.IntervalMultiplier, options.IntervalCoverage), Point(model, options.Horizon, options.IntervalMultiplier, options.IntervalCoverage),
                    ErrorSummary.Of(model.Tracker), options.Method.MethodName, false));
            }

            result[group.Key] = list;
        }

        return result;
    }

    private static ForecastPoint Point(TrackedForecaster model, int h, double z, double coverage) =>
        model.TryForecast(h, z, out double value, out PredictionInterval interval)
            ? new ForecastPoint(h, value, interval.Lower, interval.Upper, IntervalKind.Normal, coverage)
            : new ForecastPoint(h, double.NaN, double.NaN, double.NaN, IntervalKind.Normal, coverage);

    private static async Task<EngineRecorder<string>> RunAsync(ForecastEngineOptions<string> options, IEnumerable<Observation<string>> stream, bool flush = true)
    {
        var engine = new ForecastEngine<string>(options);
        var recorder = EngineRecorder<string>.Attach(engine);
        foreach (var o in stream)
        {
            await engine.PostAsync(o);
        }

        if (flush)
        {
            await engine.FlushAsync();
        }

        await engine.DisposeAsync();
        return recorder;
    }

    private static void AssertSameByKey(Dictionary<string, List<ForecastUpdate<string>>> expected, Dictionary<string, List<ForecastUpdate<string>>> actual)
    {
        Assert.Equal(expected.Keys.OrderBy(k => k, StringComparer.Ordinal), actual.Keys.OrderBy(k => k, StringComparer.Ordinal));
        foreach (var (key, list) in expected)
        {
            Assert.Equal(list, actual[key]);
        }
    }

    [Property(MaxTest = 25)]
    public Property Forecasts_RandomStream_EqualCoreOperatorsFedPerKeyActuals() =>
        Prop.ForAll(Gen.Choose(1, int.MaxValue).ToArbitrary(), seed =>
        {
            var stream = RandomStream(seed);
            var series = MinuteSeries();
            var recorder = RunAsync(EngineOptions(series, partitions: 2), stream).GetAwaiter().GetResult();
            AssertSameByKey(Oracle(stream, series), recorder.ForecastsByKey());
            return true.ToProperty();
        });

    [Property(MaxTest = 15)]
    public Property Outputs_OneTwoAndFourPartitions_AreIdenticalPerKey() =>
        Prop.ForAll(Gen.Choose(1, int.MaxValue).ToArbitrary(), seed =>
        {
            var stream = RandomStream(seed, keys: 9);
            var series = MinuteSeries(new WeightedMovingAverageOptions([3, 2, 1]));
            var runs = new[] { 1, 2, 4 }.Select(p => RunAsync(EngineOptions(series, p), stream).GetAwaiter().GetResult()).ToList();
            foreach (var other in runs.Skip(1))
            {
                AssertSameByKey(runs[0].ForecastsByKey(), other.ForecastsByKey());
                Assert.Equal(
                    runs[0].Alerts.OrderBy(a => a.Key, StringComparer.Ordinal).ThenBy(a => a.Period).ToList(),
                    other.Alerts.OrderBy(a => a.Key, StringComparer.Ordinal).ThenBy(a => a.Period).ToList());
            }

            return true.ToProperty();
        });

    [Property(MaxTest = 15)]
    public Property SnapshotAsync_RandomCut_RestoredRunContinuesBitIdentically() =>
        Prop.ForAll(Gen.Choose(1, int.MaxValue).ToArbitrary(), seed =>
        {
            var stream = RandomStream(seed);
            int cut = new Random(seed).Next(0, stream.Count + 1);
            var series = MinuteSeries(lateness: new LatenessPolicy(s_lateness, restatementPeriods: 2));
            var whole = RunAsync(EngineOptions(series, 2), stream).GetAwaiter().GetResult();

            var first = new ForecastEngine<string>(EngineOptions(series, 2));
            var before = EngineRecorder<string>.Attach(first);
            foreach (var o in stream.Take(cut))
            {
                first.PostAsync(o).AsTask().GetAwaiter().GetResult();
            }

            using var snapshot = new MemoryStream();
            first.SnapshotAsync(snapshot, SnapshotKeyCodecs.Utf8String, inputPosition: cut).GetAwaiter().GetResult();
            first.DisposeAsync().AsTask().GetAwaiter().GetResult();

            snapshot.Position = 0;
            var (second, position) = ForecastEngine.RestoreAsync(snapshot, EngineOptions(series, 3), SnapshotKeyCodecs.Utf8String).GetAwaiter().GetResult();
            Assert.Equal(cut, position);
            var after = EngineRecorder<string>.Attach(second);
            foreach (var o in stream.Skip((int)position))
            {
                second.PostAsync(o).AsTask().GetAwaiter().GetResult();
            }

            second.FlushAsync().GetAwaiter().GetResult();
            second.DisposeAsync().AsTask().GetAwaiter().GetResult();

            var joined = before.ForecastsByKey();
            foreach (var (key, list) in after.ForecastsByKey())
            {
                if (!joined.TryGetValue(key, out var existing))
                {
                    joined[key] = existing = [];
                }

                existing.AddRange(list);
            }

            AssertSameByKey(whole.ForecastsByKey(), joined);
            return true.ToProperty();
        });
}
