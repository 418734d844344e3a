namespace StreamForecast.Forecasting;

/// <content>Shorthand factories for the intermittent-demand methods.</content>
public abstract partial record ForecasterOptions
{
    /// <summary>Classic Croston options; shorthand for <see cref="CrostonOptions(double, double?, CrostonVariant)"/>.</summary>
    /// <param name="sizeWeight">The demand-size smoothing weight α in (0, 1]; by default 0.1.</param>
    /// <param name="intervalWeight">The interval smoothing weight in (0, 1]; by default (null) the same as <paramref name="sizeWeight"/>.</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A weight is not in (0, 1].</exception>
    public static CrostonOptions Croston(double sizeWeight = CrostonOptions.DefaultWeight, double? intervalWeight = null) =>
        new(sizeWeight, intervalWeight, CrostonVariant.Classic);

    /// <summary>
    /// Croston options with the Syntetos–Boylan correction (SBA, z/p × (1 − α/2) with α the interval weight);
    /// shorthand for <see cref="CrostonOptions(double, double?, CrostonVariant)"/>.
    /// </summary>
    /// <param name="sizeWeight">The demand-size smoothing weight α in (0, 1]; by default 0.1.</param>
    /// <param name="intervalWeight">The interval smoothing weight in (0, 1]; by default (null) the same as <paramref name="sizeWeight"/>.</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A weight is not in (0, 1].</exception>
    public static CrostonOptions SyntetosBoylan(double sizeWeight = CrostonOptions.DefaultWeight, double? intervalWeight = null) =>
        new(sizeWeight, intervalWeight, CrostonVariant.SyntetosBoylan);

    /// <summary>TSB options; shorthand for <see cref="TsbOptions(double, double)"/>.</summary>
    /// <param name="probabilityWeight">The demand-probability smoothing weight α in (0, 1]; by default 0.1.</param>
    /// <param name="sizeWeight">The demand-size smoothing weight β in (0, 1]; by default 0.1.</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A weight is not in (0, 1].</exception>
    public static TsbOptions Tsb(double probabilityWeight = TsbOptions.DefaultWeight, double sizeWeight = TsbOptions.DefaultWeight) =>
        new(probabilityWeight, sizeWeight);
}
