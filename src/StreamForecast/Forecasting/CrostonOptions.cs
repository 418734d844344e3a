using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for Croston's method for intermittent demand and its Syntetos–Boylan correction (SBA): the demand size z
/// and the inter-demand interval p are smoothed separately, only in periods with demand, and the forecast per period
/// is z/p (times 1 − α/2 for SBA).
/// </summary>
/// <remarks>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// <para><b>Which α the SBA factor uses.</b> Syntetos &amp; Boylan (2005) use one smoothing constant for both
/// estimates; when the two weights differ this library takes the <i>interval</i> weight, because the bias the factor
/// removes comes from the interval estimate alone: for geometric intervals with mean p, the smoothed interval p̂ has
/// variance α_p/(2 − α_p)·p(p − 1), so E[1/p̂] ≈ 1/p + α_p/(2 − α_p)·(p − 1)/p², and multiplying by (1 − α_p/2) turns
/// the expectation of z/p̂ into μ/p·(1 − α_p/(2p)) ≈ μ/p (derivation DERIVED from the delta method; that the published
/// α is the interval smoothing constant is from memory of Syntetos &amp; Boylan 2005).</para>
/// </remarks>
public sealed record CrostonOptions : ForecasterOptions
{
    /// <summary>The default smoothing weight, 0.1 (common practice: Croston-family weights of 0.05–0.2).</summary>
    public const double DefaultWeight = 0.1;

    /// <summary>Creates Croston options.</summary>
    /// <param name="sizeWeight">
    /// The smoothing weight α for the demand size, greater than 0 and at most 1; by default <see cref="DefaultWeight"/>.
    /// </param>
    /// <param name="intervalWeight">
    /// The smoothing weight for the inter-demand interval, greater than 0 and at most 1; by default (null) the same
    /// as <paramref name="sizeWeight"/>, as in Croston (1972).
    /// </param>
    /// <param name="variant">Classic Croston (the default) or the Syntetos–Boylan approximation.</param>
    /// <exception cref="ArgumentOutOfRangeException">A weight is not in (0, 1], or the variant is not defined.</exception>
    public CrostonOptions(double sizeWeight = DefaultWeight, double? intervalWeight = null, CrostonVariant variant = CrostonVariant.Classic)
    {
        if (!(sizeWeight > 0 && sizeWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(sizeWeight), sizeWeight, "the demand-size smoothing weight α must be greater than 0 and at most 1");
        }

        double interval = intervalWeight ?? sizeWeight;
        if (!(interval > 0 && interval <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(intervalWeight), interval, "the interval smoothing weight must be greater than 0 and at most 1");
        }

        if (variant is not (CrostonVariant.Classic or CrostonVariant.SyntetosBoylan))
        {
            ThrowHelper.ThrowOutOfRange(nameof(variant), variant, "the variant must be Classic or SyntetosBoylan");
        }

        SizeWeight = sizeWeight;
        IntervalWeight = interval;
        Variant = variant;
    }

    /// <summary>The smoothing weight α for the demand size z.</summary>
    public double SizeWeight { get; }

    /// <summary>The smoothing weight for the inter-demand interval p (equal to <see cref="SizeWeight"/> unless given).</summary>
    public double IntervalWeight { get; }

    /// <summary>Classic Croston or the Syntetos–Boylan approximation.</summary>
    public CrostonVariant Variant { get; }

    /// <summary>
    /// The factor applied to z/p: 1 for <see cref="CrostonVariant.Classic"/>, 1 − <see cref="IntervalWeight"/>/2 for
    /// <see cref="CrostonVariant.SyntetosBoylan"/> (see the remarks on <see cref="CrostonOptions"/> for why the interval weight).
    /// </summary>
    public double BiasFactor => Variant == CrostonVariant.SyntetosBoylan ? 1 - (IntervalWeight / 2) : 1.0;

    /// <inheritdoc/>
    public override string MethodName
    {
        get
        {
            string name = Variant == CrostonVariant.SyntetosBoylan ? "SBA" : "Croston";
            return SizeWeight == IntervalWeight
                ? string.Create(CultureInfo.InvariantCulture, $"{name}({SizeWeight})")
                : string.Create(CultureInfo.InvariantCulture, $"{name}({SizeWeight}, {IntervalWeight})");
        }
    }

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new Croston(this);
}
