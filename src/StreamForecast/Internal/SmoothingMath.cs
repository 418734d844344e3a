using System.Diagnostics;

namespace StreamForecast.Internal;

/// <summary>Shared formulas of the exponential smoothing family: damped trend multipliers and horizon variances.</summary>
internal static class SmoothingMath
{
    /// <summary>φ + φ² + … + φʰ, the multiplier of the trend in an h-step forecast (h when φ = 1).</summary>
    public static double DampedSum(double damping, int horizon)
    {
        Debug.Assert(damping > 0 && damping <= 1 && horizon >= 1);
        if (damping == 1.0)
        {
            return horizon;
        }

        if (horizon == 1)
        {
            return damping;
        }

        return damping * (1.0 - Math.Pow(damping, horizon)) / (1.0 - damping);
    }

    /// <summary>
    /// The h-step forecast error variance divided by the one-step variance under the additive-error innovations
    /// state space model (Hyndman, Koehler, Ord &amp; Snyder 2008, class 1, from memory):
    /// 1 + Σ_{j=1}^{h−1} c_j² with c_j = α + β·φ_j + γ·[j a multiple of m], φ_j = φ + … + φʲ.
    /// <paramref name="trendWeight"/> and <paramref name="seasonalWeight"/> are the model's (ETS) weights, not
    /// the smoothing-equation weights; callers convert.
    /// </summary>
    /// <remarks>
    /// Undamped (φ = 1): the closed form 1 + (h−1)[α² + αβh + β²h(2h−1)/6] + γk[2α + γ + βm(k+1)], k = ⌊(h−1)/m⌋,
    /// O(1). Damped: the sum term by term; once φʲ no longer changes φ_j in double precision (after about
    /// 40/(1−φ) terms) the remaining terms are periodic and are added in one step, so the cost is
    /// O(min(h, 40/(1−φ))).
    /// </remarks>
    public static double HorizonVarianceRatio(double levelWeight, double trendWeight, double seasonalWeight, double damping, int seasonLength, int horizon)
    {
        Debug.Assert(horizon >= 1 && seasonLength >= 0);
        double a = levelWeight, b = trendWeight, g = seasonalWeight;
        long n = horizon - 1L;
        if (damping == 1.0)
        {
            double h = horizon;
            double ratio = 1.0 + (n * ((a * a) + (a * b * h) + (b * b * h * ((2 * h) - 1) / 6.0)));
            if (seasonLength > 0 && g != 0)
            {
                long k = n / seasonLength;
                ratio += g * k * ((2 * a) + g + (b * seasonLength * (k + 1)));
            }

            return ratio;
        }

        double sum = 0;
        double power = 1;   // φ^j
        double cumulative = 0; // φ_j
        for (long j = 1; j <= n; j++)
        {
            power *= damping;
            double next = cumulative + power;
            if (next == cumulative)
            {
                // φ_j has converged: c_j = A + γ·[m | j] for every remaining j.
                double level = a + (b * cumulative);
                long remaining = n - j + 1;
                sum += remaining * level * level;
                if (seasonLength > 0)
                {
                    long multiples = (n / seasonLength) - ((j - 1) / seasonLength);
                    sum += multiples * ((2 * level * g) + (g * g));
                }

                break;
            }

            cumulative = next;
            double c = a + (b * cumulative);
            if (seasonLength > 0 && j % seasonLength == 0)
            {
                c += g;
            }

            sum += c * c;
        }

        return 1.0 + sum;
    }
}
