using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <summary>
/// The immutable, validated settings of an <see cref="ErrorTracker"/>: the smoothing weights, how σ is estimated
/// and the season length of the MASE scale. Create trackers with <see cref="CreateTracker"/>.
/// </summary>
/// <remarks>Immutable and safe to share across threads and series. Validated at construction.</remarks>
public sealed record ErrorTrackerOptions
{
    /// <summary>The largest MASE season length accepted.</summary>
    public const int MaxSeasonLength = 100_000;

    /// <summary>The smallest accepted MAD-to-σ factor: σ ≥ MAD for any error distribution, because the root mean square is never below the mean absolute value.</summary>
    public const double MinMadToSigmaFactor = 1.0;

    /// <summary>The largest accepted MAD-to-σ factor.</summary>
    public const double MaxMadToSigmaFactor = 10.0;

    /// <summary>Creates error-tracker options.</summary>
    /// <param name="smoothedMadWeight">
    /// The weight w of the newest |error| in the smoothed MAD, 0 &lt; w ≤ 1. Default 0.1 (common practice).
    /// </param>
    /// <param name="triggBeta">
    /// Trigg's smoothing constant β for the smoothed error and smoothed |error| of the smoothed tracking signal,
    /// 0 &lt; β ≤ 1. Default 0.1 (Trigg 1964, Operational Research Quarterly 15(3):271–274).
    /// </param>
    /// <param name="sigmaRule">How σ is estimated; default <see cref="SigmaRule.ScaledMad"/>.</param>
    /// <param name="madToSigmaFactor">
    /// The factor for the scaled-MAD rules, 1 to 10. Default 1.25, the usual rounding of √(π/2) ≈ 1.2533, which holds for
    /// normally distributed errors (Armstrong, <i>Forecasting Dictionary</i>, "MAD"). Ignored by <see cref="SigmaRule.Rmse"/>.
    /// </param>
    /// <param name="seasonLength">
    /// The season length m of the MASE scale, 1 to 100,000: the scale is the in-sample mean absolute error of the
    /// forecast "same as m periods ago". Default 1, the plain naive forecast.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A parameter is outside its range (NaN included).</exception>
    public ErrorTrackerOptions(
        double smoothedMadWeight = 0.1,
        double triggBeta = 0.1,
        SigmaRule sigmaRule = SigmaRule.ScaledMad,
        double madToSigmaFactor = 1.25,
        int seasonLength = 1)
    {
        if (!(smoothedMadWeight > 0 && smoothedMadWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(smoothedMadWeight), smoothedMadWeight, "the smoothed-MAD weight must be greater than 0 and at most 1");
        }

        if (!(triggBeta > 0 && triggBeta <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(triggBeta), triggBeta, "Trigg's smoothing constant β must be greater than 0 and at most 1");
        }

        if (sigmaRule is not (SigmaRule.ScaledMad or SigmaRule.ScaledSmoothedMad or SigmaRule.Rmse))
        {
            ThrowHelper.ThrowOutOfRange(nameof(sigmaRule), sigmaRule, "the σ rule must be ScaledMad, ScaledSmoothedMad or Rmse");
        }

        if (!(madToSigmaFactor >= MinMadToSigmaFactor && madToSigmaFactor <= MaxMadToSigmaFactor))
        {
            ThrowHelper.ThrowOutOfRange(nameof(madToSigmaFactor), madToSigmaFactor, "the MAD-to-σ factor must be between 1 and 10 (1.25 for normal errors)");
        }

        if (seasonLength is < 1 or > MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the MASE season length must be between 1 and 100,000 periods");
        }

        SmoothedMadWeight = smoothedMadWeight;
        TriggBeta = triggBeta;
        SigmaRule = sigmaRule;
        MadToSigmaFactor = madToSigmaFactor;
        SeasonLength = seasonLength;
    }

    /// <summary>The options with every default: w = 0.1, β = 0.1, σ = 1.25·MAD, m = 1.</summary>
    public static ErrorTrackerOptions Default { get; } = new();

    /// <summary>The weight w of the newest |error| in <see cref="ErrorTracker.SmoothedMad"/>; default 0.1.</summary>
    public double SmoothedMadWeight { get; }

    /// <summary>Trigg's smoothing constant β for <see cref="ErrorTracker.TriggSignal"/>; default 0.1.</summary>
    public double TriggBeta { get; }

    /// <summary>How <see cref="ErrorTracker.Sigma"/> is estimated; default <see cref="SigmaRule.ScaledMad"/>.</summary>
    public SigmaRule SigmaRule { get; }

    /// <summary>The factor σ / MAD used by the scaled-MAD rules; default 1.25.</summary>
    public double MadToSigmaFactor { get; }

    /// <summary>The season length m of the MASE scale; default 1.</summary>
    public int SeasonLength { get; }

    /// <summary>Creates a new, empty tracker for one series.</summary>
    /// <returns>A tracker that has recorded nothing.</returns>
    /// <remarks>Allocates the tracker once, and a buffer of <see cref="SeasonLength"/> numbers when it is above 1; recording allocates nothing afterwards.</remarks>
    public ErrorTracker CreateTracker() => new(this);
}
