using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// The engine's per-series state under hostile event streams: every state written reads back and writes the same bytes,
/// the copy continues exactly like the original, and after any input a normal observation is still taken.
/// </summary>
public sealed class SeriesStateRoundTripTests
{
    private static readonly DateTimeOffset s_start = new(2027, 3, 1, 0, 0, 0, TimeSpan.Zero);
    private static readonly PeriodCalendar s_minutes = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));

    private static readonly SeriesOptions[] s_options =
    [
        Series(new NaiveOptions()),
        Series(new WeightedMovingAverageOptions([3, 2, 1])),
        Series(new MovingAverageOptions(4), new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 2)),
        Series(new HoltWintersOptions(4, Seasonality.Multiplicative, 0.3, 0.1, 0.2), new LatenessPolicy(TimeSpan.FromMinutes(1), restatementPeriods: 1)),
        Series(new CrostonOptions(), gaps: GapPolicy.Zero),
        Series(new ExponentialSmoothingOptions(0.2), new LatenessPolicy(TimeSpan.FromMinutes(3), restatementPeriods: 3), GapPolicy.CarryForward),
    ];

    // The same hostile streams with a reference model beside the method (restatement on and off, a reference that refuses
    // what the method takes, rules on either model's errors).
    private static readonly SeriesOptions[] s_withReference =
    [
        WithReference(new ExponentialSmoothingOptions(0.7), new MovingAverageOptions(6), new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 2)),
        WithReference(new NaiveOptions(), new HoltWintersOptions(4, Seasonality.Multiplicative, 0.1, 0.02, 0.05), gaps: GapPolicy.Zero),
        WithReference(new HoltOptions(0.8, 0.2), ReferenceMethods.Slower(new HoltOptions(0.8, 0.2)), new LatenessPolicy(TimeSpan.FromMinutes(1), restatementPeriods: 3), GapPolicy.CarryForward),
        WithReference(new MovingAverageOptions(2), new CrostonOptions(0.05)),
    ];

    private sealed class Output : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public List<object> Items { get; } = [];

        public void Alert(in DriftAlert<string> alert) => Items.Add(alert);

        public void Fault(in SeriesFault<string> fault) => Items.Add(fault);

        public void Forecast(in ForecastUpdate<string> update) => Items.Add(update);
    }

    private readonly record struct Event(int Minute, int Second, double Quantity, string? Id);

    private static SeriesOptions Series(ForecasterOptions method, LatenessPolicy lateness = default, GapPolicy gaps = GapPolicy.Missing) =>
        new(method, s_minutes, lateness, gaps, rules: [new TrackingSignalRuleOptions(warmUpPeriods: 2), new CusumRuleOptions()], maxCatchUpPeriods: 50);

    private static SeriesOptions WithReference(ForecasterOptions method, ForecasterOptions reference, LatenessPolicy lateness = default, GapPolicy gaps = GapPolicy.Missing) =>
        new(method, s_minutes, lateness, gaps,
            rules: [new TrackingSignalRuleOptions(warmUpPeriods: 2) with { Watches = WatchedModel.Reference }, new CusumRuleOptions(), new CusumRuleOptions() with { Watches = WatchedModel.Reference }],
            maxCatchUpPeriods: 50, referenceMethod: reference);

    private static Gen<Event> EventGen { get; } =
        from step in Gen.Frequency((8, Gen.Choose(0, 2)), (1, Gen.Choose(-20, 0)), (1, Gen.Elements(-100_000, 400, 5_000, 2_000_000)))
        from second in Gen.Choose(0, 59)
        from quantity in HostileSeries.AnyValue
        from id in Gen.Frequency((3, Gen.Constant<string?>(null)), (2, Gen.Choose(0, 20).Select(i => (string?)$"e{i}")))
        select new Event(step, second, quantity, id);

    /// <summary>Writes, reads into a new state, writes again: the bytes must match.</summary>
    private static SeriesState<string> RoundTrip(SeriesState<string> state, SeriesOptions options, out byte[] written)
    {
        var writer = new SnapshotPayloadWriter();
        state.Write(writer);
        written = writer.WrittenMemory.ToArray();
        var copy = new SeriesState<string>(state.Key, options, 0);
        copy.Read(new SnapshotPayloadReader(written));
        return copy;
    }

    private static byte[] Bytes(SeriesState<string> state)
    {
        var writer = new SnapshotPayloadWriter();
        state.Write(writer);
        return writer.WrittenMemory.ToArray();
    }

    [Fact]
    public void Write_HostileEventStreams_ReadsBackIdenticallyAndContinuesIdentically() =>
        PropertyCases.Check(Prop.ForAll(
            Gen.Choose(0, s_options.Length - 1).ToArbitrary(),
            EventGen.ArrayOf().ToArbitrary(),
            Gen.Choose(0, 1000).ToArbitrary(),
            (which, events, cut) => Run(s_options[which], events, cut)));

    [Fact]
    public void Write_HostileEventStreamsWithReferenceModel_ReadsBackIdenticallyAndContinuesIdentically() =>
        PropertyCases.Check(Prop.ForAll(
            Gen.Choose(0, s_withReference.Length - 1).ToArbitrary(),
            EventGen.ArrayOf().ToArbitrary(),
            Gen.Choose(0, 1000).ToArbitrary(),
            (which, events, cut) => Run(s_withReference[which], events, cut)));

    private static Property Run(SeriesOptions options, Event[] events, int cut)
    {
        var state = new SeriesState<string>("bakery/rye", options, 0);
        var output = new Output();
        SeriesState<string>? copy = null;
        Output? copyOutput = null;
        int split = cut % (events.Length + 1);
        long minute = 0, latest = 0;
        for (int i = 0; i <= events.Length; i++)
        {
            if (i == split)
            {
                copy = RoundTrip(state, options, out _);
                copyOutput = new Output();
            }

            if (i == events.Length)
            {
                break;
            }

            Event e = events[i];
            minute = Math.Clamp(minute + e.Minute, -3_000_000, 3_000_000);
            DateTimeOffset time = s_start.AddMinutes(minute).AddSeconds(e.Second);
            if (!NumericDomain.Contains(e.Quantity))
            {
                continue; // refused at the engine's door (ObservationRules): never reaches the series
            }

            latest = Math.Max(latest, minute);
            long period = s_minutes.PeriodOf(time);
            string? refusedHere = state.Observe(time, period, e.Quantity, e.Id, 0, output);
            if (copy is not null)
            {
                string? refusedThere = copy.Observe(time, period, e.Quantity, e.Id, 0, copyOutput!);
                if (refusedHere != refusedThere)
                {
                    return false.Label($"refusals differ at {i}");
                }
            }

            SeriesState<string> reread = RoundTrip(state, options, out byte[] written);
            if (!Bytes(reread).AsSpan().SequenceEqual(written))
            {
                return false.Label($"write → read → write differs after event {i}");
            }

            // A normal observation in a fresh period after the latest is taken, and its period closes without a refused actual.
            var probeOutput = new Output();
            DateTimeOffset next = s_start.AddMinutes(latest + 1);
            if (reread.Observe(next, s_minutes.PeriodOf(next), 10, null, 0, probeOutput) is { } refused)
            {
                return false.Label($"after event {i} a normal observation is refused: {refused}");
            }

            reread.CloseAll(probeOutput);
            if (probeOutput.Items.OfType<SeriesFault<string>>().Any(f => f.Kind == SeriesFaultKind.ActualRejected && f.Period == s_minutes.PeriodOf(next)))
            {
                return false.Label($"after event {i} the normal actual 10 is refused by the model");
            }
        }

        state.CloseAll(output);
        copy!.CloseAll(copyOutput!);
        int before = output.Items.Count - copyOutput!.Items.Count;
        if (before < 0 || !output.Items.Skip(before).SequenceEqual(copyOutput.Items))
        {
            return false.Label($"the copy taken at {split} published something else");
        }

        return Bytes(state).AsSpan().SequenceEqual(Bytes(copy)).Label("final states differ");
    }
}
