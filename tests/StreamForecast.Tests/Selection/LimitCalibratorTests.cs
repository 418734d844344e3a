using MathNet.Numerics.Distributions;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Selection;

public class LimitCalibratorTests
{
    private static readonly ExponentialSmoothingOptions s_ses = new(0.2);

    public static TheoryData<string> RuleKinds => ["tracking", "trigg", "cusum"];

    private static DriftRuleOptions Template(string kind) => kind switch
    {
        "tracking" => new TrackingSignalRuleOptions(),
        "trigg" => new TriggSignalRuleOptions(),
        _ => new CusumRuleOptions(),
    };

    /// <summary>
    /// Fresh in-control data run through the live pipeline, independently of the calibrator: new local-level demand (the
    /// process SES(0.2) is optimal for, so its errors are in control), a <see cref="TrackedForecaster"/> warmed up on 30
    /// periods and then re-baselined, and a new rule fed the engine's <see cref="DriftInput"/>. Returns the mean number of
    /// periods to the first raise, capped at <paramref name="cap"/>.
    /// </summary>
    private static double FreshMeanRunLength(DriftRuleOptions rule, int streams, int cap, int seed)
    {
        var noise = new Normal(0, 1, new Random(seed));
        double total = 0;
        for (int s = 0; s < streams; s++)
        {
            var model = new TrackedForecaster(s_ses);
            double level = 100;
            for (int t = 0; t < 30; t++)
            {
                double e = noise.Sample();
                model.Update(level + e);
                level += 0.2 * e;
            }

            model.ResetErrors();
            DriftRule state = rule.CreateRule();
            int runLength = cap;
            for (int t = 1; t <= cap; t++)
            {
                double e = noise.Sample();
                PeriodScore score = model.Update(level + e);
                level += 0.2 * e;
                ErrorTracker tracker = model.Tracker;
                var input = new DriftInput(score.Error, tracker.Sigma, tracker.TrackingSignal, tracker.TriggSignal);
                if (rule.Kind == DriftRuleKind.Cusum && !(tracker.Sigma > 0))
                {
                    continue; // the engine skips a CUSUM period without a usable σ
                }

                if (state.Evaluate(input).Kind == DriftTransitionKind.Raised)
                {
                    runLength = t;
                    break;
                }
            }

            total += runLength;
        }

        return total / streams;
    }

    [Theory]
    [MemberData(nameof(RuleKinds))]
    public void Calibrate_InControlHistory_FreshSimulatedRunLengthWithin20PercentOfTarget(string kind)
    {
        // Target 60 periods between false alarms. The history (2,000 periods of a local-level process, SES at the true α)
        // gives residuals close to the true error distribution; across six history seeds the fresh mean run length landed
        // within ±13 % of the target for all three rules, so ±20 % leaves room for the simulation noise (≈ 3 % here).
        double[] history = SelectionTestData.LocalLevel(2000, 0.2, 1.0, seed: 21);
        var options = new CalibrationOptions(targetRunLength: 60, simulations: 1000, seed: 5);
        LimitCalibration calibration = LimitCalibrator.Calibrate(history, s_ses, Template(kind), options);

        Assert.True(calibration.TargetReached);
        Assert.True(calibration.CalibrationMeanRunLength >= 60);
        double fresh = FreshMeanRunLength(calibration.Rule, 2000, options.MaxRunLength, seed: 99);
        Assert.InRange(fresh, 48, 72);
        Assert.InRange(calibration.InControl.Mean, 48, 72);
        Assert.Equal(calibration.Rule.Kind, Template(kind).Kind);
    }

    [Fact]
    public void Calibrate_SameSeed_SameResult_OtherSeed_OtherSimulations()
    {
        double[] history = SelectionTestData.LocalLevel(300, 0.2, 1.0, seed: 22);
        var rule = new TrackingSignalRuleOptions();
        LimitCalibration a = LimitCalibrator.Calibrate(history, s_ses, rule, new CalibrationOptions(targetRunLength: 40, seed: 7));
        LimitCalibration b = LimitCalibrator.Calibrate(history, s_ses, rule, new CalibrationOptions(targetRunLength: 40, seed: 7));
        LimitCalibration c = LimitCalibrator.Calibrate(history, s_ses, rule, new CalibrationOptions(targetRunLength: 40, seed: 8));
        Assert.Equal(a.Limit, b.Limit);
        Assert.Equal(a.InControl, b.InControl);
        Assert.Equal(a.Step, b.Step);
        Assert.Equal(a.Ramp, b.Ramp);
        Assert.NotEqual(a.InControl, c.InControl);
    }

    [Fact]
    public void Calibrate_KeepsTheTemplatesOtherSettingsAndRatios()
    {
        double[] history = SelectionTestData.LocalLevel(300, 0.2, 1.0, seed: 23);
        var template = new CusumRuleOptions(decisionInterval: 5, referenceValue: 0.25, clearLevel: 1, escalationLevel: 15, warmUpPeriods: 4, periodsToClear: 3);
        LimitCalibration result = LimitCalibrator.Calibrate(history, s_ses, template, new CalibrationOptions(targetRunLength: 50));
        var rule = Assert.IsType<CusumRuleOptions>(result.Rule);
        Assert.Equal(0.25, rule.ReferenceValue);
        Assert.Equal(4, rule.WarmUpPeriods);
        Assert.Equal(3, rule.PeriodsToClear);
        Assert.Equal(rule.DecisionInterval / 5, rule.ClearLevel, 1e-12);
        Assert.Equal(3 * rule.DecisionInterval, rule.EscalationLevel, 1e-9);
        Assert.Equal(result.Limit, rule.DecisionInterval);
    }

