using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for the TSB method for intermittent demand (Teunter, Syntetos &amp; Babai 2011, European Journal of
/// Operational Research 214:606–615): the probability that a period has demand is smoothed every period, the demand
/// size only in periods with demand, and the forecast per period is probability × size, so it decays towards zero
/// while an item does not sell.
/// </summary>
/// <remarks>
/// Immutable and thread-safe. Validated at construction. Sources differ in which Greek letter names which weight;
/// this library names them by role: <see cref="ProbabilityWeight"/> (α here) and <see cref="SizeWeight"/> (β here).
/// </remarks>
public sealed record TsbOptions : ForecasterOptions
{
    /// <summary>The default smoothing weight for both estimates, 0.1 (common practice: Croston-family weights of 0.05–0.2).</summary>
    public const double DefaultWeight = 0.1;

    /// <summary>Creates TSB options.</summary>
    /// <param name="probabilityWeight">
    /// The smoothing weight α for the demand probability, greater than 0 and at most 1; by default <see cref="DefaultWeight"/>.
    /// </param>
    /// <param name="sizeWeight">
    /// The smoothing weight β for the demand size, greater than 0 and at most 1; by default <see cref="DefaultWeight"/>.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A weight is not in (0, 1].</exception>
    public TsbOptions(double probabilityWeight = DefaultWeight, double sizeWeight = DefaultWeight)
    {
        if (!(probabilityWeight > 0 && probabilityWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(probabilityWeight), probabilityWeight, "the demand-probability smoothing weight α must be greater than 0 and at most 1");
        }

        if (!(sizeWeight > 0 && sizeWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(sizeWeight), sizeWeight, "the demand-size smoothing weight β must be greater than 0 and at most 1");
        }

        ProbabilityWeight = probabilityWeight;
        SizeWeight = sizeWeight;
    }

    /// <summary>The smoothing weight α for the demand probability, applied every period.</summary>
    public double ProbabilityWeight { get; }

    /// <summary>The smoothing weight β for the demand size, applied in periods with demand.</summary>
    public double SizeWeight { get; }

    /// <inheritdoc/>
    public override string MethodName => string.Create(CultureInfo.InvariantCulture, $"TSB({ProbabilityWeight}, {SizeWeight})");

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new Tsb(this);
}
