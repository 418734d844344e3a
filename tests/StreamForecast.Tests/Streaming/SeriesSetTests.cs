using System.Collections.Immutable;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// <see cref="SeriesSet{TKey}"/> hosted outside the engine must produce what the engine publishes and snapshot the same
/// bytes. Invented data: a fleet of cold-room sensors reporting once a minute, one of them drifting upward.
/// </summary>
public sealed class SeriesSetTests
{
    private static readonly DateTimeOffset Start = new(2027, 3, 1, 0, 0, 0, TimeSpan.Zero);

    [Fact]
    public async Task Post_SameInputAsAOnePartitionEngine_SameOutputsCountersAndSnapshotBytes()
    {
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        List<Observation<string>> input = Readings(seed: 11);

        var engine = new ForecastEngine<string>(options);
        var recorder = EngineRecorder<string>.Attach(engine);
        foreach (Observation<string> o in input)
        {
            await engine.PostAsync(o);
        }

        await engine.AdvanceAsync(Start.AddMinutes(45));
        await engine.AcknowledgeAsync("room-3");
        await engine.FlushAsync();
        using var engineBytes = new MemoryStream();
        await engine.SnapshotAsync(engineBytes, SnapshotKeyCodecs.Utf8String, 77);
        EngineCounters engineCounters = engine.GetCounters();
        await engine.DisposeAsync();

        var set = new SeriesSet<string>(options);
        var sink = new ListSink();
        set.Post(input.ToArray(), sink);
        set.Advance(Start.AddMinutes(45), sink);
        set.Acknowledge("room-3", sink);
        set.Flush(sink);
        using var setBytes = new MemoryStream();
        set.Snapshot(setBytes, SnapshotKeyCodecs.Utf8String, 77);

        Assert.NotEmpty(recorder.Alerts); // the drifting room raises at least one episode, so alerts are compared too
        Assert.Equal(recorder.Forecasts, sink.Forecasts);
        Assert.Equal(recorder.Alerts, sink.Alerts);
        Assert.Equal(recorder.Faults, sink.Faults);
        Assert.Equal(engineBytes.ToArray(), setBytes.ToArray());
        Assert.Equal(engineCounters with { QueueDepth = 0 }, set.GetCounters());
    }

    [Fact]
    public void Restore_SnapshotThenContinue_EqualsAnUninterruptedRun()
    {
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        List<Observation<string>> input = Readings(seed: 12);
        int half = input.Count / 2;

        var whole = new SeriesSet<string>(options);
        var wholeSink = new ListSink();
        whole.Post(input.ToArray(), wholeSink);
        whole.Flush(wholeSink);

        var first = new SeriesSet<string>(options);
        var firstSink = new ListSink();
        first.Post(input.Take(half).ToArray(), firstSink);
        using var bytes = new MemoryStream();
        first.Snapshot(bytes, SnapshotKeyCodecs.Utf8String, half);
        bytes.Position = 0;
        var second = new SeriesSet<string>(options);
        Assert.Equal(half, second.Restore(bytes, SnapshotKeyCodecs.Utf8String));
        second.RestoreCounters(first.GetCounters());
        var secondSink = new ListSink();
        second.Post(input.Skip(half).ToArray(), secondSink);
        second.Flush(secondSink);

        Assert.Equal(wholeSink.Forecasts, [.. firstSink.Forecasts, .. secondSink.Forecasts]);
        Assert.Equal(wholeSink.Alerts, [.. firstSink.Alerts, .. secondSink.Alerts]);
        Assert.Equal(whole.GetCounters(), second.GetCounters());
    }

