namespace StreamForecast.Forecasting;

/// <summary>The start values a <see cref="Holt"/> forecaster used (<see cref="Holt.StartValues"/>).</summary>
/// <param name="Kind">The start rule that gave them.</param>
/// <param name="Period">
/// The number of actuals the start state belongs after: 0 for a state before the first actual (FPP's ℓ₀ and b₀:
/// <see cref="HoltStartKind.FirstTwoActuals"/> and <see cref="HoltStartKind.Given"/>), 1 for NIST's S₁ and b₁ after the
/// first actual (<see cref="HoltStartKind.MeanOfFirstDifferences"/> and <see cref="HoltStartKind.FirstActualAndTrend"/>).
/// </param>
/// <param name="Level">The start level (ℓ₀ or S₁).</param>
/// <param name="Trend">The start trend per period (b₀ or b₁), before damping.</param>
/// <remarks>Immutable and thread-safe.</remarks>
public sealed record HoltStartValues(HoltStartKind Kind, int Period, double Level, double Trend);
