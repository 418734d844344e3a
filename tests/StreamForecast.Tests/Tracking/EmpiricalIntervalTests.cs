using FsCheck;
using FsCheck.Fluent;
using MathNet.Numerics.Statistics;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Tracking;

/// <summary>
/// Empirical intervals and clipping at zero in the per-period step: warm-up, the quantiles they use (against MathNet's
/// batch definition 6), clipping, default outputs and state unchanged, and export → import on hostile sequences.
/// </summary>
public sealed class EmpiricalIntervalTests
{
    private static readonly PeriodCalendar s_days = PeriodCalendar.Daily(TimeZoneInfo.Utc);

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

    private static List<ForecastUpdate<string>> Replay(double[] history, SeriesOptions options)
    {
        var sink = new ListSink();
        Backtester.Replay("k", history, 0, options, sink);
        return sink.Forecasts;
    }

    private static double[] Noise(int n, int seed, double level = 50)
    {
        var rng = new Random(seed);
        return [.. Enumerable.Range(0, n).Select(_ => Math.Round(level + (10 * (rng.NextDouble() - 0.5)), 2))];
    }

    [Fact]
    public void Point_DefaultOptions_NormalKindAtEightyPercent()
    {
        var updates = Replay(Noise(30, 1), new SeriesOptions(new MovingAverageOptions(3), s_days, horizon: 4));
        ForecastPoint next = updates[^1].Next;
        Assert.Equal(IntervalKind.Normal, next.Kind);
        Assert.Equal(0.8, next.Coverage); // 2Φ(1.2816) − 1 (NormalMultiplier.Coverage80), labelled as the round value
        Assert.Equal(IntervalKind.Normal, updates[^1].AtHorizon.Kind);
    }

    [Fact]
    public void Model_DefaultOptions_StateAndOutputsAsWithoutIntervalSettings()
    {
        // The snapshot writes the model's exported state: same length and bits as a plain tracked forecaster means the
        // snapshot bytes of existing configurations do not change.
        var options = new SeriesOptions(new ExponentialSmoothingOptions(0.3), s_days, horizon: 5);
        var step = new SeriesStep<string>("k", options);
        var plain = new TrackedForecaster(options.Method, options.Tracking);
        var sink = new ListSink();
        double[] y = Noise(60, 2);
        for (int t = 0; t < y.Length; t++)
        {
            step.Close(t, true, y[t], sink);
            plain.Update(y[t]);
        }

        Assert.Equal(plain.StateLength, step.Model.StateLength);
        Assert.True(Bits.Same(plain.ExportState(), step.Model.ExportState()));
        Assert.True(plain.TryForecast(5, NormalMultiplier.Coverage80, out double f, out PredictionInterval iv));
        Assert.Equal((f, iv.Lower, iv.Upper), (sink.Forecasts[^1].AtHorizon.Value, sink.Forecasts[^1].AtHorizon.Lower, sink.Forecasts[^1].AtHorizon.Upper));
    }

    [Fact]
    public void Point_EmpiricalWarmUp_NormalUntilMinimumErrorsThenDefinition6Quantiles()
    {
        var empirical = new EmpiricalIntervalOptions(0.8, window: 15, minimumErrors: 10);
        var options = new SeriesOptions(new NaiveOptions(), s_days, horizon: 3, empiricalIntervals: empirical);
        double[] y = Noise(40, 3);
        var updates = Replay(y, options);

        // Naive: F(t+h | t) = y_t, so the one-step errors are y_t − y_{t−1} and the 3-step errors y_t − y_{t−3}.
        for (int t = 1; t < y.Length; t++)
        {
            ForecastPoint next = updates[t].Next;
            int oneStepErrors = t; // periods 1..t scored
            Assert.Equal(0.8, next.Coverage);
            if (oneStepErrors < 10)
            {
                Assert.Equal(IntervalKind.Normal, next.Kind);
                continue;
            }

            Assert.Equal(IntervalKind.Empirical, next.Kind);
            double[] errors = [.. Enumerable.Range(Math.Max(1, t - 14), Math.Min(15, t)).Select(i => y[i] - y[i - 1])];
            Assert.Equal(y[t] + Statistics.QuantileCustom(errors, 0.1, QuantileDefinition.R6), next.Lower, 1e-9);
            Assert.Equal(y[t] + Statistics.QuantileCustom(errors, 0.9, QuantileDefinition.R6), next.Upper, 1e-9);

            int farErrors = t - 2; // periods 3..t have a forecast from three periods earlier
            ForecastPoint far = updates[t].AtHorizon;
            Assert.Equal(farErrors >= 10 ? IntervalKind.Empirical : IntervalKind.Normal, far.Kind);
            if (farErrors >= 10)
            {
                double[] e3 = [.. Enumerable.Range(Math.Max(3, t - 14), Math.Min(15, farErrors)).Select(i => y[i] - y[i - 3])];
                Assert.Equal(y[t] + Statistics.QuantileCustom(e3, 0.9, QuantileDefinition.R6), far.Upper, 1e-9);
            }
        }
    }

