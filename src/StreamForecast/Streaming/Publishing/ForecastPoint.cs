namespace StreamForecast.Streaming;

/// <summary>A point forecast some periods ahead with its prediction interval.</summary>
/// <param name="Horizon">Periods ahead (1 = the next period).</param>
/// <param name="Value">The point forecast; NaN when <see cref="IsValid"/> is false.</param>
/// <param name="Lower">The lower interval bound; NaN when no σ estimate exists yet.</param>
/// <param name="Upper">The upper interval bound; NaN when no σ estimate exists yet.</param>
public readonly record struct ForecastPoint(int Horizon, double Value, double Lower, double Upper)
{
    /// <summary>Whether a forecast exists (the method is warm).</summary>
    public bool IsValid => !double.IsNaN(Value);
}
