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

    /// <summary>Holt's linear trend method; the same as <c>new HoltOptions(levelWeight, trendWeight, damping, start)</c>.</summary>
    /// <param name="levelWeight">The level weight α (NIST α, FPP α), in (0, 1].</param>
    /// <param name="trendWeight">The trend weight (NIST γ, FPP β*), in [0, 1].</param>
    /// <param name="damping">The damping φ, in (0, 1]; 1 (the default) means no damping.</param>
    /// <param name="start">The start rule; the default is <see cref="HoltStart.FirstTwoActuals"/> (FPP 1st ed.).</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A weight or the damping is out of range.</exception>
    public static HoltOptions Holt(double levelWeight, double trendWeight, double damping = 1.0, HoltStart start = default) =>
        new(levelWeight, trendWeight, damping, start);

    /// <summary>
    /// The Holt-Winters seasonal method; the same as
    /// <c>new HoltWintersOptions(seasonLength, seasonality, levelWeight, trendWeight, seasonalWeight, damping, startSeasons)</c>.
    /// </summary>
    /// <param name="seasonLength">The season length m, 2 or more.</param>
    /// <param name="seasonality">Additive or multiplicative seasonal effects.</param>
    /// <param name="levelWeight">The level weight α, in (0, 1].</param>
    /// <param name="trendWeight">The trend weight (NIST γ, FPP β*), in [0, 1].</param>
    /// <param name="seasonalWeight">The seasonal weight (NIST β), in [0, 1].</param>
    /// <param name="damping">The damping φ, in (0, 1]; 1 (the default) means no damping.</param>
    /// <param name="startSeasons">The number of whole seasons the start values come from, 2 (the default) or more.</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A parameter is out of range.</exception>
    public static HoltWintersOptions HoltWinters(
        int seasonLength,
        Seasonality seasonality,
        double levelWeight,
        double trendWeight,
        double seasonalWeight,
        double damping = 1.0,
        int startSeasons = 2) =>
        new(seasonLength, seasonality, levelWeight, trendWeight, seasonalWeight, damping, startSeasons);
}