    [Fact]
    public void Point_NonNegativeFallingSeries_ForecastsAndLowerBoundsClippedAtZero()
    {
        double[] y = [20, 17, 14, 11, 8, 5, 2, 0, 0, 0, 0, 0];
        var clipped = Replay(y, new SeriesOptions(new HoltOptions(0.8, 0.8), s_days, horizon: 3, nonNegative: true));
        var raw = Replay(y, new SeriesOptions(new HoltOptions(0.8, 0.8), s_days, horizon: 3));

        Assert.Contains(raw, u => u.AtHorizon.Value < 0 && u.Next.Lower < 0); // the method alone goes below zero
        Assert.All(clipped, u =>
        {
            Assert.False(u.Next.Value < 0 || u.Next.Lower < 0 || u.Next.Upper < 0 || u.AtHorizon.Value < 0 || u.AtHorizon.Lower < 0);
            Assert.False(u.ForecastForPeriod < 0); // the scored forecast is the clipped, published one
        });
        int i = raw.FindIndex(u => u.Next.Value < 0);
        Assert.Equal(0, clipped[i].Next.Value);
        Assert.Equal(raw[i + 1].Actual - 0, clipped[i + 1].Error); // scored against 0, not against the negative forecast
    }

    private static readonly SeriesOptions[] s_stateOptions =
    [
        new(new ExponentialSmoothingOptions(0.3), s_days, empiricalIntervals: new EmpiricalIntervalOptions(0.8, 12, 9)),
        new(new MovingAverageOptions(3), s_days, horizon: 4, empiricalIntervals: new EmpiricalIntervalOptions(0.5, 10, 10), nonNegative: true),
        new(new NaiveOptions(), s_days, horizon: 2, empiricalIntervals: new EmpiricalIntervalOptions(0.9, 30, 19)),
        new(new HoltOptions(0.5, 0.1), s_days, horizon: 7, nonNegative: true),
    ];

    [Fact]
    public void ExportImport_HostileSequencesWithRefusedValues_RoundTripsAndContinuesBitForBit() =>
        PropertyCases.Check(Prop.ForAll(
            Gen.Choose(0, s_stateOptions.Length - 1).ToArbitrary(),
            HostileSeries.ArbitraryWithRefused(120),
            Gen.Choose(0, 120).ToArbitrary(),
            (which, values, cut) =>
            {
                SeriesOptions options = s_stateOptions[which];
                var live = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
                TrackedForecaster? copy = null;
                for (int i = 0; i < values.Length; i++)
                {
                    if (i == Math.Min(cut, values.Length - 1))
                    {
                        double[] state = live.ExportState();
                        copy = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
                        copy.ImportState(state);
                        if (!Bits.Same(state, copy.ExportState()))
                        {
                            return false;
                        }
                    }

                    double[] before = live.ExportState();
                    bool liveTook = Step(live, values[i]);
                    if (!liveTook && !Bits.Same(before, live.ExportState()))
                    {
                        return false; // a refused value changed the state
                    }

                    if (copy is not null && Step(copy, values[i]) != liveTook)
                    {
                        return false;
                    }
                }

                return copy is null || (Bits.Same(live.ExportState(), copy.ExportState()) && SamePoints(live, copy, options));
            }),
        Math.Max(200, PropertyCases.PerFamily / 10));

    private static bool Step(TrackedForecaster model, double value)
    {
        try
        {
            model.Update(value);
            return true;
        }
        catch (ArgumentOutOfRangeException)
        {
            return false;
        }
    }

