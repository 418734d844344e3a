using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

/// <summary>Flushes and watermarks that close a period in many series at once are published a slice at a time (issue 15).</summary>
public sealed class ForecastEngineSweepTests
{
    private static readonly TimeSpan s_guard = TimeSpan.FromSeconds(60);
    private static readonly DateTimeOffset s_start = new(2027, 1, 1, 0, 0, 0, TimeSpan.Zero);

    private static ForecastEngineOptions<string> Options(int subscriberCapacity, FakeTimeProvider? time = null) =>
        new(new SeriesOptions(new MovingAverageOptions(3), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), rules: [new TrackingSignalRuleOptions()]),
            partitions: 1, timeProvider: time ?? new FakeTimeProvider(new DateTimeOffset(2027, 1, 15, 0, 0, 0, TimeSpan.Zero)),
            publishing: new PublishingOptions(subscriberCapacity));

    private static IEnumerable<Observation<string>> Bakeries(int keys, int minutes)
    {
        // Invented: a chain of bakeries, one series per shop and loaf, a few sales a minute.
        for (int m = 0; m < minutes; m++)
        {
            for (int k = 0; k < keys; k++)
            {
                yield return new($"shop-{k % 97}/loaf-{k}", s_start.AddMinutes(m).AddSeconds(k % 60), 3 + ((k * 7 + m * 3) % 11));
            }
        }
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public async Task FlushOrAdvance_BurstFarLargerThanASlowSubscribersBuffer_SubscriberGetsEveryUpdateInTheUnpacedOrder(bool flush)
    {
        // 3,000 series each with one open period: the sweep closes 3,000 periods against a 64-item buffer (slices of 16).
        const int keys = 3_000;
        ForecastEngineOptions<string> options = Options(subscriberCapacity: 64);
        var slow = new SlowObserver(spin: 2_000, block: null);
        await using var engine = new ForecastEngine<string>(options);
        using var subscription = (DeliverySubscription)engine.Forecasts.Subscribe(slow);
        foreach (Observation<string> o in Bakeries(keys, minutes: 1))
        {
            await engine.PostAsync(o);
        }

        Task sweep = flush ? engine.FlushAsync() : engine.AdvanceAsync(s_start.AddMinutes(1));
        await sweep.WaitAsync(s_guard);
        await engine.DisposeAsync();
        await subscription.Completion.WaitAsync(s_guard);

        // The same series driven directly, unpaced: the engine published exactly these updates, in this order.
        var set = new SeriesSet<string>(options);
        var sink = new ListSink();
        foreach (Observation<string> o in Bakeries(keys, minutes: 1))
        {
            set.Post(o, sink);
        }

        if (flush)
        {
            set.Flush(sink);
        }
        else
        {
            set.Advance(s_start.AddMinutes(1), sink);
        }

        Assert.Equal(keys, sink.Forecasts.Count);
        Assert.Equal(0, engine.GetCounters().SubscriberDrops);
        Assert.Equal(0, subscription.DroppedCount);
        Assert.Equal(sink.Forecasts, slow.Received);
    }

    [Fact]
    public async Task FlushAsync_SubscriberBlocked_FinishesAfterTheStallLimitAndCountsTheDrops()
    {
        // A subscriber that makes no room at all is waited for once (the stall limit, on the engine's clock), then the
        // flush goes on and its full buffer drops its oldest items as it always did.
        using var gate = new ManualResetEventSlim(false);
        var blocked = new SlowObserver(spin: 0, block: gate);
        var time = new FakeTimeProvider(new DateTimeOffset(2027, 1, 15, 0, 0, 0, TimeSpan.Zero));
        await using var engine = new ForecastEngine<string>(Options(subscriberCapacity: 8, time));
        using var subscription = (DeliverySubscription)engine.Forecasts.Subscribe(blocked);
        foreach (Observation<string> o in Bakeries(500, minutes: 1))
        {
            await engine.PostAsync(o);
        }

        Task flush = engine.FlushAsync();
        using (var guard = new CancellationTokenSource(s_guard))
        {
            while (!flush.IsCompleted)
            {
                // Only the fake clock moves the stall limit; step it until the partition has given up waiting.
                time.Advance(TimeSpan.FromMilliseconds(250));
                await Task.Delay(1, guard.Token);
            }
        }

        await flush;
        EngineCounters counters = engine.GetCounters();
        gate.Set();
        await engine.DisposeAsync();

        Assert.Equal(500, counters.PeriodsClosed);
        Assert.True(counters.SubscriberDrops > 0);
        Assert.Equal(500, blocked.Received.Count + subscription.DroppedCount);
    }

    private sealed class SlowObserver(int spin, ManualResetEventSlim? block) : IObserver<ForecastUpdate<string>>
    {
        public List<ForecastUpdate<string>> Received { get; } = [];

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value)
        {
            block?.Wait();
            Thread.SpinWait(spin);
            Received.Add(value);
        }
    }

    [Fact]
    public async Task Post_WatermarksThatEvictMixedIntoBatchesOfObservations_SameUpdatesAsTheSetDrivenDirectly()
    {
        // A partition finds the series of a run of observations before applying them (issue 15, end to end); a watermark
        // that evicts quiet series sits between such runs. Everything is posted without waiting, so the partition's
        // batches hold observations and watermarks together, and evicted keys come back after the watermark that evicted
        // them: the engine must publish exactly what the set driven directly does, and count the same evictions.
        var time = new FakeTimeProvider(new DateTimeOffset(2027, 1, 15, 0, 0, 0, TimeSpan.Zero));
        var options = new ForecastEngineOptions<string>(
            new SeriesOptions(new MovingAverageOptions(3), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), rules: [new TrackingSignalRuleOptions()]),
            partitions: 1, timeProvider: time, evictAfterQuietPeriods: 2, publishing: new PublishingOptions(1_000_000));
        var script = new List<(Observation<string>? Observation, DateTimeOffset Watermark)>();
        for (int m = 0; m < 40; m++)
        {
            // Invented: 60 bakery series; each sells in some minutes only (k + m) % 5 != 0 and goes quiet in a block of
            // minutes now and then, so the watermarks evict it and a later sale brings it back as a new series.
            for (int k = 0; k < 60; k++)
            {
                bool quietBlock = (m / 6 + k) % 4 == 0;
                if (!quietBlock && (k + m) % 5 != 0)
                {
                    script.Add((new Observation<string>($"shop-{k % 7}/loaf-{k}", s_start.AddMinutes(m).AddSeconds(k % 60), 1 + ((k * 5 + m) % 9)), default));
                }
            }

            if (m % 3 == 2)
            {
                script.Add((null, s_start.AddMinutes(m)));
            }
        }

        var recorder = new ListObserver();
        await using var engine = new ForecastEngine<string>(options);
        using var subscription = (DeliverySubscription)engine.Forecasts.Subscribe(recorder);
        var commands = new List<Task>();
        foreach (var (observation, watermark) in script)
        {
            if (observation is { } o)
            {
                Assert.True(engine.TryPost(o));
            }
            else
            {
                commands.Add(engine.AdvanceAsync(watermark));
            }
        }

        await Task.WhenAll(commands).WaitAsync(s_guard);
        await engine.FlushAsync().WaitAsync(s_guard);
        EngineCounters counters = engine.GetCounters();
        await engine.DisposeAsync();
        await subscription.Completion.WaitAsync(s_guard);

        var set = new SeriesSet<string>(options);
        var sink = new ListSink();
        foreach (var (observation, watermark) in script)
        {
            if (observation is { } o)
            {
                set.Post(o, sink);
            }
            else
            {
                set.Advance(watermark, sink);
            }
        }

        set.Flush(sink);
        Assert.True(counters.Evictions > 20, $"the script should evict often; it evicted {counters.Evictions}");
        Assert.Equal(set.GetCounters().Evictions, counters.Evictions);
        Assert.Equal(sink.Forecasts, recorder.Received);
    }

    private sealed class ListObserver : IObserver<ForecastUpdate<string>>
    {
        public List<ForecastUpdate<string>> Received { get; } = [];

        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value) => Received.Add(value);
    }

    private sealed class ListSink : ISeriesSink<string>
    {
        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);

        public void Alert(in DriftAlert<string> alert)
        {
        }

        public void Fault(in SeriesFault<string> fault)
        {
        }
    }
}