    [Fact]
    public void Calibrate_StepAndRamp_AreDetectedFasterThanFalseAlarmsCome()
    {
        // A 1σ step in demand moves SES(0.2)'s errors by σ·0.8ʲ (their sum 5σ); a ramp of 0.1σ a period leaves a steady error
        // of 0.1σ/α = 0.5σ (practice notes: steady SES bias b/α). Both must be noticed well before the in-control run length.
        double[] history = SelectionTestData.LocalLevel(500, 0.2, 1.0, seed: 24);
        LimitCalibration result = LimitCalibrator.Calibrate(history, s_ses, new CusumRuleOptions(), new CalibrationOptions(targetRunLength: 200));
        Assert.True(result.Ramp.Detected > 0.9 * (result.Ramp.Runs - result.Ramp.FalseAlarmsBeforeChange));
        Assert.True(result.Ramp.MeanDelay < result.InControl.Mean / 2, result.ToString());
        Assert.True(result.Step.Detected > 0);
        Assert.True(result.Step.MeanDelay < result.InControl.Mean, result.ToString());
        Assert.Equal(result.Ramp.Runs, result.Ramp.Detected + result.Ramp.FalseAlarmsBeforeChange + result.Ramp.Missed);
    }

    [Fact]
    public void ChangeSignature_MovingAverageStep_FadesLinearlyOverTheWindow()
    {
        // A step of s in demand gives an MA(n) error of s·(1 − j/n) in the j-th changed period (j = 0 …), then 0 (plain
        // arithmetic on the window mean).
        double[]? signature = LimitCalibrator.ChangeSignature(new MovingAverageOptions(4), 10, _ => 2.0, 8);
        Assert.NotNull(signature);
        double[] expected = [2, 1.5, 1, 0.5, 0, 0, 0, 0];
        for (int j = 0; j < expected.Length; j++)
        {
            Assert.Equal(expected[j], signature[j], 1e-12);
        }
    }

    [Fact]
    public void Calibrate_NaiveAndTwelvePeriodAverageOnStableDemand_AverageNeedsTheWiderLimit()
    {
        // practice notes (sim): at ±4 a 12-period moving average's tracking signal fires about every 10–20 periods on stable
        // demand while the naive forecast's almost never does, so the same target needs a wider limit for MA(12).
        double[] history = SelectionTestData.StableDemand(400, 100, 5, seed: 25);
        var options = new CalibrationOptions(targetRunLength: 100);
        LimitCalibration naive = LimitCalibrator.Calibrate(history, new NaiveOptions(), new TrackingSignalRuleOptions(), options);
        LimitCalibration average = LimitCalibrator.Calibrate(history, new MovingAverageOptions(12), new TrackingSignalRuleOptions(), options);
        Assert.True(average.Limit > naive.Limit + 2, $"naive {naive.Limit}, MA(12) {average.Limit}");
    }

    [Fact]
    public void Calibrate_TargetNoLimitCanReach_SaysSoAndReturnsTheBoundaryLimit()
    {
        double[] history = SelectionTestData.StableDemand(200, 100, 5, seed: 26);

        // Trigg's signal is exactly ±1 after the first error (E and M start at 0, Trigg 1964), so without a warm-up every
        // stream alarms in its first period at any limit up to 1: a target of 50 cannot be reached, and the largest
        // limit, 1, comes back.
        LimitCalibration trigg = LimitCalibrator.Calibrate(history, s_ses, new TriggSignalRuleOptions(warmUpPeriods: 0), new CalibrationOptions(targetRunLength: 50));
        Assert.False(trigg.TargetReached);
        Assert.Equal(1.0, trigg.Limit);
        Assert.Equal(1.0, trigg.InControl.Mean);

        // A rule with an 8-period warm-up cannot alarm sooner than period 8, so a target of 3 is exceeded at any limit.
        LimitCalibration tracking = LimitCalibrator.Calibrate(history, s_ses, new TrackingSignalRuleOptions(), new CalibrationOptions(targetRunLength: 3));
        Assert.False(tracking.TargetReached);
        Assert.True(tracking.InControl.Mean >= 8);
    }

    [Fact]
    public void Calibrate_BadArguments_Throw()
    {
        double[] history = SelectionTestData.LocalLevel(100, 0.2, 1.0, seed: 27);
        Assert.Throws<ArgumentException>(() => LimitCalibrator.Calibrate(history.AsSpan(0, 5), s_ses, new TrackingSignalRuleOptions()));
        Assert.Throws<ArgumentException>(() => LimitCalibrator.Calibrate(Enumerable.Repeat(3.0, 50).ToArray(), s_ses, new TrackingSignalRuleOptions()));
        Assert.Throws<ArgumentOutOfRangeException>(() => LimitCalibrator.Calibrate([1, -2, 3, 1, 2, 3, 1, 2, 3, 1, 2, 3, 4], new CrostonOptions(), new TrackingSignalRuleOptions()));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationOptions(targetRunLength: 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationOptions(simulations: 10));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationOptions(blockLength: 0));
    }
}
