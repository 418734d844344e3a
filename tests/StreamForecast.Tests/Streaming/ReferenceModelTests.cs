using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tests.Tracking;

namespace StreamForecast.Tests.Streaming;

/// <summary>The reference model a series can run beside its published one: options, the step, snapshots.</summary>
public sealed class ReferenceModelTests
{
    private static readonly PeriodCalendar s_days = PeriodCalendar.Daily(TimeZoneInfo.Utc);

    private static readonly (ForecasterOptions Method, ForecasterOptions Reference)[] s_pairs =
    [
        (new ExponentialSmoothingOptions(0.7), new ExponentialSmoothingOptions(0.1)),
        (new HoltOptions(0.8, 0.3), new MovingAverageOptions(12)),
        (new NaiveOptions(), new HoltWintersOptions(4, Seasonality.Multiplicative, 0.1, 0.02, 0.05)),
        (new MovingAverageOptions(3), new CrostonOptions(0.05)),
    ];

    private sealed class ListSink : ISeriesSink<string>
    {
        public List<ForecastUpdate<string>> Forecasts { get; } = [];

        public List<DriftAlert<string>> Alerts { get; } = [];

        public List<SeriesFault<string>> Faults { get; } = [];

        public void Forecast(in ForecastUpdate<string> update) => Forecasts.Add(update);

        public void Alert(in DriftAlert<string> alert) => Alerts.Add(alert);

        public void Fault(in SeriesFault<string> fault) => Faults.Add(fault);
    }

    private static Gen<double[]> Actuals { get; } =
        Gen.Frequency(
            (10, Gen.Choose(0, 20_000).Select(i => i / 100.0)),
            (2, Gen.Constant(0.0)),
            (1, Gen.Choose(-300, -1).Select(i => i / 10.0)),
            (1, HostileSeries.AcceptedValue)).ArrayOf().Select(a => a.Length > 80 ? a[..80] : a);

    [Fact]
    public void SeriesOptions_RuleWatchesReferenceWithoutReferenceMethod_Throws()
    {
        DriftRuleOptions rule = new CusumRuleOptions() with { Watches = WatchedModel.Reference };
        ArgumentException e = Assert.Throws<ArgumentException>(() => new SeriesOptions(new NaiveOptions(), s_days, rules: [rule]));
        Assert.Contains("reference", e.Message, StringComparison.Ordinal);
        _ = new SeriesOptions(new NaiveOptions(), s_days, rules: [rule], referenceMethod: new MovingAverageOptions(7));
    }

    [Fact]
    public void SeriesOptions_Default_HasNoReferenceAndEqualityComparesIt()
    {
        var plain = new SeriesOptions(new NaiveOptions(), s_days);
        Assert.Null(plain.ReferenceMethod);
        Assert.Null(new SeriesStep<string>("k", plain).Reference);
        var withReference = new SeriesOptions(new NaiveOptions(), s_days, referenceMethod: new MovingAverageOptions(7));
        Assert.NotEqual(plain, withReference);
        Assert.Equal(withReference, new SeriesOptions(new NaiveOptions(), s_days, referenceMethod: new MovingAverageOptions(7)));
        Assert.NotEqual(withReference, new SeriesOptions(new NaiveOptions(), s_days, referenceMethod: new MovingAverageOptions(8)));
    }

