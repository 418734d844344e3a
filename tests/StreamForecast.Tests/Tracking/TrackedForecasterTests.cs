using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Tracking;

public sealed class TrackedForecasterTests
{
    private static (TrackedForecaster Tracked, List<PeriodScore> Scores) Run(ForecasterOptions options, double[] series, ErrorTrackerOptions? trackerOptions = null)
    {
        var tracked = new TrackedForecaster(options, trackerOptions);
        var scores = new List<PeriodScore>();
        foreach (double y in series)
        {
            scores.Add(tracked.Update(y));
        }

        return (tracked, scores);
    }

    [Fact]
    public void Update_MovingAverageOnNistAveragingSeries_MatchesN3f()
    {
        // check-values N3f (DERIVED: NIST e-Handbook §6.4.2.1 3-point averages shifted one period) on the §6.4.2 data
        // (check-values N1, READ): F_4..F_12, and over t=4..12 RSFE 3.0, MAD 1.814815, MSE 4.728395, MAPE 18.249528 %.
        double[] published = [8.6667, 9.6667, 10, 11, 10.6667, 10, 10.3333, 9.6667, 11];
        (var tracked, var scores) = Run(new MovingAverageOptions(3), ReferenceData.NistAveraging);
        Assert.All(scores.Take(3), s => Assert.False(s.IsScored)); // t=1..3: no forecast yet
        for (int t = 3; t < 12; t++)
        {
            Assert.True(scores[t].IsScored);
            Assert.Equal(published[t - 3], scores[t].Forecast, 4); // N3f: F_4..F_12 to 4 decimals
            Assert.Equal(ReferenceData.NistAveraging[t] - scores[t].Forecast, scores[t].Error); // e = actual − forecast
        }

        ErrorTracker m = tracked.Tracker;
        Assert.Equal(9, m.Count);
        Assert.Equal(12, m.ActualCount);
        Assert.Equal(3.0, m.Rsfe, 12); // N3f: RSFE
        Assert.Equal(1.814815, m.Mad, 6); // N3f: MAD
        Assert.Equal(4.728395, m.Mse, 6); // N3f: MSE
        Assert.Equal(18.249528, m.Mape, 6); // N3f: MAPE %
        Assert.Equal(10.0, tracked.Forecaster.Forecast(), 12); // N3f: F_13 = 10
    }

    [Fact]
    public void Update_WeightedMovingAverageOnNistAveragingSeries_MatchesWM1()
    {
        // check-values WM1 (DERIVED; weights 3, 2, 1 most recent first, divided by 6 — common practice) on the NIST
        // e-Handbook §6.4.2 data: F_4..F_12, and over t=4..12 RSFE 2.5, MAD 1.981481, MSE 5.756173.
        double[] published = [8.666667, 10.333333, 10, 11, 11, 9.166667, 10.666667, 10, 10.666667];
        (var tracked, var scores) = Run(new WeightedMovingAverageOptions([3.0, 2.0, 1.0]), ReferenceData.NistAveraging);
        for (int t = 3; t < 12; t++)
        {
            Assert.Equal(published[t - 3], scores[t].Forecast, 6); // WM1: F_4..F_12
        }

        ErrorTracker m = tracked.Tracker;
        Assert.Equal(2.5, m.Rsfe, 12); // WM1: RSFE
        Assert.Equal(1.981481, m.Mad, 6); // WM1: MAD
        Assert.Equal(5.756173, m.Mse, 6); // WM1: MSE
        Assert.Equal(10.166667, tracked.Forecaster.Forecast(), 6); // WM1: F_13
    }

