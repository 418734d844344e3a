using System.Collections.Immutable;

namespace StreamForecast.Forecasting;

/// <summary>The start values a <see cref="HoltWinters"/> forecaster used (<see cref="HoltWinters.StartValues"/>).</summary>
/// <param name="Kind">The start rule that gave them.</param>
/// <param name="Period">
/// The number of actuals the state belongs after: m for a computed start (the state at the end of the first season, before
/// the actuals m+1 … c·m ran through the equations), 0 for a given start.
/// </param>
/// <param name="Level">The start level.</param>
/// <param name="Trend">The start trend per period, before damping.</param>
/// <param name="SeasonalIndices">
/// The m start indices by season position: entry i belongs to periods i+1, i+1+m, … (so for a given start, entry 0 is the
/// index period 1 uses). Multiplicative indices below 10^-30 are shown held at that floor, as the forecaster holds them.
/// </param>
/// <remarks>Immutable and thread-safe.</remarks>
public sealed record HoltWintersStartValues(
    HoltWintersStartKind Kind,
    int Period,
    double Level,
    double Trend,
    ImmutableArray<double> SeasonalIndices)
{
    /// <summary>Equal when every field is equal (the indices element by element).</summary>
    /// <param name="other">The other start values.</param>
    /// <returns>Whether both hold the same numbers.</returns>
    public bool Equals(HoltWintersStartValues? other) =>
        other is not null
        && Kind == other.Kind
        && Period == other.Period
        && Level.Equals(other.Level)
        && Trend.Equals(other.Trend)
        && SeasonalIndices.AsSpan().SequenceEqual(other.SeasonalIndices.AsSpan());

    /// <inheritdoc/>
    public override int GetHashCode() => HashCode.Combine(Kind, Period, Level, Trend, SeasonalIndices.Length);
}