    [Fact]
    public void Watches_UndefinedValue_Throws() =>
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions() with { Watches = (WatchedModel)7 });

    [Fact]
    public void WithRaiseLevel_RuleWatchingReference_KeepsWhatItWatches()
    {
        DriftRuleOptions rule = new CusumRuleOptions(decisionInterval: 4) with { Watches = WatchedModel.Reference };
        Assert.Equal(WatchedModel.Reference, rule.WithRaiseLevel(6).Watches);
        Assert.Equal(WatchedModel.Published, new CusumRuleOptions().WithRaiseLevel(6).Watches);
        Assert.NotEqual(new CusumRuleOptions(), new CusumRuleOptions() with { Watches = WatchedModel.Reference });
    }

    [Fact]
    public void Close_ReferenceModelRefusesTheActual_FaultsAndLeavesBothModelsUnchanged()
    {
        // A multiplicative seasonal reference refuses a negative actual that the naive published model would take.
        var options = new SeriesOptions(new NaiveOptions(), s_days, referenceMethod: s_pairs[2].Reference);
        var step = new SeriesStep<string>("sensor/3", options);
        var sink = new ListSink();
        for (int t = 0; t < 12; t++)
        {
            step.Close(t, true, 10 + (t % 4), sink);
        }

        double[] model = step.Model.ExportState();
        double[] reference = step.Reference!.ExportState();
        step.Close(12, true, -5, sink);

        Assert.Equal(SeriesFaultKind.ActualRejected, Assert.Single(sink.Faults).Kind);
        Assert.True(Bits.Same(model, step.Model.ExportState()));
        Assert.True(Bits.Same(reference, step.Reference!.ExportState()));
        Assert.Equal(12, sink.Forecasts.Count);
        Assert.Equal(13, step.LastActual);
    }

    [Fact]
    public void Acknowledge_WithReferenceModel_StartsBothErrorStatisticsAfresh()
    {
        var options = new SeriesOptions(new ExponentialSmoothingOptions(0.5), s_days, referenceMethod: new MovingAverageOptions(3));
        var step = new SeriesStep<string>("k", options);
        var sink = new ListSink();
        for (int t = 0; t < 10; t++)
        {
            step.Close(t, true, t * 3, sink);
        }

        Assert.True(step.Reference!.Tracker.Count > 0);
        step.Acknowledge(9, sink);
        Assert.Equal(0, step.Model.Tracker.Count);
        Assert.Equal(0, step.Reference.Tracker.Count);
        Assert.Equal(10, step.Reference.Count);
    }

    /// <summary>
    /// Adding a reference model changes nothing the published model publishes: forecasts and the alerts of rules that
    /// watch the published model are those of the same series without it.
    /// </summary>
    [Fact]
    public void Close_WithReferenceModel_PublishesWhatTheSeriesWithoutItPublishes() =>
        PropertyCases.Check(Prop.ForAll(Gen.Choose(0, s_pairs.Length - 1).ToArbitrary(), Actuals.ToArbitrary(), (which, actuals) =>
        {
            (ForecasterOptions method, ForecasterOptions reference) = s_pairs[which];
            actuals = [.. actuals.Select(Math.Abs)]; // inside every reference method's domain (a refusal is the test above)
            DriftRuleOptions[] rules = [new TrackingSignalRuleOptions(limit: 3, warmUpPeriods: 2), new CusumRuleOptions(decisionInterval: 3)];
            var plain = new SeriesStep<string>("k", new SeriesOptions(method, s_days, rules: [.. rules]));
            var shadowed = new SeriesStep<string>("k", new SeriesOptions(
                method, s_days, rules: [.. rules, rules[1] with { Watches = WatchedModel.Reference }], referenceMethod: reference));
            var a = new ListSink();
            var b = new ListSink();
            for (int t = 0; t < actuals.Length; t++)
            {
                plain.Close(t, true, actuals[t], a);
                shadowed.Close(t, true, actuals[t], b);
            }

            // Refusals differ only where the reference model alone refuses; those periods are refused for both models.
            List<long> onlyReferenceRefused = [.. b.Faults.Select(f => f.Period).Except(a.Faults.Select(f => f.Period))];
            if (onlyReferenceRefused.Count > 0)
            {
                return true.Label("the reference refused an actual the method takes (checked by the refusal test)");
            }

            return (a.Forecasts.SequenceEqual(b.Forecasts)
                && a.Alerts.SequenceEqual(b.Alerts.Where(x => x.Watched == WatchedModel.Published))
                && b.Alerts.Where(x => x.Watched == WatchedModel.Reference).All(x => x.RuleIndex == 2))
                .Label("published outputs differ");
        }));

    /// <summary>
    /// The reference model's errors are those of a standalone forecaster created from the reference options, recomputed
    /// from scratch for every prefix of the actuals (forecast from the prefix, minus nothing else), and its error
    /// statistics match the batch recomputation of the error tracker's definitions.
    /// </summary>
    [Fact]
    public void Reference_RandomActuals_ErrorsEqualAStandaloneForecasterRecomputedPerPrefix() =>
        PropertyCases.Check(Prop.ForAll(Gen.Choose(0, s_pairs.Length - 1).ToArbitrary(), Actuals.ToArbitrary(), (which, actuals) =>
        {
            (ForecasterOptions method, ForecasterOptions reference) = s_pairs[which];
            var step = new SeriesStep<string>("k", new SeriesOptions(method, s_days, referenceMethod: reference));
            var sink = new ListSink();
            var taken = new List<double>();
            var periods = new List<(double Actual, double Forecast)>();
            for (int t = 0; t < actuals.Length; t++)
            {
                int faults = sink.Faults.Count;
                long scoredBefore = step.Reference!.Tracker.Count;
                step.Close(t, true, actuals[t], sink);
                if (sink.Faults.Count > faults)
                {
                    continue; // refused by either model: neither took it
                }

                // Batch: a fresh forecaster fed the accepted prefix, asked for the next period.
                Forecaster fresh = reference.CreateForecaster();
                foreach (double x in taken)
                {
                    fresh.Update(x);
                }

                double forecast = fresh.TryForecast(1, out double f) ? f : double.NaN;
                taken.Add(actuals[t]);
                periods.Add((actuals[t], forecast));
                bool scored = step.Reference.Tracker.Count > scoredBefore;
                if (scored != !double.IsNaN(forecast))
                {
                    return false.Label($"period {t}: scored {scored} but the fresh forecaster's forecast is {forecast}");
                }

                if (scored && BitConverter.DoubleToInt64Bits(step.Reference.LastError) != BitConverter.DoubleToInt64Bits(actuals[t] - forecast))
                {
                    return false.Label($"period {t}: reference error {step.Reference.LastError:R}, recomputed {actuals[t] - forecast:R}");
                }
            }

            var options = StreamForecast.Tracking.ErrorTrackerOptions.Default;
            var batch = new ErrorStatisticsBatch(periods, options.SeasonLength, options.SmoothedMadWeight, options.TriggBeta);
            var tracker = step.Reference!.Tracker;
            return (tracker.Count == batch.Count && Close(tracker.Rsfe, batch.Rsfe, batch.SumAbsErrors) && (batch.Count == 0 || Close(tracker.Mad, batch.Mad, batch.Mad)))
                .Label($"statistics: count {tracker.Count}/{batch.Count}, RSFE {tracker.Rsfe:R}/{batch.Rsfe:R}, MAD {tracker.Mad:R}/{batch.Mad:R}");
        }));

    private sealed class Output : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public void Alert(in DriftAlert<string> alert)
        {
        }

        public void Fault(in SeriesFault<string> fault)
        {
        }

        public void Forecast(in ForecastUpdate<string> update)
        {
        }
    }

    private static readonly SeriesOptions s_shadowed = new(
        new ExponentialSmoothingOptions(0.6), s_days, gaps: GapPolicy.Missing,
        rules: [new CusumRuleOptions() with { Watches = WatchedModel.Reference }], referenceMethod: new ExponentialSmoothingOptions(0.15));

    private static readonly double[] s_loaves = [31, 35, 28, 40, 38, 33, 36, 30, 44, 39, 37, 41];

    /// <summary>The snapshot payload of a series that took the first <paramref name="days"/> of <see cref="s_loaves"/>.</summary>
    private static byte[] Payload(SeriesOptions options, int days)
    {
        var state = new SeriesState<string>("bakery/rye", options, 0);
        var output = new Output();
        var start = new DateTimeOffset(2027, 5, 3, 9, 0, 0, TimeSpan.Zero);
        for (int t = 0; t < days; t++)
        {
            DateTimeOffset time = start.AddDays(t);
            Assert.Null(state.Observe(time, s_days.PeriodOf(time), s_loaves[t], null, 0, output));
        }

        state.CloseAll(output);
        var writer = new SnapshotPayloadWriter();
        state.Write(writer);
        return writer.WrittenMemory.ToArray();
    }

    private static void Read(SeriesOptions options, byte[] payload) =>
        new SeriesState<string>("bakery/rye", options, 0).Read(new SnapshotPayloadReader(payload));

    [Fact]
    public void Read_SnapshotWithReferenceIntoOptionsWithout_RefusesNamingBoth()
    {
        byte[] payload = Payload(s_shadowed, 10);
        Read(s_shadowed, payload); // reads back under its own options
        var plain = new SeriesOptions(new ExponentialSmoothingOptions(0.6), s_days, gaps: GapPolicy.Missing);
        InvalidDataException e = Assert.Throws<InvalidDataException>(() => Read(plain, payload));
        Assert.Contains("SES(0.6) with reference SES(0.15)", e.Message, StringComparison.Ordinal);
        Assert.Throws<InvalidDataException>(() => Read(s_shadowed, Payload(plain, 10)));
        var otherReference = new SeriesOptions(new ExponentialSmoothingOptions(0.6), s_days, gaps: GapPolicy.Missing, referenceMethod: new MovingAverageOptions(7));
        Assert.Throws<InvalidDataException>(() => Read(otherReference, payload));
    }

    [Fact]
    public void Read_ReferenceModelOutOfStepWithTheMethod_Refuses()
    {
        // Splice the reference state of a series one period further on into a snapshot: every field fits on its own, but
        // the two models take every actual together, so their counts must agree.
        byte[] payload = Payload(s_shadowed, 10);
        byte[] here = ReferenceBytes(10);
        byte[] later = ReferenceBytes(11);
        int at = payload.AsSpan().IndexOf(here);
        Assert.True(at > 0);
        Assert.Equal(here.Length, later.Length);
        later.CopyTo(payload, at);
        InvalidDataException e = Assert.Throws<InvalidDataException>(() => Read(s_shadowed, payload));
        Assert.Contains("reference model has taken 11 actuals", e.Message, StringComparison.Ordinal);
    }

    /// <summary>The reference model's state as a snapshot writes it, after the first <paramref name="days"/> loaves.</summary>
    private static byte[] ReferenceBytes(int days)
    {
        var step = new SeriesStep<string>("bakery/rye", s_shadowed);
        var sink = new ListSink();
        for (int t = 0; t < days; t++)
        {
            step.Close(t, true, s_loaves[t], sink);
        }

        var writer = new SnapshotPayloadWriter();
        writer.WriteDoubles(step.Reference!.ExportState());
        return writer.WrittenMemory.ToArray();
    }

    [Fact]
    public void Docs_ReferenceModelSnippet_IsThisCompiledCodeAndBuildsTheSlowerCopy()
    {
        // <reference-model>
        ForecasterOptions method = new ExponentialSmoothingOptions(0.6);
        var cusum = new CusumRuleOptions(decisionInterval: 5, referenceValue: 1);
        var series = new SeriesOptions(
            method,
            PeriodCalendar.Daily(TimeZoneInfo.Utc),
            rules: [cusum, cusum with { Watches = WatchedModel.Reference }],
            referenceMethod: ReferenceMethods.Slower(method)); // SES(0.15)
        // </reference-model>
        Assert.Equal("SES(0.15)", series.ReferenceMethod!.MethodName);

        string root = AppContext.BaseDirectory;
        while (!File.Exists(Path.Combine(root, "StreamForecast.sln")))
        {
            root = Path.GetDirectoryName(root) ?? throw new InvalidOperationException("repository root not found");
        }

        static string Trimmed(string text) => string.Join("\n", text.ReplaceLineEndings("\n").Split('\n').Select(l => l.Trim()).Where(l => l.Length > 0));
        string source = File.ReadAllText(Path.Combine(root, "tests", "StreamForecast.Tests", "Streaming", "ReferenceModelTests.cs"));
        string block = source.Split("// <reference-model>")[1].Split("// </reference-model>")[0];
        string docs = File.ReadAllText(Path.Combine(root, "docs", "reference-model.md"));
        Assert.Contains(Trimmed(block), Trimmed(docs), StringComparison.Ordinal);
    }

    private static bool Close(double actual, double expected, double scale) =>
        Math.Abs(actual - expected) <= 1e-9 * Math.Max(1, Math.Abs(scale));
}