    [Fact]
    public async Task DeclareEvent_SameEventsAsAOnePartitionEngine_SameOutputsLiftAndSnapshotBytes()
    {
        // room-3's drift from minute 20 declared as a known event (a defrost cycle, say), one of them late.
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        List<Observation<string>> input = Readings(seed: 13);
        KnownEvent<string> defrost = KnownEvent.ForSeries("room-3", EventKind.Named("defrost"), Start.AddMinutes(20), Start.AddMinutes(60));
        KnownEvent<string> closed = KnownEvent.ForAllSeries<string>(EventKind.Closure, Start.AddMinutes(5), Start.AddMinutes(7));

        var engine = new ForecastEngine<string>(options);
        var recorder = EngineRecorder<string>.Attach(engine);
        KnownEventReceipt engineReceipt = await engine.DeclareEventAsync(defrost);
        await engine.PostBatchAsync(input.ToArray());
        KnownEventReceipt engineLate = await engine.DeclareEventAsync(closed);
        await engine.FlushAsync();
        IReadOnlyList<EventLift> engineLift = await engine.GetEventLiftAsync();
        using var engineBytes = new MemoryStream();
        await engine.SnapshotAsync(engineBytes, SnapshotKeyCodecs.Utf8String, 5);
        await engine.DisposeAsync();

        var set = new SeriesSet<string>(options);
        var sink = new ListSink();
        KnownEventReceipt setReceipt = set.DeclareEvent(defrost, sink);
        set.Post(input.ToArray(), sink);
        KnownEventReceipt setLate = set.DeclareEvent(closed, sink);
        set.Flush(sink);
        using var setBytes = new MemoryStream();
        set.Snapshot(setBytes, SnapshotKeyCodecs.Utf8String, 5);

        Assert.Equal(engineReceipt, setReceipt);
        Assert.Equal(engineLate, setLate);
        Assert.Equal(4, setLate.SeriesAffected);
        Assert.Equal(8, setLate.PeriodsBeyondHorizon); // minutes 5 and 6 of four rooms, closed before a late declaration with no restatement window
        Assert.Equal(recorder.Forecasts, sink.Forecasts);
        Assert.Equal(recorder.Alerts, sink.Alerts);
        Assert.Equal(engineLift, set.GetEventLift());
        Assert.Equal(["defrost"], set.GetEventLift().Select(l => l.Kind.Name)); // the late closure marked no closed period, so it measured nothing
        Assert.Equal(engineBytes.ToArray(), setBytes.ToArray());
        Assert.Equal(SnapshotFormat.EventsVersion, BitConverter.ToUInt16(setBytes.ToArray(), 4));
    }

    [Fact]
    public void Restore_SnapshotWithDeclaredEvents_EventsAndLiftComeBackAndTheRunContinuesAsUninterrupted()
    {
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        List<Observation<string>> input = Readings(seed: 14);
        int half = input.FindIndex(o => o.Timestamp >= Start.AddMinutes(30));
        KnownEvent<string> defrost = KnownEvent.ForSeries("room-3", EventKind.Named("defrost"), Start.AddMinutes(20), Start.AddMinutes(60));

        var whole = new SeriesSet<string>(options);
        var wholeSink = new ListSink();
        whole.DeclareEvent(defrost, wholeSink);
        whole.Post(input.ToArray(), wholeSink);
        whole.Flush(wholeSink);

        var first = new SeriesSet<string>(options);
        var firstSink = new ListSink();
        first.DeclareEvent(defrost, firstSink);
        first.Post(input.Take(half).ToArray(), firstSink);
        using var bytes = new MemoryStream();
        first.Snapshot(bytes, SnapshotKeyCodecs.Utf8String, half);
        bytes.Position = 0;
        var second = new SeriesSet<string>(options);
        second.Restore(bytes, SnapshotKeyCodecs.Utf8String);
        Assert.Equal(first.GetEventLift(), second.GetEventLift());
        var secondSink = new ListSink();
        second.Post(input.Skip(half).ToArray(), secondSink);
        second.Flush(secondSink);

        Assert.Contains(secondSink.Forecasts, u => u.Key == "room-3" && u.Event is { Name: "defrost" });
        Assert.Equal(wholeSink.Forecasts, [.. firstSink.Forecasts, .. secondSink.Forecasts]);
        Assert.Equal(wholeSink.Alerts, [.. firstSink.Alerts, .. secondSink.Alerts]);
        Assert.Equal(whole.GetEventLift(), second.GetEventLift());

        // Withdrawn after the restore: the restored declaration is the one withdrawn.
        Assert.Equal(1, second.WithdrawEvent(defrost, secondSink).SeriesAffected);
        Assert.Equal(default, second.WithdrawEvent(defrost, secondSink));
    }

