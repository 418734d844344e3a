using System.Diagnostics;
using StreamForecast.Forecasting;

namespace StreamForecast.Internal;

/// <summary>
/// The Holt-Winters start values from the first c whole seasons (NIST/SEMATECH e-Handbook §6.4.3.5, from memory):
/// season means A_p; level A₁; trend (A₂ − A₁)/m, which equals NIST's (1/m)·Σᵢ (y(m+i) − y(i))/m; seasonal
/// index i = the mean over the c seasons of y/A_p (multiplicative) or y − A_p (additive).
/// </summary>
internal static class SeasonalStartValues
{
    /// <summary>Computes the start values.</summary>
    /// <param name="window">The first c·m actuals in time order (c ≥ 2).</param>
    /// <param name="seasonLength">m.</param>
    /// <param name="multiplicative">Ratios (true) or differences (false) to the season means.</param>
    /// <param name="seasonMeans">Receives A₁ … A_c (length c).</param>
    /// <param name="indices">Receives the m seasonal indices, position 1 first.</param>
    /// <param name="level">The start level A₁.</param>
    /// <param name="trend">The start trend (A₂ − A₁)/m.</param>
    public static void Compute(
        ReadOnlySpan<double> window,
        int seasonLength,
        bool multiplicative,
        Span<double> seasonMeans,
        Span<double> indices,
        out double level,
        out double trend)
    {
        int m = seasonLength;
        int seasons = window.Length / m;
        Debug.Assert(m >= 2 && seasons >= 2 && window.Length == seasons * m);
        Debug.Assert(seasonMeans.Length == seasons && indices.Length == m);

        for (int p = 0; p < seasons; p++)
        {
            var sum = default(CompensatedSum);
            sum.Reset(window.Slice(p * m, m));
            // A multiplicative start divides by the season means: a season of zeros and subnormal values must not give
            // a mean that underflows to zero, so ratios are held finite with the floor.
            seasonMeans[p] = multiplicative ? Math.Max(sum.Value / m, HoltWinters.MultiplicativeFloor) : sum.Value / m;
        }

        for (int i = 0; i < m; i++)
        {
            double total = 0;
            for (int p = 0; p < seasons; p++)
            {
                double y = window[(p * m) + i];
                total += multiplicative ? y / seasonMeans[p] : y - seasonMeans[p];
            }

            indices[i] = total / seasons;
        }

        level = seasonMeans[0];
        trend = (seasonMeans[1] - seasonMeans[0]) / m;
    }
}