    [Fact]
    public void Update_NaiveOnNistTrendSeries_MatchesNV1()
    {
        // check-values NV1 (DERIVED) on the NIST e-Handbook §6.4.3.3 series (check-values D1, READ): errors at t=2..10,
        // RSFE 16.0, MAD 2.266667, MSE 8.886667, MAPE 16.828249 %, next forecast 22.4.
        double[] errors = [-0.8, 2.2, 1.0, 2.2, 0.6, 5.1, -1.4, 6.3, 0.8];
        (var tracked, var scores) = Run(new NaiveOptions(), ReferenceData.NistTrend);
        Assert.False(scores[0].IsScored);
        Assert.True(double.IsNaN(scores[0].Error));
        for (int t = 1; t < 10; t++)
        {
            Assert.Equal(errors[t - 1], scores[t].Error, 12); // NV1: e_t
        }

        ErrorTracker m = tracked.Tracker;
        Assert.Equal(16.0, m.Rsfe, 12); // NV1: RSFE
        Assert.Equal(2.266667, m.Mad, 6); // NV1: MAD
        Assert.Equal(8.886667, m.Mse, 6); // NV1: MSE
        Assert.Equal(16.828249, m.Mape, 6); // NV1: MAPE %
        Assert.Equal(0.8, tracked.LastError, 12); // NV1: e_10
        Assert.True(tracked.TryForecast(1, NormalMultiplier.Coverage95, out double next, out _));
        Assert.Equal(22.4, next); // NV1: next forecast
        Assert.Equal(1.0, m.Mase, 12); // naive forecasts scored against the naive scale: MASE 1 by definition
    }

    [Fact]
    public void TryForecast_NaiveForecasterAfterNv1_IntervalWidthGrowsWithRootHorizon()
    {
        // Random-walk model of the naive forecast: σ_h = σ·√h (practice.md, FPP from memory; Naive ratio h).
        // σ = 1.25·MAD (check-values M1, Armstrong) with MAD 2.266667 (check-values NV1, DERIVED).
        (var tracked, _) = Run(new NaiveOptions(), ReferenceData.NistTrend);
        double sigma = 1.25 * (20.4 / 9); // NV1: MAD = Σ|e| / 9 = 20.4 / 9 = 2.266667
        foreach (double z in new[] { NormalMultiplier.Coverage80, NormalMultiplier.Coverage95, NormalMultiplier.Coverage99 })
        {
            for (int h = 1; h <= 6; h++)
            {
                Assert.True(tracked.TryForecast(h, z, out double forecast, out PredictionInterval interval));
                Assert.Equal(22.4, forecast);
                double half = z * sigma * Math.Sqrt(h);
                Assert.Equal(22.4 - half, interval.Lower, 9);
                Assert.Equal(22.4 + half, interval.Upper, 9);
            }
        }

        Assert.True(tracked.TryForecast(4, NormalMultiplier.Coverage95, out _, out PredictionInterval four));
        Assert.True(tracked.TryForecast(1, NormalMultiplier.Coverage95, out _, out PredictionInterval one));
        Assert.Equal(2.0, four.Width / one.Width, 12); // √4
    }

    [Fact]
    public void TryForecast_ColdOrUnscored_ReportsNaNBounds()
    {
        var tracked = new TrackedForecaster(new MovingAverageOptions(2));
        Assert.False(tracked.TryForecast(1, 1.96, out double cold, out PredictionInterval none));
        Assert.True(double.IsNaN(cold) && double.IsNaN(none.Lower) && double.IsNaN(none.Upper));
        tracked.Update(1);
        tracked.Update(2);
        Assert.True(tracked.TryForecast(1, 1.96, out double warm, out PredictionInterval unknown)); // warm, but no error yet
        Assert.Equal(1.5, warm);
        Assert.True(double.IsNaN(unknown.Width));
        Assert.Throws<ArgumentOutOfRangeException>(() => tracked.TryForecast(0, 1.96, out _, out _));
        Assert.Throws<ArgumentOutOfRangeException>(() => tracked.TryForecast(1, -1, out _, out _));
    }

    [Fact]
    public void Update_ForecastThenActual_ScoresForecastMadeBeforeTheActual()
    {
        // Pitfall 4 (practice.md): score the forecast made for the period, not a later revision.
        var tracked = new TrackedForecaster(new MovingAverageOptions(2));
        tracked.Update(10);
        tracked.Update(20);
        double madeForPeriod3 = tracked.Forecaster.Forecast();
        PeriodScore score = tracked.Update(100);
        Assert.Equal(15.0, madeForPeriod3);
        Assert.Equal(new PeriodScore(100, 15, 85), score);
        Assert.Equal(85.0, tracked.LastError);
        Assert.Equal(60.0, tracked.Forecaster.Forecast()); // the revision after the actual is not what was scored
        Assert.Equal(3, tracked.Count);
        Assert.Equal(1, tracked.Tracker.Count);
        Assert.Equal(3, tracked.Tracker.ActualCount);
        // MASE scale from actuals only, this period's included: (|20 − 10| + |100 − 20|) / 2 (plain recomputation).
        Assert.Equal(45.0, tracked.Tracker.NaiveScale, 12);
    }

