using System.Runtime.CompilerServices;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// The Holt-Winters smoothing equations with their weights: the one place the step, the start run and the forecast are
/// computed. <see cref="HoltWinters"/> holds one for its series; the parameter fitter (StreamForecast.Selection) runs the
/// same equations over a history without creating a forecaster per trial, so both give the same numbers bit for bit.
/// </summary>
/// <remarks>Immutable; thread-safe. Every member is O(1) and allocation-free except <see cref="TryRunStartSeasons"/>, O(c·m).</remarks>
internal readonly struct HoltWintersEquations
{
    public HoltWintersEquations(bool multiplicative, double alpha, double beta, double gamma, double phi)
    {
        Multiplicative = multiplicative;
        Alpha = alpha;
        OneMinusAlpha = 1.0 - alpha;
        Beta = beta;
        OneMinusBeta = 1.0 - beta;
        Gamma = gamma;
        OneMinusGamma = 1.0 - gamma;
        Phi = phi;
    }

    public bool Multiplicative { get; }

    public double Alpha { get; }

    public double OneMinusAlpha { get; }

    public double Beta { get; }

    public double OneMinusBeta { get; }

    public double Gamma { get; }

    public double OneMinusGamma { get; }

    public double Phi { get; }

    /// <summary>One period of the equations; false when the new level, trend or index is not finite (nothing is kept).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public bool TryStep(double level, double trend, double seasonal, double actual, out double newLevel, out double newTrend, out double newSeasonal)
    {
        double dampedTrend = Phi * trend;
        if (Multiplicative)
        {
            newLevel = (Alpha * (actual / seasonal)) + (OneMinusAlpha * (level + dampedTrend));
            if (!(newLevel > 0))
            {
                // The trend would carry the level to zero or below, where multiplicative seasonality breaks down (it
                // divides by the level). Drop the trend for this step: the level becomes a weighted mean of the
                // deseasonalised actual and the old level, positive whenever either is, and the trend restarts from
                // the change that step makes. Without this a steep fall would refuse every later actual.
                dampedTrend = 0;
                newLevel = (Alpha * (actual / seasonal)) + (OneMinusAlpha * level);
            }

            // A long run of zeros shrinks the level and the indices geometrically; held at the floor they never underflow
            // to zero, so the next actual can always be divided by them.
            newLevel = Math.Max(newLevel, HoltWinters.MultiplicativeFloor);
            newTrend = (Beta * (newLevel - level)) + (OneMinusBeta * dampedTrend);
            newSeasonal = Math.Max((Gamma * (actual / newLevel)) + (OneMinusGamma * seasonal), HoltWinters.MultiplicativeFloor);
            return double.IsFinite(newLevel) && double.IsFinite(newTrend) && double.IsFinite(newSeasonal);
        }

        newLevel = (Alpha * (actual - seasonal)) + (OneMinusAlpha * (level + dampedTrend));
        newTrend = (Beta * (newLevel - level)) + (OneMinusBeta * dampedTrend);
        newSeasonal = (Gamma * (actual - newLevel)) + (OneMinusGamma * seasonal);
        return double.IsFinite(newLevel) && double.IsFinite(newTrend) && double.IsFinite(newSeasonal);
    }

    /// <summary>The forecast <paramref name="horizon"/> periods ahead from a level, trend and the index of the target period.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Forecast(double level, double trend, double seasonal, int horizon)
    {
        double trendPart = level + (SmoothingMath.DampedSum(Phi, horizon) * trend);
        return Multiplicative ? trendPart * seasonal : trendPart + seasonal;
    }

    /// <summary>
    /// Holds start values at the multiplicative floor (tiny positive actuals can give a start index or level that
    /// underflows); does nothing for additive seasonality.
    /// </summary>
    public void FloorStart(ref double level, Span<double> seasonal)
    {
        if (!Multiplicative)
        {
            return;
        }

        level = Math.Max(level, HoltWinters.MultiplicativeFloor);
        for (int i = 0; i < seasonal.Length; i++)
        {
            seasonal[i] = Math.Max(seasonal[i], HoltWinters.MultiplicativeFloor);
        }
    }

    /// <summary>
    /// Runs the start window's seasons 2 … c through the equations from the start values (the state at period m);
    /// false when a step fails (the level, trend and indices are then partly updated and must be discarded).
    /// </summary>
    public bool TryRunStartSeasons(ReadOnlySpan<double> window, Span<double> seasonal, ref double level, ref double trend)
    {
        int m = seasonal.Length;
        for (int t = m; t < window.Length; t++)
        {
            int slot = t % m;
            if (!TryStep(level, trend, seasonal[slot], window[t], out level, out trend, out double index))
            {
                return false;
            }

            seasonal[slot] = index;
        }

        return true;
    }
}
