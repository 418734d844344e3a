namespace StreamForecast.Forecasting;

/// <content>Shorthand factories for the exponential smoothing family.</content>
public abstract partial record ForecasterOptions
{
    /// <summary>Single exponential smoothing; the same as <c>new ExponentialSmoothingOptions(alpha, start)</c>.</summary>
    /// <param name="alpha">The smoothing weight α, in (0, 1].</param>
    /// <param name="start">The start rule; the default is <see cref="LevelStart.FirstActual"/> (NIST).</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="alpha"/> is not in (0, 1].</exception>
    public static ExponentialSmoothingOptions ExponentialSmoothing(double alpha, LevelStart start = default) => new(alpha, start);
}
