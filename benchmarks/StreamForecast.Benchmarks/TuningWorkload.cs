using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Invented daily histories for the tuning benchmarks (issue 15 target 5): a chain of bakeries' item sales over two years
/// (730 days), each with its own level, a weekly pattern (busy end of week, quiet start), a gentle trend and noise
/// proportional to the square root of the mean; about one in eight is an item sold only now and then (celebration cakes).
/// Deterministic: series <c>i</c> depends only on <c>i</c>.
/// </summary>
internal static class TuningWorkload
{
    /// <summary>Two years of days.</summary>
    public const int Days = 730;

    /// <summary>The weekly season.</summary>
    public const int SeasonLength = 7;

    /// <summary>True when STREAMFORECAST_BENCH_SMOKE=1 (CI's dry run, which must stay short).</summary>
    public static bool Smoke => Environment.GetEnvironmentVariable("STREAMFORECAST_BENCH_SMOKE") == "1";

    private static readonly double[] s_week = [0.80, 0.90, 0.95, 1.00, 1.15, 1.45, 0.75];

    /// <summary>Today's defaults with the weekly season (what <c>streamforecast-cli tune --season 7</c> runs).</summary>
    public static TuningOptions Options(int degree, bool fitStartValues = false) =>
        new(seasonLength: SeasonLength, maxDegreeOfParallelism: degree, fitStartValues: fitStartValues);

    /// <summary>The histories of <paramref name="count"/> bakery items, keyed "bakery-b/item-i".</summary>
    public static KeyValuePair<string, double[]>[] Generate(int count)
    {
        var histories = new KeyValuePair<string, double[]>[count];
        for (int i = 0; i < count; i++)
        {
            histories[i] = new KeyValuePair<string, double[]>($"bakery-{i / 20}/item-{i % 20}", Series(i));
        }

        return histories;
    }

    /// <summary>One history; the same for the same index.</summary>
    public static double[] Series(int index)
    {
        var rng = new Random(7919 + index);
        var y = new double[Days];
        if (index % 8 == 7)
        {
            double rate = 0.1 + (0.2 * rng.NextDouble());
            for (int d = 0; d < Days; d++)
            {
                y[d] = rng.NextDouble() < rate ? 1 + rng.Next(0, 5) : 0;
            }

            return y;
        }

        double level = 10 + (190 * rng.NextDouble());
        double trendPerYear = (rng.NextDouble() - 0.4) * 0.3;
        double swing = 0.5 + rng.NextDouble();
        for (int d = 0; d < Days; d++)
        {
            double week = 1 + (swing * (s_week[d % 7] - 1));
            double mean = level * (1 + (trendPerYear * d / 365.0)) * week;
            y[d] = Math.Max(0, Math.Round(mean + (Normal(rng) * Math.Sqrt(mean))));
        }

        return y;
    }

    /// <summary>
    /// The averages, over the series, of the chosen method's backtest RMSE and MASE at one step ahead (series without a
    /// finite value left out of that average).
    /// </summary>
    public static (double Rmse, double Mase) AverageChosenError(IReadOnlyList<KeyValuePair<string, TuningResult>> results)
    {
        double rmse = 0;
        double mase = 0;
        int rmseCount = 0;
        int maseCount = 0;
        foreach (KeyValuePair<string, TuningResult> pair in results)
        {
            HorizonAccuracy one = pair.Value.Chosen.AtHorizon(1);
            if (double.IsFinite(one.Rmse))
            {
                rmse += one.Rmse;
                rmseCount++;
            }

            if (double.IsFinite(one.Mase))
            {
                mase += one.Mase;
                maseCount++;
            }
        }

        return (rmseCount > 0 ? rmse / rmseCount : double.NaN, maseCount > 0 ? mase / maseCount : double.NaN);
    }

    private static double Normal(Random rng)
    {
        // Box-Muller: two uniforms to one standard normal.
        double u1 = 1 - rng.NextDouble();
        double u2 = rng.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