    [Fact]
    public void Update_InvalidActual_ThrowsAndLeavesBothStatesUnchanged()
    {
        var tracked = new TrackedForecaster(new NonNegativeLastValueOptions());
        tracked.Update(4);
        tracked.Update(6);
        double[] before = tracked.ExportState();
        foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity, -1.0 })
        {
            var ex = Assert.Throws<ArgumentOutOfRangeException>(() => tracked.Update(bad));
            Assert.False(string.IsNullOrWhiteSpace(ex.Message));
            Assert.Equal(before, tracked.ExportState());
        }

        // Cold forecaster: the out-of-domain actual must not reach the tracker as an unscored actual either.
        var cold = new TrackedForecaster(new NonNegativeLastValueOptions());
        Assert.Throws<ArgumentOutOfRangeException>(() => cold.Update(-2));
        Assert.Equal(0, cold.Tracker.ActualCount);
        Assert.Equal(0, cold.Count);
    }

    [Fact]
    public void UpdateUnscored_WarmForecaster_MovesForecasterWithoutScoring()
    {
        // An imputed actual moves the forecaster on but records no error (gap policies that carry values forward).
        var tracked = new TrackedForecaster(new NaiveOptions());
        tracked.Update(10);
        tracked.Update(12);
        long scored = tracked.Tracker.Count;
        PeriodScore score = tracked.UpdateUnscored(12);
        Assert.False(score.IsScored);
        Assert.Equal(scored, tracked.Tracker.Count);
        Assert.Equal(3, tracked.Tracker.ActualCount);
        Assert.Equal(12, tracked.Forecaster.Forecast());

        var copy = new TrackedForecaster(new NaiveOptions());
        copy.ImportState(tracked.ExportState());
        Assert.Equal(tracked.ExportState(), copy.ExportState());
    }

    [Fact]
    public void ResetErrors_AfterUpdates_ClearsStatisticsKeepsForecastAndRoundTrips()
    {
        var tracked = new TrackedForecaster(new MovingAverageOptions(3));
        foreach (double y in new double[] { 9, 8, 9, 12, 9, 12 })
        {
            tracked.Update(y);
        }

        double forecast = tracked.Forecaster.Forecast();
        tracked.ResetErrors();
        Assert.Equal(0, tracked.Tracker.Count);
        Assert.Equal(0, tracked.Tracker.Rsfe);
        Assert.Equal(forecast, tracked.Forecaster.Forecast());

        var copy = new TrackedForecaster(new MovingAverageOptions(3));
        copy.ImportState(tracked.ExportState());
        tracked.Update(11);
        copy.Update(11);
        Assert.Equal(tracked.ExportState(), copy.ExportState());
        Assert.Equal(1, copy.Tracker.Count);
    }

    [Fact]
    public void UpdateUnscored_InvalidActual_ThrowsAndLeavesBothStatesUnchanged()
    {
        var tracked = new TrackedForecaster(new CrostonOptions());
        tracked.Update(3);
        double[] before = tracked.ExportState();
        Assert.Throws<ArgumentOutOfRangeException>(() => tracked.UpdateUnscored(-1));
        Assert.Throws<ArgumentOutOfRangeException>(() => tracked.UpdateUnscored(double.NaN));
        Assert.Equal(before, tracked.ExportState());
    }

    [Fact]
    public void Update_OppositeExtremesOfTheDomain_ScoresWithoutOverflowAndRefusesBeyond()
    {
        // Inside ±NumericDomain.MaxMagnitude the largest error (2e15) and its square stay far inside the double range.
        var tracked = new TrackedForecaster(new NaiveOptions());
        tracked.Update(-NumericDomain.MaxMagnitude);
        tracked.Update(NumericDomain.MaxMagnitude);
        Assert.Equal(2 * NumericDomain.MaxMagnitude, tracked.Tracker.Rsfe);
        Assert.Equal(4e30, tracked.Tracker.Mse);
        double[] before = tracked.ExportState();
        Assert.Throws<ArgumentOutOfRangeException>(() => tracked.Update(1.5e308));
        Assert.Equal(before, tracked.ExportState());
        tracked.Update(3);
        Assert.Equal(3.0, tracked.Forecaster.Forecast());
    }

    [Fact]
    public void ExportState_ImportIntoNewTrackedForecaster_ContinuesBitIdentically()
    {
        var options = new WeightedMovingAverageOptions([0.5, 0.3, 0.2]);
        var trackerOptions = new ErrorTrackerOptions(seasonLength: 4);
        double[] y = ReferenceData.NistSmoothing;
        foreach (int split in new[] { 0, 1, 3, 4, 7 })
        {
            var original = new TrackedForecaster(options, trackerOptions);
            var copy = new TrackedForecaster(options, trackerOptions);
            for (int i = 0; i < split; i++)
            {
                original.Update(y[i]);
            }

            copy.ImportState(original.ExportState());
            for (int i = split; i < y.Length; i++)
            {
                Assert.Equal(original.Update(y[i]), copy.Update(y[i]));
            }

            Assert.Equal(original.ExportState(), copy.ExportState());
        }
    }

    [Fact]
    public void ImportState_MalformedOrMismatchedState_ThrowsAndLeavesStateUnchanged()
    {
        var tracked = new TrackedForecaster(new MovingAverageOptions(3));
        foreach (double y in ReferenceData.NistAveraging.AsSpan(0, 5))
        {
            tracked.Update(y);
        }

        double[] before = tracked.ExportState();
        var other = new TrackedForecaster(new MovingAverageOptions(3));
        foreach (double y in ReferenceData.NistAveraging)
        {
            other.Update(y);
        }

        double[] good = other.ExportState();
        int split = other.Forecaster.StateLength;
        Assert.Throws<ArgumentException>(() => tracked.ImportState(good.AsSpan(1)));

        double[] countMismatch = (double[])good.Clone();
        countMismatch[0] = 11; // the forecaster part claims one period fewer than the tracker part
        Assert.Throws<ArgumentException>(() => tracked.ImportState(countMismatch));

        double[] badForecaster = (double[])good.Clone();
        badForecaster[split - 2] += 1; // the moving-average sum no longer matches its window
        Assert.Throws<ArgumentException>(() => tracked.ImportState(badForecaster));

        double[] badTracker = (double[])good.Clone();
        badTracker[split + 5] = -1; // a negative Σ|e|
        Assert.Throws<ArgumentException>(() => tracked.ImportState(badTracker));

        Assert.Equal(before, tracked.ExportState());
        tracked.ImportState(good);
        Assert.Equal(good, tracked.ExportState());
    }

    [Fact]
    public void Reset_AfterUpdates_BehavesLikeNew()
    {
        (var tracked, _) = Run(new MovingAverageOptions(3), ReferenceData.NistAveraging);
        tracked.Reset();
        var fresh = new TrackedForecaster(new MovingAverageOptions(3));
        Assert.Equal(fresh.ExportState(), tracked.ExportState());
        Assert.Equal(0, tracked.Count);
        Assert.True(double.IsNaN(tracked.LastError));
        foreach (double y in ReferenceData.NistAveraging)
        {
            Assert.Equal(fresh.Update(y), tracked.Update(y));
        }
    }

    [Fact]
    public void Update_WarmTrackedForecaster_DoesNotAllocate()
    {
        (var tracked, _) = Run(new MovingAverageOptions(4), ReferenceData.NistSmoothing, new ErrorTrackerOptions(seasonLength: 3));
        double[] y = ReferenceData.NistSmoothing;
        tracked.Update(y[0]); // JIT the paths first
        tracked.TryForecast(3, NormalMultiplier.Coverage90, out _, out _);
        Allocations.AssertNone(() =>
        {
            double sink = 0;
            for (int i = 0; i < 10_000; i++)
            {
                sink += tracked.Update(y[i % y.Length]).Error;
                tracked.TryForecast(3, NormalMultiplier.Coverage90, out double f, out PredictionInterval interval);
                sink += f + interval.Width + tracked.Tracker.TrackingSignal;
            }

            Assert.True(double.IsFinite(sink));
            return sink;
        });
    }

    [Property(MaxTest = 100)]
    public Property Update_RandomSeries_MatchesSeparateBatchForecastsAndStatistics() =>
        Prop.ForAll(SeriesGen.Arbitrary(SeriesDomain.Real, 80), Gen.Choose(1, 6).ToArbitrary(), (series, n) =>
        {
            // Batch reference: the plain mean of the n previous actuals as the forecast, then every statistic recomputed
            // from scratch (ErrorStatisticsBatch); shares no code with the operator or the tracker.
            var tracked = new TrackedForecaster(new MovingAverageOptions(n), new ErrorTrackerOptions(seasonLength: 2));
            var periods = new List<(double Actual, double Forecast)>();
            for (int k = 0; k < series.Length; k++)
            {
                double forecast = double.NaN;
                if (k >= n)
                {
                    double sum = 0;
                    for (int i = k - n; i < k; i++)
                    {
                        sum += series[i];
                    }

                    forecast = sum / n;
                }

                periods.Add((series[k], forecast));
                PeriodScore score = tracked.Update(series[k]);
                if (score.IsScored != k >= n || !Approx.Close(forecast, score.Forecast, 1e-9, 1000))
                {
                    return false.Label($"period {k + 1}: batch forecast {forecast:R}, step {score.Forecast:R}");
                }
            }

            var batch = new ErrorStatisticsBatch(periods, 2, 0.1, 0.1);
            ErrorTracker m = tracked.Tracker;
            bool ok = batch.Count == m.Count && batch.ActualCount == m.ActualCount
                && Approx.Close(batch.Rsfe, m.Rsfe, 1e-9, Math.Max(1, batch.SumAbsErrors))
                && Approx.Close(batch.Mad, m.Mad, 1e-9, 1000) && Approx.Close(batch.Mse, m.Mse, 1e-9, 1)
                && Approx.Close(batch.TrackingSignal, m.TrackingSignal, 1e-9, Math.Max(1, batch.Count))
                && Approx.Close(batch.TriggSignal, m.TriggSignal, 1e-9) && Approx.Close(batch.Mase, m.Mase, 1e-9);
            return ok.Label($"n={n}: RSFE {batch.Rsfe:R}/{m.Rsfe:R}, MAD {batch.Mad:R}/{m.Mad:R}, TS {batch.TrackingSignal:R}/{m.TrackingSignal:R}");
        });
}

/// <summary>
/// A test-only method with a restricted domain (non-negative actuals; forecast = last actual), to exercise the domain
/// check of the full step. Like every forecaster it rejects bad input before changing anything.
/// </summary>
internal sealed record NonNegativeLastValueOptions : ForecasterOptions
{
    public override string MethodName => "NonNegativeLastValue";

    public override Forecaster CreateForecaster() => new NonNegativeLastValueForecaster(this);
}

internal sealed class NonNegativeLastValueForecaster(NonNegativeLastValueOptions options) : Forecaster
{
    private double _last;
    private bool _seen;

    public override ForecasterOptions Options => options;

    public override bool IsWarm => _seen;

    private protected override void UpdateCore(double actual)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(actual);
        _last = actual;
        _seen = true;
    }

    private protected override double ForecastCore(int horizon) => _last;

    private protected override double HorizonVarianceRatioCore(int horizon) => horizon;

    private protected override void ResetCore()
    {
        _last = 0;
        _seen = false;
    }

    private protected override int CoreStateLength => 1;

    private protected override void ExportCore(Span<double> destination) => destination[0] = _last;

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count) => state[0] >= 0 ? null : "negative";

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _last = state[0];
        _seen = count > 0;
    }
}
