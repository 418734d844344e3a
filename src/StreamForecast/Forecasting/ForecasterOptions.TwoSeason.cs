namespace StreamForecast.Forecasting;

/// <content>Shorthand factory for Holt-Winters with two seasonal cycles.</content>
public abstract partial record ForecasterOptions
{
    /// <summary>
    /// Holt-Winters with two seasonal cycles (double seasonal Holt-Winters); the same as
    /// <c>new TwoSeasonHoltWintersOptions(shortCycle, longCycle, seasonality, levelWeight, trendWeight, shortCycleWeight, longCycleWeight, errorAdjustment)</c>.
    /// </summary>
    /// <param name="shortCycle">The shorter cycle m₁ (24 for the day in hourly data), 2 or more.</param>
    /// <param name="longCycle">The longer cycle m₂ (168 for the week in hourly data), above m₁.</param>
    /// <param name="seasonality">Additive or multiplicative seasonal effects.</param>
    /// <param name="levelWeight">The level weight α, in (0, 1].</param>
    /// <param name="trendWeight">The trend weight β, in [0, 1]; null for no trend component.</param>
    /// <param name="shortCycleWeight">The short-cycle weight δ, in [0, 1].</param>
    /// <param name="longCycleWeight">The long-cycle weight ω, in [0, 1].</param>
    /// <param name="errorAdjustment">The first-order error adjustment λ, in (−1, 1); 0 (the default) means none.</param>
    /// <returns>Validated options.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A parameter is out of range.</exception>
    public static TwoSeasonHoltWintersOptions TwoSeasonHoltWinters(
        int shortCycle,
        int longCycle,
        Seasonality seasonality,
        double levelWeight,
        double? trendWeight,
        double shortCycleWeight,
        double longCycleWeight,
        double errorAdjustment = 0) =>
        new(shortCycle, longCycle, seasonality, levelWeight, trendWeight, shortCycleWeight, longCycleWeight, errorAdjustment);
}
