using System.Diagnostics;
using StreamForecast.Forecasting;

namespace StreamForecast.Internal;

/// <summary>
/// The Holt-Winters start values computed from the first c whole seasons: <see cref="Compute"/> is the season-means rule and
/// <see cref="ComputeDecomposition"/> the classical decomposition (<see cref="HoltWintersStart"/>). Season means (NIST/SEMATECH
/// e-Handbook §6.4.3.5, from memory):
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

    /// <summary>
    /// The classical-decomposition start (see <see cref="HoltWintersStart.ClassicalDecomposition"/>): centred moving average
    /// over one season, detrended values averaged per season position and normalised, and a least-squares line through the
    /// centred averages evaluated at period m.
    /// </summary>
    /// <param name="window">The first c·m actuals in time order (c ≥ 2).</param>
    /// <param name="seasonLength">m.</param>
    /// <param name="multiplicative">Ratios (true) or differences (false) to the centred average.</param>
    /// <param name="centred">Scratch of length c·m; receives the centred averages at positions that have one.</param>
    /// <param name="indices">Receives the m seasonal indices, position 1 first.</param>
    /// <param name="level">The line's value at period m.</param>
    /// <param name="trend">The line's slope per period.</param>
    /// <remarks>
    /// Multiplicative: a centred average is held at or above <see cref="HoltWinters.MultiplicativeFloor"/> before it divides,
    /// as the season means of <see cref="Compute"/> are, so a run of zeros gives a zero ratio instead of a division by zero
    /// and every ratio stays finite for actuals inside <see cref="NumericDomain"/>; when every ratio is zero the indices are
    /// left at zero (the caller holds them at the floor) rather than divided by a zero mean.
    /// </remarks>
    public static void ComputeDecomposition(
        ReadOnlySpan<double> window,
        int seasonLength,
        bool multiplicative,
        Span<double> centred,
        Span<double> indices,
        out double level,
        out double trend)
    {
        int m = seasonLength;
        int length = window.Length;
        Debug.Assert(m >= 2 && length >= 2 * m && length % m == 0 && centred.Length == length && indices.Length == m);

        // Centred moving average of order m (odd m) or 2×m (even m: half weights on the two ends), FPP 2nd ed. §6.2
        // (section number from memory). It exists at positions half … length − 1 − half (0-based).
        int half = m / 2;
        int first = half, last = length - 1 - half;
        bool even = m % 2 == 0;
        int innerHalf = even ? half - 1 : half;  // the full-weight terms are t − innerHalf … t + innerHalf
        var inner = default(CompensatedSum);
        inner.Reset(window.Slice(first - innerHalf, (2 * innerHalf) + 1));
        for (int t = first; t <= last; t++)
        {
            if (t > first)
            {
                // Slide the full-weight run one step: O(1) per position, exact to a few ulps (compensated).
                inner.Add(window[t + innerHalf]);
                inner.Add(-window[t - innerHalf - 1]);
            }

            double total = even ? inner.Value + (0.5 * (window[t - half] + window[t + half])) : inner.Value;
            centred[t] = total / m;
        }

        // Detrended values averaged per season position (every position has one at least once c ≥ 2), then normalised.
        double figureTotal = 0;
        for (int i = 0; i < m; i++)
        {
            double total = 0;
            int count = 0;
            for (int t = i; t < length; t += m)
            {
                if (t >= first && t <= last)
                {
                    total += multiplicative ? window[t] / Math.Max(centred[t], HoltWinters.MultiplicativeFloor) : window[t] - centred[t];
                    count++;
                }
            }

            indices[i] = total / count;
            figureTotal += indices[i];
        }

        double figureMean = figureTotal / m;
        if (!multiplicative || figureMean > 0)
        {
            for (int i = 0; i < m; i++)
            {
                indices[i] = multiplicative ? indices[i] / figureMean : indices[i] - figureMean;
            }
        }

        // Least-squares line through the centred averages against the period number (period = position + 1).
        int n = last - first + 1;
        double meanX = ((first + last) / 2.0) + 1;
        double meanY = 0;
        for (int t = first; t <= last; t++)
        {
            meanY += centred[t];
        }

        meanY /= n;
        double sxy = 0, sxx = 0;
        for (int t = first; t <= last; t++)
        {
            double dx = t + 1 - meanX;
            sxy += dx * (centred[t] - meanY);
            sxx += dx * dx;
        }

        trend = sxy / sxx;
        level = meanY + (trend * (m - meanX));
    }
}
