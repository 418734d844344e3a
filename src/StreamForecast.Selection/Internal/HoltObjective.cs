using StreamForecast.Forecasting;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// The one-step SSE of Holt weights with the default start (<see cref="HoltStart.FirstTwoActuals"/>) over one history,
/// without creating options or a forecaster per trial: every step runs through <see cref="HoltEquations"/>, the code the
/// forecaster runs, in the same order, so the SSE is the forecaster's bit for bit (tested against
/// <see cref="MethodFitter.OneStepSquaredErrors"/>).
/// </summary>
/// <remarks>
/// Wherever the forecaster would refuse an actual, this declines instead (<see cref="TrySumOfSquaredErrors"/> returns
/// false) and the caller runs the forecaster: an actual outside <see cref="NumericDomain"/> or a step that does not give a
/// finite state. Thread-safe (no state beyond the history).
/// </remarks>
internal sealed class HoltObjective
{
    private readonly double[] _series;
    private readonly bool _declines;

    public HoltObjective(double[] series)
    {
        _series = series;
        _declines = series.Length < 2;
        foreach (double y in series)
        {
            _declines |= !NumericDomain.Contains(y);
        }
    }

    /// <summary>The SSE and error count of weights α, trend weight and φ over the whole history, or false (see the remarks).</summary>
    public bool TrySumOfSquaredErrors(double alpha, double beta, double phi, out double sse, out long count)
    {
        sse = 0;
        count = 0;
        if (_declines)
        {
            return false;
        }

        var equations = new HoltEquations(alpha, beta, phi);
        ReadOnlySpan<double> series = _series;

        // The start as the forecaster takes it: ℓ₀ = y₁, b₀ = y₂ − y₁, then the equations over y₁ and y₂.
        double first = series[0];
        equations.Step(first, series[1] - first, first, out double level1, out double trend1);
        equations.Step(level1, trend1, series[1], out double level, out double trend);
        if (!(double.IsFinite(level) && double.IsFinite(trend)))
        {
            return false;
        }

        var sum = default(SquaredErrorSum);
        for (int t = 2; t < series.Length; t++)
        {
            double actual = series[t];
            sum.Add(actual, equations.Forecast(level, trend, 1));
            equations.Step(level, trend, actual, out level, out trend);
            if (!(double.IsFinite(level) && double.IsFinite(trend)))
            {
                return false;
            }
        }

        sse = sum.Value;
        count = sum.Count;
        return true;
    }
}
