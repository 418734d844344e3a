using StreamForecast.Selection.Internal;
using StreamForecast.Tracking;

namespace StreamForecast.Selection;

/// <summary>
/// The settings of alert-limit calibration (<see cref="LimitCalibrator"/>): the target mean run length between false alarms,
/// the simulation sizes and seed, the bootstrap block length, and the changes whose detection delay is reported.
/// </summary>
/// <remarks>
/// The defaults keep a calibration to a fraction of a second on one core (about 300 simulated streams, each cut off at
/// 20 times the target). Immutable and safe to share across threads. Validated at construction.
/// </remarks>
public sealed record CalibrationOptions
{
    /// <summary>The default target mean run length: 100 periods between false alarms.</summary>
    public const double DefaultTargetRunLength = 100;

    /// <summary>The default number of simulated streams per estimate: 300.</summary>
    public const int DefaultSimulations = 300;

    /// <summary>The largest target run length accepted.</summary>
    public const double MaxTargetRunLength = 100_000;

    /// <summary>Creates calibration options.</summary>
    /// <param name="targetRunLength">
    /// The wanted mean number of periods from a fresh start to the first false alarm on in-control errors, 2 to 100,000.
    /// Default 100. A fleet of N series then raises about N / target false alarms per period.
    /// </param>
    /// <param name="simulations">The simulated streams per estimate (calibration, validation, each detection delay), 20 to 1,000,000. Default 300.</param>
    /// <param name="seed">The seed of every random draw; the same seed, history and settings give the same result. Default 1.</param>
    /// <param name="blockLength">
    /// The length of the residual blocks the bootstrap strings together, 1 (independent draws) to 100,000; null (the default)
    /// uses ⌈n^(1/3)⌉ for n residuals, the order of block length Hall, Horowitz &amp; Jing (1995, Biometrika 82:561–574, from
    /// memory) found best for estimating variances: long enough to keep the errors' short-range dependence, short enough
    /// that the sample's own chance correlations are not replayed at length.
    /// </param>
    /// <param name="stepSize">The size of the step change whose detection delay is reported, in residual standard deviations, finite and above 0. Default 1.</param>
    /// <param name="rampSlope">The slope of the ramp change whose detection delay is reported, in residual standard deviations per period, finite and above 0. Default 0.1.</param>
    /// <param name="changeStart">The in-control periods before a change starts in the detection simulations, 0 to 1,000,000. Default 30.</param>
    /// <param name="runLengthCap">
    /// Where a simulated stream stops if no alarm came, as a multiple of the target, 2 to 1,000. Default 20; a stream that reaches it
    /// counts with the cap as its run length (so a mean is a slight under-estimate) and is reported as censored.
    /// </param>
    /// <param name="tracking">The error-tracker settings the rule's signals come from (Trigg's β, the σ rule), as in the series options; default <see cref="ErrorTrackerOptions.Default"/>.</param>
    /// <exception cref="ArgumentOutOfRangeException">A number is outside its stated range.</exception>
    public CalibrationOptions(
        double targetRunLength = DefaultTargetRunLength,
        int simulations = DefaultSimulations,
        int seed = 1,
        int? blockLength = null,
        double stepSize = 1.0,
        double rampSlope = 0.1,
        int changeStart = 30,
        double runLengthCap = 20,
        ErrorTrackerOptions? tracking = null)
    {
        if (!(targetRunLength >= 2 && targetRunLength <= MaxTargetRunLength))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(targetRunLength), targetRunLength, "the target run length must be between 2 and 100,000 periods");
        }

        if (simulations is < 20 or > 1_000_000)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(simulations), simulations, "the number of simulated streams must be between 20 and 1,000,000");
        }

        if (blockLength is int block && block is < 1 or > 100_000)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(blockLength), block, "the block length must be between 1 and 100,000, or null for the square root of the number of residuals");
        }

        if (!(stepSize > 0 && double.IsFinite(stepSize)))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(stepSize), stepSize, "the step size must be a finite number of standard deviations above 0");
        }

        if (!(rampSlope > 0 && double.IsFinite(rampSlope)))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(rampSlope), rampSlope, "the ramp slope must be a finite number of standard deviations per period above 0");
        }

        if (changeStart is < 0 or > 1_000_000)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(changeStart), changeStart, "the change must start between 0 and 1,000,000 periods into a stream");
        }

        if (!(runLengthCap >= 2 && runLengthCap <= 1_000))
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(runLengthCap), runLengthCap, "the run-length cap must be between 2 and 1,000 times the target");
        }

        TargetRunLength = targetRunLength;
        Simulations = simulations;
        Seed = seed;
        BlockLength = blockLength;
        StepSize = stepSize;
        RampSlope = rampSlope;
        ChangeStart = changeStart;
        RunLengthCap = runLengthCap;
        Tracking = tracking ?? ErrorTrackerOptions.Default;
    }

    /// <summary>The options with every default.</summary>
    public static CalibrationOptions Default { get; } = new();

    /// <summary>The wanted mean number of periods to the first false alarm.</summary>
    public double TargetRunLength { get; }

    /// <summary>The simulated streams per estimate.</summary>
    public int Simulations { get; }

    /// <summary>The seed of every random draw.</summary>
    public int Seed { get; }

    /// <summary>The bootstrap block length; null for ⌈n^(1/3)⌉ with n the number of residuals.</summary>
    public int? BlockLength { get; }

    /// <summary>The step change size in residual standard deviations.</summary>
    public double StepSize { get; }

    /// <summary>The ramp slope in residual standard deviations per period.</summary>
    public double RampSlope { get; }

    /// <summary>The in-control periods before a change starts.</summary>
    public int ChangeStart { get; }

    /// <summary>The run-length cap as a multiple of the target.</summary>
    public double RunLengthCap { get; }

    /// <summary>The error-tracker settings the rule's signals come from.</summary>
    public ErrorTrackerOptions Tracking { get; }

    /// <summary>The longest simulated in-control run: ⌈<see cref="RunLengthCap"/> × <see cref="TargetRunLength"/>⌉.</summary>
    public int MaxRunLength => (int)Math.Ceiling(RunLengthCap * TargetRunLength);
}
