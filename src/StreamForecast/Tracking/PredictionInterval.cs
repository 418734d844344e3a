namespace StreamForecast.Tracking;

/// <summary>A two-sided prediction interval around a point forecast.</summary>
/// <param name="Lower">The lower bound; NaN when σ is not known yet.</param>
/// <param name="Upper">The upper bound; NaN when σ is not known yet.</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct PredictionInterval(double Lower, double Upper)
{
    /// <summary>The width Upper − Lower; NaN when the bounds are.</summary>
    public double Width => Upper - Lower;

    /// <summary>Whether <paramref name="value"/> lies inside the interval, bounds included; false when the bounds are NaN.</summary>
    /// <param name="value">The value to test, for example the actual that arrived.</param>
    /// <returns><see langword="true"/> when Lower ≤ value ≤ Upper.</returns>
    public bool Contains(double value) => value >= Lower && value <= Upper;
}
