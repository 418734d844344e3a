using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <summary>
/// How one series' intervals are formed, resolved once per <see cref="Streaming.SeriesOptions"/>: the kind, the nominal
/// coverage, the normal multiplier (of the normal kind, or of an empirical kind's warm-up), the published further horizon
/// and whether forecasts are clipped at zero.
/// </summary>
/// <remarks>Immutable; thread-safe.</remarks>
internal sealed class IntervalSettings
{
    public IntervalSettings(double z, EmpiricalIntervalOptions? empirical, int horizon, bool nonNegative)
    {
        Empirical = empirical;
        Multiplier = empirical?.FallbackMultiplier ?? z;
        Coverage = empirical?.Coverage ?? Label(NormalCoverage.Of(z));
        Horizon = horizon;
        NonNegative = nonNegative;
    }

    /// <summary>The empirical settings; null for normal intervals.</summary>
    public EmpiricalIntervalOptions? Empirical { get; }

    /// <summary>The normal multiplier z.</summary>
    public double Multiplier { get; }

    /// <summary>The nominal coverage every published interval carries.</summary>
    public double Coverage { get; }

    /// <summary>The further horizon H published beside the next period.</summary>
    public int Horizon { get; }

    /// <summary>Whether point forecasts and interval bounds are clipped at zero.</summary>
    public bool NonNegative { get; }

    /// <summary>
    /// A normal coverage as a label: a value within 1e-12 of a 9-decimal number is that number, so the multiplier of an
    /// 80% interval (1.2815515655446004, itself rounded to a double) reads as 0.8 rather than 0.7999999999999998.
    /// </summary>
    private static double Label(double coverage)
    {
        double rounded = Math.Round(coverage, 9);
        return Math.Abs(coverage - rounded) < 1e-12 ? rounded : coverage;
    }

    /// <summary>Whether the model needs any state or step beyond today's normal intervals.</summary>
    public bool IsPlain => Empirical is null && !NonNegative;
}
