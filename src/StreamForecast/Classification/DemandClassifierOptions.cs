using StreamForecast.Internal;

namespace StreamForecast.Classification;

/// <summary>
/// The cut-offs that split demand into the four classes of <see cref="DemandClass"/>. The defaults are the published
/// values of Syntetos, Boylan &amp; Croston (2005, Journal of the Operational Research Society 56:495–503):
/// ADI 1.32 and CV² 0.49.
/// </summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record DemandClassifierOptions
{
    /// <summary>The published ADI cut-off, 1.32 periods.</summary>
    public const double DefaultIntervalCutoff = 1.32;

    /// <summary>The published CV² cut-off, 0.49.</summary>
    public const double DefaultVariationCutoff = 0.49;

    /// <summary>Options with the published cut-offs.</summary>
    public static DemandClassifierOptions Default { get; } = new();

    /// <summary>Creates classifier options.</summary>
    /// <param name="intervalCutoff">
    /// The ADI cut-off, finite and greater than 1 (an ADI is never below 1, so a cut-off at or below 1 would put every
    /// series on the infrequent side); by default <see cref="DefaultIntervalCutoff"/>.
    /// </param>
    /// <param name="variationCutoff">
    /// The CV² cut-off, finite and greater than 0 (CV² is never below 0); by default <see cref="DefaultVariationCutoff"/>.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A cut-off is out of range.</exception>
    public DemandClassifierOptions(double intervalCutoff = DefaultIntervalCutoff, double variationCutoff = DefaultVariationCutoff)
    {
        if (!(intervalCutoff > 1 && double.IsFinite(intervalCutoff)))
        {
            ThrowHelper.ThrowOutOfRange(nameof(intervalCutoff), intervalCutoff, "the ADI cut-off must be a finite number greater than 1 period");
        }

        if (!(variationCutoff > 0 && double.IsFinite(variationCutoff)))
        {
            ThrowHelper.ThrowOutOfRange(nameof(variationCutoff), variationCutoff, "the CV² cut-off must be a finite number greater than 0");
        }

        IntervalCutoff = intervalCutoff;
        VariationCutoff = variationCutoff;
    }

    /// <summary>The ADI cut-off: an ADI at or above it is infrequent demand (intermittent or lumpy).</summary>
    public double IntervalCutoff { get; }

    /// <summary>The CV² cut-off: a CV² at or above it is variable demand (erratic or lumpy).</summary>
    public double VariationCutoff { get; }
}