    [Fact]
    public void DeclareEvent_GroupEventWithoutGroupFunction_ThrowsAndChangesNothing()
    {
        var set = new SeriesSet<string>(Options(new FakeTimeProvider(Start.AddDays(1))));
        var sink = new ListSink();
        set.Post(Readings(seed: 15).ToArray(), sink);

        Assert.Throws<ArgumentException>(() => set.DeclareEvent(KnownEvent.ForGroup<string>("north", EventKind.Promotion, Start, Start.AddMinutes(5)), sink));

        using var bytes = new MemoryStream();
        set.Snapshot(bytes, SnapshotKeyCodecs.Utf8String, 0);
        Assert.Equal(SnapshotFormat.CurrentVersion, BitConverter.ToUInt16(bytes.ToArray(), 4));
    }

    [Fact]
    public void Post_BatchWithOneNonFiniteQuantity_ThrowsAndAppliesNothing()
    {
        var set = new SeriesSet<string>(Options(new FakeTimeProvider(Start.AddDays(1))));
        var sink = new ListSink();
        Observation<string>[] batch = [new("room-1", Start, 4.0), new("room-2", Start, double.NaN)];

        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => set.Post(batch, sink));

        Assert.Contains("Observation 1 of the batch", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0, set.Count);
        Assert.Equal(default(EngineCounters), set.GetCounters());
    }

    [Fact]
    public void Post_EventTimeTooFarAhead_ThrowsAndAppliesNothing()
    {
        var set = new SeriesSet<string>(Options(new FakeTimeProvider(Start)));
        var sink = new ListSink();

        Assert.Throws<ArgumentOutOfRangeException>(() => set.Post(new Observation<string>("room-1", Start.AddDays(30), 4.0), sink));

        Assert.Equal(0, set.Count);
    }

    [Fact]
    public void Post_SeriesLimitReached_CountsTheRejectionWithoutAFault()
    {
        var series = new SeriesOptions(new NaiveOptions(), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)));
        var set = new SeriesSet<string>(new ForecastEngineOptions<string>(series, timeProvider: new FakeTimeProvider(Start.AddDays(1)), maxSeries: 1));
        var sink = new ListSink();

        set.Post(new Observation<string>("room-1", Start, 4.0), sink);
        set.Post(new Observation<string>("room-2", Start, 5.0), sink);

        Assert.Equal(1, set.Count);
        EngineCounters counters = set.GetCounters();
        Assert.Equal(1, counters.Rejected);
        Assert.Equal(1, counters.Observations);
        Assert.Empty(sink.Faults);
    }

    [Fact]
    public void Restore_SetHoldsADeclaredEvent_ThrowsAndKeepsIt()
    {
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        using var bytes = new MemoryStream();
        new SeriesSet<string>(options).Snapshot(bytes, SnapshotKeyCodecs.Utf8String, 0);
        bytes.Position = 0;
        var set = new SeriesSet<string>(options);
        KnownEvent<string> closed = KnownEvent.ForAllSeries<string>(EventKind.Closure, Start, Start.AddMinutes(5));
        set.DeclareEvent(closed, new ListSink());

        Assert.Throws<InvalidOperationException>(() => set.Restore(bytes, SnapshotKeyCodecs.Utf8String));
        using var after = new MemoryStream();
        set.Snapshot(after, SnapshotKeyCodecs.Utf8String, 0);
        Assert.Equal(SnapshotFormat.EventsVersion, BitConverter.ToUInt16(after.ToArray(), 4)); // the declaration is still held
    }

    [Fact]
    public void Restore_SetAlreadyHoldsSeries_Throws()
    {
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        var set = new SeriesSet<string>(options);
        set.Post(new Observation<string>("room-1", Start, 4.0), new ListSink());
        using var bytes = new MemoryStream();
        set.Snapshot(bytes, SnapshotKeyCodecs.Utf8String, 1);
        bytes.Position = 0;

        Assert.Throws<InvalidOperationException>(() => set.Restore(bytes, SnapshotKeyCodecs.Utf8String));
    }

    [Fact]
    public void Restore_DamagedSnapshot_ThrowsAndStaysEmpty()
    {
        ForecastEngineOptions<string> options = Options(new FakeTimeProvider(Start.AddDays(1)));
        var set = new SeriesSet<string>(options);
        set.Post(Readings(seed: 3).ToArray(), new ListSink());
        using var bytes = new MemoryStream();
        set.Snapshot(bytes, SnapshotKeyCodecs.Utf8String, 1);
        byte[] damaged = bytes.ToArray();
        damaged[damaged.Length / 2] ^= 0x40;

        var target = new SeriesSet<string>(options);
        Assert.Throws<InvalidDataException>(() => target.Restore(new MemoryStream(damaged), SnapshotKeyCodecs.Utf8String));
        Assert.Equal(0, target.Count);
    }

    [Fact]
    public void RestoreCounters_NegativeCounter_ThrowsAndChangesNothing()
    {
        var set = new SeriesSet<string>(Options(new FakeTimeProvider(Start.AddDays(1))));
        set.Post(new Observation<string>("room-1", Start, 4.0), new ListSink());
        EngineCounters before = set.GetCounters();

        Assert.Throws<ArgumentOutOfRangeException>(() => set.RestoreCounters(before with { Late = -1 }));
        Assert.Throws<ArgumentOutOfRangeException>(() => set.RestoreCounters(before with { Rejected = -1 }));

        Assert.Equal(before, set.GetCounters());
    }

    [Fact]
    public async Task SeriesPublisher_SinkOfASet_DeliversToSubscribersAndReportsAThrowingOne()
    {
        var publisher = new SeriesPublisher<string>();
        var recorder = new EngineRecorder<string>();
        publisher.Forecasts.Subscribe(recorder);
        publisher.Alerts.Subscribe(recorder);
        publisher.Faults.Subscribe(recorder);
        publisher.Forecasts.Subscribe(new ThrowingObserver());
        var set = new SeriesSet<string>(Options(new FakeTimeProvider(Start.AddDays(1))));
        var direct = new ListSink();
        Observation<string>[] input = [.. Readings(seed: 4)];

        set.Post(input, publisher);
        set.Flush(publisher);
        var directSet = new SeriesSet<string>(Options(new FakeTimeProvider(Start.AddDays(1))));
        directSet.Post(input, direct);
        directSet.Flush(direct);
        await publisher.CompleteAsync();

        Assert.NotEmpty(direct.Forecasts);
        Assert.Equal(direct.Forecasts, recorder.Forecasts);
        Assert.Equal(direct.Alerts, recorder.Alerts);
        Assert.Equal(3, recorder.Completed);
        Assert.Contains(recorder.Faults, f => f.Kind == SeriesFaultKind.SubscriberFailed);
    }

    [Fact]
    public async Task SeriesPublisher_BatchesOfASetsOutput_SubscribersGetTheSameItemsInOrder()
    {
        // A buffer of 40 wakes a sleeping subscriber after 10 waiting items, so batches longer than that wake it
        // mid-batch and at the end; nothing may be lost or reordered either way.
        var publisher = new SeriesPublisher<string>(new PublishingOptions(subscriberCapacity: 40));
        var recorder = new EngineRecorder<string>();
        publisher.Forecasts.Subscribe(recorder);
        publisher.Alerts.Subscribe(recorder);
        publisher.Faults.Subscribe(recorder);
        var set = new SeriesSet<string>(Options(new FakeTimeProvider(Start.AddDays(1))));
        var direct = new ListSink();
        set.Post([.. Readings(seed: 7)], direct);
        set.Flush(direct);
        Assert.NotEmpty(direct.Alerts);
        SeriesFault<string>[] faults = [new("room-9", 3, SeriesFaultKind.ObservationRejected, "a refused reading"), new("room-8", 4, SeriesFaultKind.ActualRejected, "another")];

        // Batches of 1 to 30 updates, each waited out so the buffer of 40 never overflows.
        ForecastUpdate<string>[] updates = [.. direct.Forecasts];
        int at = 0;
        for (int size = 1; at < updates.Length; size = size % 30 + 1)
        {
            int n = Math.Min(size, updates.Length - at);
            publisher.Forecast(updates.AsSpan(at, n));
            at += n;
            await WaitUntil(() => recorder.Forecasts.Count == at);
        }

        publisher.Alert([.. direct.Alerts]);
        publisher.Fault(faults);
        publisher.Forecast(ReadOnlySpan<ForecastUpdate<string>>.Empty);
        await publisher.CompleteAsync();

        Assert.Equal(updates, recorder.Forecasts);
        Assert.Equal(direct.Alerts, recorder.Alerts);
        Assert.Equal(faults, recorder.Faults);
        Assert.Equal(3, recorder.Completed);
        Assert.Throws<InvalidOperationException>(() => publisher.Forecast(updates.AsSpan(0, 1)));
        Assert.Throws<InvalidOperationException>(() => publisher.Forecast(ReadOnlySpan<ForecastUpdate<string>>.Empty));
        Assert.Throws<InvalidOperationException>(() => publisher.Alert(ReadOnlySpan<DriftAlert<string>>.Empty));
        Assert.Throws<InvalidOperationException>(() => publisher.Fault(faults));
    }

    private static async Task WaitUntil(Func<bool> condition)
    {
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < deadline, "the subscriber did not get the batch within 30 s");
            await Task.Delay(1);
        }
    }

    private static ForecastEngineOptions<string> Options(TimeProvider time)
    {
        ImmutableArray<DriftRuleOptions> rules = [new TrackingSignalRuleOptions(warmUpPeriods: 3)];
        var series = new SeriesOptions(new MovingAverageOptions(4), PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1)), rules: rules);
        return new ForecastEngineOptions<string>(series, partitions: 1, timeProvider: time, maxEventTimeAhead: TimeSpan.FromDays(2));
    }

    /// <summary>Four rooms, one reading a minute for an hour, room-3 drifting upward from minute 20; a few readings twice.</summary>
    private static List<Observation<string>> Readings(int seed)
    {
        var rng = new Random(seed);
        var list = new List<Observation<string>>();
        for (int m = 0; m < 60; m++)
        {
            for (int room = 0; room < 4; room++)
            {
                double drift = room == 3 && m >= 20 ? (m - 20) * 0.8 : 0;
                list.Add(new Observation<string>($"room-{room}", Start.AddMinutes(m).AddSeconds(rng.Next(50)), 4 + rng.NextDouble() + drift));
                if (rng.Next(15) == 0)
                {
                    list.Add(new Observation<string>($"room-{room}", Start.AddMinutes(m).AddSeconds(55), 0.5));
                }
            }
        }

        return list;
    }

    private sealed class ListSink : ISeriesSink<string>
    {
        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public List<DriftAlert<string>> Alerts { get; } = [];

        public List<SeriesFault<string>> Faults { get; } = [];

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);

        public void Alert(in DriftAlert<string> alert) => Alerts.Add(alert);

        public void Fault(in SeriesFault<string> fault) => Faults.Add(fault);
    }

    private sealed class ThrowingObserver : IObserver<ForecastUpdate<string>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(ForecastUpdate<string> value) => throw new InvalidOperationException("a subscriber that fails on purpose");
    }
}
