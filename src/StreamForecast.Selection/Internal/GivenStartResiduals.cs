using StreamForecast.Forecasting;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// The one-step errors of Holt-Winters with a given start state (level ℓ₀, trend b₀ and the m − 1 free seasonal indices,
/// the last one normalising them; see <see cref="HoltWintersStartFit"/>) over one history, without creating options or a
/// forecaster per run: the start is checked and floored as <see cref="HoltWintersOptions"/> and <see cref="HoltWinters"/>
/// check and floor a <see cref="HoltWintersStart.Given"/> start, and every period runs through
/// <see cref="HoltWintersEquations"/>, the code the forecaster runs, in the same order, so the errors are the forecaster's
/// bit for bit (tested against it in <c>LeadingStartFitTests</c>).
/// </summary>
/// <remarks>
/// A run fails (returns false) exactly where creating the options or running the forecaster would fail: weights out of
/// range; a start number outside <see cref="NumericDomain"/>; for multiplicative seasonality a start level or index not
/// above 0 or a negative actual; an actual outside <see cref="NumericDomain"/>; a step that does not give a finite state;
/// and, like the solver's forecaster run, a non-finite error. O(n) per run, no allocation; one scratch array of m numbers,
/// so not thread-safe (one per fit).
/// </remarks>
internal sealed class GivenStartResiduals
{
    private readonly double[] _series;
    private readonly bool _multiplicative;
    private readonly double[] _seasonal;

    public GivenStartResiduals(double[] series, int seasonLength, Seasonality seasonality)
    {
        _series = series;
        _multiplicative = seasonality == Seasonality.Multiplicative;
        _seasonal = new double[seasonLength];
    }

    /// <summary>The history's length: the number of errors every successful run writes.</summary>
    public int Length => _series.Length;

    /// <summary>
    /// Writes the one-step error of every period (actual − forecast, periods 1 … n) of the weights α, trend weight, seasonal
    /// weight (and φ when <paramref name="damped"/>) from the start <paramref name="state"/> into <paramref name="errors"/>;
    /// false where the forecaster path fails (see the remarks), the contents of <paramref name="errors"/> then undefined.
    /// </summary>
    public bool TryRun(double[] weights, bool damped, double[] state, double[] errors)
    {
        double alpha = weights[0];
        double beta = weights[1];
        double gamma = weights[2];
        double phi = damped ? weights[3] : 1.0;
        if (!(alpha > 0 && alpha <= 1) || !(beta >= 0 && beta <= 1) || !(gamma >= 0 && gamma <= 1) || !(phi > 0 && phi <= 1))
        {
            return false;
        }

        // The start: the last index normalises the others (as HoltWintersStartFit builds its options), every number inside
        // the numeric domain, and for multiplicative seasonality above 0 and then held at the floor (HoltWinters.ResetCore).
        double[] seasonal = _seasonal;
        int m = seasonal.Length;
        double level = state[0];
        double trend = state[1];
        double total = 0;
        for (int i = 0; i < m - 1; i++)
        {
            seasonal[i] = state[i + 2];
            total += seasonal[i];
        }

        seasonal[m - 1] = _multiplicative ? m - total : -total;
        if (!NumericDomain.Contains(level) || !NumericDomain.Contains(trend))
        {
            return false;
        }

        for (int i = 0; i < m; i++)
        {
            if (!NumericDomain.Contains(seasonal[i]) || (_multiplicative && !(seasonal[i] > 0)))
            {
                return false;
            }
        }

        if (_multiplicative)
        {
            if (!(level > 0))
            {
                return false;
            }

            level = Math.Max(level, HoltWinters.MultiplicativeFloor);
            for (int i = 0; i < m; i++)
            {
                seasonal[i] = Math.Max(seasonal[i], HoltWinters.MultiplicativeFloor);
            }
        }

        var equations = new HoltWintersEquations(_multiplicative, alpha, beta, gamma, phi);
        double[] series = _series;
        int slot = 0;
        for (int t = 0; t < series.Length; t++)
        {
            double actual = series[t];
            double error = actual - equations.Forecast(level, trend, seasonal[slot], 1);
            if (!double.IsFinite(error) || !NumericDomain.Contains(actual) || (_multiplicative && actual < 0)
                || !equations.TryStep(level, trend, seasonal[slot], actual, out level, out trend, out double index))
            {
                return false;
            }

            errors[t] = error;
            seasonal[slot] = index;
            if (++slot == m)
            {
                slot = 0;
            }
        }

        return true;
    }
}
