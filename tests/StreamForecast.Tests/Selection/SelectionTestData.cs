using MathNet.Numerics.Distributions;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Seeded simulations of processes for which a method's one-step forecast is the optimal (minimum mean squared error)
/// predictor, so a fit on enough data must land near the parameters used. The processes are the innovations (error-
/// correction) forms of the methods, written out here from their published equations, not from the library's code.
/// </summary>
internal static class SelectionTestData
{
    /// <summary>
    /// The local-level process behind single exponential smoothing (Hyndman et al., ETS(A,N,N), from memory):
    /// y(t) = ℓ(t−1) + ε(t), ℓ(t) = ℓ(t−1) + α·ε(t), ε ~ N(0, σ²).
    /// </summary>
    public static double[] LocalLevel(int length, double alpha, double sigma, int seed, double start = 100)
    {
        var noise = new Normal(0, sigma, new Random(seed));
        var y = new double[length];
        double level = start;
        for (int t = 0; t < length; t++)
        {
            double e = noise.Sample();
            y[t] = level + e;
            level += alpha * e;
        }

        return y;
    }

    /// <summary>
    /// The local linear trend process behind Holt's method (ETS(A,A,N), from memory): y(t) = ℓ + b + ε,
    /// ℓ ← ℓ + b + α·ε, b ← b + α·β·ε, with β the trend weight of Holt's equations (FPP's β*).
    /// </summary>
    public static double[] LocalTrend(int length, double alpha, double trendWeight, double sigma, int seed)
    {
        var noise = new Normal(0, sigma, new Random(seed));
        var y = new double[length];
        double level = 100;
        double trend = 0.5;
        for (int t = 0; t < length; t++)
        {
            double e = noise.Sample();
            y[t] = level + trend + e;
            level += trend + (alpha * e);
            trend += alpha * trendWeight * e;
        }

        return y;
    }

    /// <summary>
    /// The additive seasonal process behind Holt-Winters with Winters' seasonal equation (which uses the new level):
    /// y(t) = ℓ + b + s(t−m) + ε, ℓ ← ℓ + b + α·ε, b ← b + α·β·ε, s(t) = s(t−m) + γ·(1−α)·ε. Written from the
    /// equations: s(t) = γ·(y − ℓ(t)) + (1−γ)·s(t−m) with y − ℓ(t) = (1−α)·ε + s(t−m).
    /// </summary>
    public static double[] AdditiveSeasonal(int seasons, int seasonLength, double alpha, double trendWeight, double seasonalWeight, double sigma, int seed)
    {
        var noise = new Normal(0, sigma, new Random(seed));
        var seasonal = new double[seasonLength];
        for (int i = 0; i < seasonLength; i++)
        {
            seasonal[i] = 10 * Math.Sin(2 * Math.PI * i / seasonLength);
        }

        var y = new double[seasons * seasonLength];
        double level = 200;
        double trend = 0.2;
        for (int t = 0; t < y.Length; t++)
        {
            int slot = t % seasonLength;
            double e = noise.Sample();
            y[t] = level + trend + seasonal[slot] + e;
            level += trend + (alpha * e);
            trend += alpha * trendWeight * e;
            seasonal[slot] += seasonalWeight * (1 - alpha) * e;
        }

        return y;
    }

    /// <summary>
    /// y(t) = Σ wᵢ·y(t−i) + ε(t) with Σ wᵢ = 1: the optimal one-step predictor is the weighted moving average with weights
    /// w (most recent first). Σ w = 1 puts a unit root in the process; it is stationary in differences when the other roots of
    /// 1 − Σ wᵢ zⁱ lie outside the unit circle (checked for each use).
    /// </summary>
    public static double[] Autoregressive(int length, double[] mostRecentFirst, double sigma, int seed)
    {
        var noise = new Normal(0, sigma, new Random(seed));
        int k = mostRecentFirst.Length;
        var y = new double[length];
        for (int t = 0; t < length; t++)
        {
            double mean = 0;
            for (int i = 0; i < k; i++)
            {
                mean += mostRecentFirst[i] * (t - 1 - i >= 0 ? y[t - 1 - i] : 100);
            }

            y[t] = mean + noise.Sample();
        }

        return y;
    }

    /// <summary>Independent normal demand around a fixed level: stable, in-control demand.</summary>
    public static double[] StableDemand(int length, double level, double sigma, int seed)
    {
        var noise = new Normal(0, sigma, new Random(seed));
        var y = new double[length];
        for (int t = 0; t < length; t++)
        {
            y[t] = level + noise.Sample();
        }

        return y;
    }
}
