namespace StreamForecast.Tracking;

/// <summary>
/// Standard normal multipliers z for two-sided prediction intervals of common coverage: the interval
/// forecast ± z·σ covers the coverage fraction of normally distributed errors. Each value is the standard normal
/// quantile at (1 + coverage) / 2, to double precision.
/// </summary>
/// <remarks>Constants; thread-safe.</remarks>
public static class NormalMultiplier
{
    /// <summary>80 % coverage: z = 1.2816 (the 0.90 quantile).</summary>
    public const double Coverage80 = 1.2815515655446004;

    /// <summary>90 % coverage: z = 1.6449 (the 0.95 quantile).</summary>
    public const double Coverage90 = 1.6448536269514722;

    /// <summary>95 % coverage: z = 1.9600 (the 0.975 quantile).</summary>
    public const double Coverage95 = 1.959963984540054;

    /// <summary>99 % coverage: z = 2.5758 (the 0.995 quantile).</summary>
    public const double Coverage99 = 2.5758293035489004;
}