    private static bool SamePoints(TrackedForecaster a, TrackedForecaster b, SeriesOptions options)
    {
        bool wa = a.TryForecast(options.Horizon, options.Intervals, out double fa, out PredictionInterval ia, out IntervalKind ka);
        bool wb = b.TryForecast(options.Horizon, options.Intervals, out double fb, out PredictionInterval ib, out IntervalKind kb);
        return wa == wb && ka == kb && Bits.Same([fa, ia.Lower, ia.Upper], [fb, ib.Lower, ib.Upper]);
    }

    [Fact]
    public void ImportState_WindowOutOfStepWithTracker_RefusedAndNothingChanges()
    {
        SeriesOptions options = s_stateOptions[0];
        var model = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
        foreach (double v in Noise(30, 4))
        {
            model.Update(v);
        }

        double[] good = model.ExportState();
        int windowStart = good.Length - 13; // one-step window: count, then 12 errors
        Assert.Equal(12, good[windowStart]);

        double[] wrongCount = (double[])good.Clone();
        wrongCount[windowStart] = 11;
        wrongCount[windowStart + 12] = 0;
        double[] wrongNewest = (double[])good.Clone();
        wrongNewest[windowStart + 12] += 1;

        var target = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
        double[] fresh = target.ExportState();
        var ex1 = Assert.Throws<ArgumentException>(() => target.ImportState(wrongCount));
        Assert.Contains("one-step error window holds 11", ex1.Message, StringComparison.Ordinal);
        var ex2 = Assert.Throws<ArgumentException>(() => target.ImportState(wrongNewest));
        Assert.Contains("tracker's last error", ex2.Message, StringComparison.Ordinal);
        Assert.True(Bits.Same(fresh, target.ExportState()));
    }

    [Fact]
    public void ImportState_WaitingForecastBeforeAnyPeriod_Refused()
    {
        SeriesOptions options = s_stateOptions[1]; // horizon 4: four waiting forecasts at the end of the state
        var model = new TrackedForecaster(options.Method, options.Tracking, options.Intervals);
        double[] state = model.ExportState();
        state[^2] = 5; // slot 3 is first written after period 3; the forecaster has taken none
        var ex = Assert.Throws<ArgumentException>(() => model.ImportState(state));
        Assert.Contains("waiting forecast 3", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Acknowledge_EmpiricalSeries_EmptiesWindowsAndFallsBackToNormal()
    {
        var options = new SeriesOptions(new MovingAverageOptions(2), s_days, empiricalIntervals: new EmpiricalIntervalOptions(0.8, 20, 9));
        var step = new SeriesStep<string>("k", options);
        var sink = new ListSink();
        double[] y = Noise(30, 5);
        for (int t = 0; t < y.Length; t++)
        {
            step.Close(t, true, y[t], sink);
        }

        Assert.Equal(IntervalKind.Empirical, sink.Forecasts[^1].Next.Kind);
        step.Acknowledge(29, sink);
        step.Close(30, true, 50, sink);
        Assert.Equal(IntervalKind.Normal, sink.Forecasts[^1].Next.Kind);
    }

    [Fact]
    public void ForecastPoint_Size_KindSitsInPaddingCoverageAddsEightBytes()
    {
        // int + 3 doubles was 32 bytes with 4 of padding; the one-byte kind fills part of it, the coverage adds 8.
        Assert.Equal(40, System.Runtime.CompilerServices.Unsafe.SizeOf<ForecastPoint>());
        Assert.Equal(1, System.Runtime.CompilerServices.Unsafe.SizeOf<IntervalKind>());
    }

    [Fact]
    public void SeriesOptions_IntervalSettings_TakePartInEquality()
    {
        var a = new SeriesOptions(new NaiveOptions(), s_days, empiricalIntervals: new EmpiricalIntervalOptions());
        Assert.Equal(a, new SeriesOptions(new NaiveOptions(), s_days, empiricalIntervals: new EmpiricalIntervalOptions()));
        Assert.NotEqual(a, new SeriesOptions(new NaiveOptions(), s_days));
        Assert.NotEqual(a, new SeriesOptions(new NaiveOptions(), s_days, empiricalIntervals: new EmpiricalIntervalOptions(), nonNegative: true));
        Assert.Equal(0.95, new SeriesOptions(new NaiveOptions(), s_days, intervalMultiplier: NormalMultiplier.Coverage95).IntervalCoverage, 1e-14);
    }
}
