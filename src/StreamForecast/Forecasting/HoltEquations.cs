using System.Runtime.CompilerServices;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Holt's smoothing equations with their weights: the one place the step and the forecast are computed. <see cref="Holt"/>
/// holds one for its series; the parameter fitter (StreamForecast.Selection) runs the same equations over a history
/// without creating a forecaster per trial, so both give the same numbers bit for bit.
/// </summary>
/// <remarks>Immutable; thread-safe; every member O(1) and allocation-free.</remarks>
internal readonly struct HoltEquations
{
    public HoltEquations(double alpha, double beta, double phi)
    {
        Alpha = alpha;
        OneMinusAlpha = 1.0 - alpha;
        Beta = beta;
        OneMinusBeta = 1.0 - beta;
        Phi = phi;
    }

    public double Alpha { get; }

    public double OneMinusAlpha { get; }

    public double Beta { get; }

    public double OneMinusBeta { get; }

    public double Phi { get; }

    /// <summary>One period of the equations (the caller checks that the result is finite).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Step(double level, double trend, double actual, out double newLevel, out double newTrend)
    {
        double dampedTrend = Phi * trend;
        newLevel = (Alpha * actual) + (OneMinusAlpha * (level + dampedTrend));
        newTrend = (Beta * (newLevel - level)) + (OneMinusBeta * dampedTrend);
    }

    /// <summary>The forecast <paramref name="horizon"/> periods ahead from a level and trend.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Forecast(double level, double trend, int horizon) => level + (SmoothingMath.DampedSum(Phi, horizon) * trend);
}
