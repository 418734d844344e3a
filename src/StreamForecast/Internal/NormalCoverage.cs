using System.Diagnostics;

namespace StreamForecast.Internal;

/// <summary>
/// The two-sided coverage of a normal interval ± z·σ, C(z) = 2Φ(z) − 1, and its inverse, for labelling normal intervals
/// with their nominal coverage and for the normal fallback of an empirical configuration.
/// </summary>
/// <remarks>
/// C(z) = 2φ(z)·Σₙ z^(2n+1) / (1·3·5···(2n+1)), a series of positive terms (Abramowitz &amp; Stegun 26.2.11, from
/// memory; checked against MathNet.Numerics' normal CDF in the tests), so no cancellation for any z ≤ 10. The inverse
/// is Newton's method on C. Both run once per options object, never per period.
/// </remarks>
internal static class NormalCoverage
{
    /// <summary>C(z) = P(|Z| ≤ z) for a standard normal Z; z in (0, 10].</summary>
    public static double Of(double z)
    {
        Debug.Assert(z > 0 && z <= 10);
        double z2 = z * z;
        double term = z;
        double sum = z;
        for (int n = 1; n < 1000 && term > sum * 1e-18; n++)
        {
            term *= z2 / ((2 * n) + 1);
            sum += term;
        }

        double density = Math.Exp(-z2 / 2) / Math.Sqrt(2 * Math.PI);
        return Math.Min(1, 2 * density * sum);
    }

    /// <summary>The z with C(z) = <paramref name="coverage"/>; coverage in (0, 1 − 1e-9].</summary>
    public static double MultiplierFor(double coverage)
    {
        Debug.Assert(coverage > 0 && coverage < 1);
        double z = 1.5;
        for (int i = 0; i < 100; i++)
        {
            double density = Math.Exp(-z * z / 2) / Math.Sqrt(2 * Math.PI);
            double step = (Of(z) - coverage) / (2 * density);
            z = Math.Clamp(z - step, 1e-9, 10);
            if (Math.Abs(step) <= 1e-15 * z)
            {
                break;
            }
        }

        return z;
    }
}
