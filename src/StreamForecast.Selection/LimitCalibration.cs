using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;

namespace StreamForecast.Selection;

/// <summary>
/// The outcome of calibrating a drift rule's limit for one method on one series: the rule with its calibrated limit, the
/// in-control run length it achieved on fresh simulations, and how quickly it noticed a step and a ramp.
/// </summary>
/// <remarks>Immutable and safe to share across threads.</remarks>
public sealed class LimitCalibration
{
    internal LimitCalibration(
        ForecasterOptions method,
        DriftRuleOptions rule,
        CalibrationOptions options,
        bool targetReached,
        double calibrationMean,
        RunLengthSummary inControl,
        DetectionSummary step,
        DetectionSummary ramp,
        int residualCount,
        double residualMean,
        double residualStandardDeviation,
        int blockLength)
    {
        Method = method;
        Rule = rule;
        Options = options;
        TargetReached = targetReached;
        CalibrationMeanRunLength = calibrationMean;
        InControl = inControl;
        Step = step;
        Ramp = ramp;
        ResidualCount = residualCount;
        ResidualMean = residualMean;
        ResidualStandardDeviation = residualStandardDeviation;
        BlockLength = blockLength;
    }

    /// <summary>The method whose residuals were bootstrapped.</summary>
    public ForecasterOptions Method { get; }

    /// <summary>The rule with its calibrated limit (every other setting as in the template); ready for <see cref="Streaming.SeriesOptions"/>.</summary>
    public DriftRuleOptions Rule { get; }

    /// <summary>The calibrated limit: the rule's raise level (tracking-signal or Trigg limit, or the CUSUM decision interval h).</summary>
    public double Limit => Rule.RaiseLevel;

    /// <summary>The calibration settings.</summary>
    public CalibrationOptions Options { get; }

    /// <summary>
    /// Whether the target could be bracketed: some limit gave a mean run length below the target and the returned one reaches
    /// it. False when even the smallest limit tried alarms less often than the target (a target shorter than the rule's
    /// warm-up, say), or when even the largest limit alarms more often (the Trigg limit cannot exceed 1).
    /// </summary>
    public bool TargetReached { get; }

    /// <summary>The mean run length of the calibration simulations at the returned limit (at least the target when <see cref="TargetReached"/>).</summary>
    public double CalibrationMeanRunLength { get; }

    /// <summary>The run lengths at the returned limit on fresh simulations (other random numbers than the calibration's).</summary>
    public RunLengthSummary InControl { get; }

    /// <summary>The delay to detect an upward step in demand of <see cref="CalibrationOptions.StepSize"/> residual standard deviations.</summary>
    public DetectionSummary Step { get; }

    /// <summary>The delay to detect an upward ramp in demand of <see cref="CalibrationOptions.RampSlope"/> residual standard deviations per period.</summary>
    public DetectionSummary Ramp { get; }

    /// <summary>The number of one-step residuals of the history that were bootstrapped.</summary>
    public int ResidualCount { get; }

    /// <summary>The mean of the residuals, removed before bootstrapping (in-control means unbiased).</summary>
    public double ResidualMean { get; }

    /// <summary>The standard deviation σ of the residuals; the step and ramp are in units of it.</summary>
    public double ResidualStandardDeviation { get; }

    /// <summary>The bootstrap block length used.</summary>
    public int BlockLength { get; }

    /// <summary>The expected false alarms per period for one series at the calibrated limit, 1 / <see cref="RunLengthSummary.Mean"/> of <see cref="InControl"/>.</summary>
    public double FalseAlarmsPerPeriod => 1.0 / InControl.Mean;

    /// <summary>A one-line summary.</summary>
    /// <returns>The method, the rule, and the achieved run length.</returns>
    public override string ToString() => string.Create(CultureInfo.InvariantCulture,
        $"{Method.MethodName} / {Rule.RuleName}: in-control run length {InControl.Mean:F1} ± {InControl.StandardError:F1} (target {Options.TargetRunLength}); step delay {Step.MeanDelay:F1}; ramp delay {Ramp.MeanDelay:F1}");
}
