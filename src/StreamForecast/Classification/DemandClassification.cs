namespace StreamForecast.Classification;

/// <summary>The demand class of a series and the two statistics it was decided from.</summary>
/// <param name="Class">The class; <see cref="DemandClass.Undetermined"/> with fewer than two demand periods.</param>
/// <param name="AverageDemandInterval">
/// ADI: the mean number of periods between consecutive periods with demand (≥ 1), or NaN with fewer than two
/// demand periods. See <see cref="DemandClassifier"/> for the exact convention.
/// </param>
/// <param name="SquaredCoefficientOfVariation">
/// CV²: the sample variance (n − 1 divisor) of the non-zero demand sizes divided by the square of their mean, or NaN
/// with fewer than two demand periods.
/// </param>
/// <param name="DemandPeriods">The number of periods with non-zero demand.</param>
/// <param name="Periods">The number of periods seen, with or without demand.</param>
/// <remarks>An immutable value; thread-safe.</remarks>
public readonly record struct DemandClassification(
    DemandClass Class,
    double AverageDemandInterval,
    double SquaredCoefficientOfVariation,
    long DemandPeriods,
    long Periods)
{
    /// <summary>Whether there was enough data to classify (<see cref="Class"/> is not <see cref="DemandClass.Undetermined"/>).</summary>
    public bool IsDetermined => Class != DemandClass.Undetermined;
}
