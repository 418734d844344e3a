namespace StreamForecast.Forecasting;

/// <summary>The start level an <see cref="ExponentialSmoothing"/> forecaster used (<see cref="ExponentialSmoothing.StartValues"/>).</summary>
/// <param name="Kind">The start rule that gave it.</param>
/// <param name="Period">
/// The number of actuals the start level belongs after: 0 for a given level ℓ₀ (<see cref="LevelStartKind.Given"/>),
/// k for the mean of the first k actuals (<see cref="LevelStartKind.MeanOfFirst"/>), 1 for the first actual
/// (<see cref="LevelStartKind.FirstActual"/>, NIST's S₂ = y₁).
/// </param>
/// <param name="Level">The start level; the smoothing equation takes every later actual from it.</param>
/// <remarks>Immutable and thread-safe.</remarks>
public sealed record LevelStartValues(LevelStartKind Kind, int Period, double Level);
