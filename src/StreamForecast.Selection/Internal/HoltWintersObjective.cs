using StreamForecast.Forecasting;
using StreamForecast.Internal;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// The one-step SSE of Holt-Winters weights with the default start (<see cref="HoltWintersStart.SeasonMeans"/> over
/// two seasons) over one history, without creating options or a forecaster per trial: the start and every step run
/// through <see cref="HoltWintersEquations"/>, the same code the forecaster runs, in the same order, so the SSE is the
/// forecaster's bit for bit (tested against <see cref="MethodFitter.OneStepSquaredErrors"/>).
/// </summary>
/// <remarks>
/// Wherever the forecaster would refuse an actual, this declines instead (<see cref="TrySumOfSquaredErrors"/> returns
/// false) and the caller runs the forecaster, so refusals, messages and the resulting +∞ stay the forecaster's:
/// an actual outside <see cref="NumericDomain"/>, for multiplicative seasonality a negative actual or a zero in the
/// start window, and a step that does not give a finite state. One scratch array of m numbers; not thread-safe (one
/// per fit).
/// </remarks>
internal sealed class HoltWintersObjective
{
    private const int StartSeasons = 2;
    private readonly double[] _series;
    private readonly bool _multiplicative;
    private readonly bool _declines;
    private readonly double[] _seasonal;

    public HoltWintersObjective(double[] series, int seasonLength, Seasonality seasonality)
    {
        _series = series;
        _multiplicative = seasonality == Seasonality.Multiplicative;
        _seasonal = new double[seasonLength];
        int warmUp = StartSeasons * seasonLength;
        _declines = series.Length <= warmUp;
        for (int t = 0; t < series.Length && !_declines; t++)
        {
            double y = series[t];
            _declines = !NumericDomain.Contains(y) || (_multiplicative && (y < 0 || (y == 0 && t < warmUp)));
        }
    }

    /// <summary>
    /// The SSE and error count of weights α, trend weight, seasonal weight and φ over the whole history (every period
    /// after the start window), or false when the forecaster must be run instead (see the remarks).
    /// </summary>
    public bool TrySumOfSquaredErrors(double alpha, double beta, double gamma, double phi, out double sse, out long count)
    {
        sse = 0;
        count = 0;
        if (_declines)
        {
            return false;
        }

        var equations = new HoltWintersEquations(_multiplicative, alpha, beta, gamma, phi);
        double[] seasonal = _seasonal;
        int m = seasonal.Length;
        ReadOnlySpan<double> series = _series;
        ReadOnlySpan<double> window = series[..(StartSeasons * m)];
        Span<double> seasonMeans = stackalloc double[StartSeasons];
        SeasonalStartValues.Compute(window, m, _multiplicative, seasonMeans, seasonal, out double level, out double trend);
        equations.FloorStart(ref level, seasonal);
        if (!equations.TryRunStartSeasons(window, seasonal, ref level, ref trend))
        {
            return false;
        }

        var sum = default(SquaredErrorSum);
        int slot = 0; // window.Length is a whole number of seasons
        for (int t = window.Length; t < series.Length; t++)
        {
            double actual = series[t];
            sum.Add(actual, equations.Forecast(level, trend, seasonal[slot], 1));
            if (!equations.TryStep(level, trend, seasonal[slot], actual, out level, out trend, out double index))
            {
                return false;
            }

            seasonal[slot] = index;
            if (++slot == m)
            {
                slot = 0;
            }
        }

        sse = sum.Value;
        count = sum.Count;
        return true;
    }
}
