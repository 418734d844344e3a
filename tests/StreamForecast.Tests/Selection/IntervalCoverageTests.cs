using System.Globalization;
using StreamForecast.Demo;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Tracking;
using Xunit.Abstractions;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Achieved out-of-sample coverage of 80% intervals, normal and empirical, measured by the backtester (every interval is
/// fixed at its origin from earlier errors only, then scored against the actual it was made for).
/// </summary>
/// <remarks>
/// <para><b>The band.</b> If each scored actual falls inside its interval with probability c = 0.8, independently, the
/// number inside out of n is binomial(n, c): its fraction has mean c and standard error √(c(1 − c)/n) (binomial
/// variance, any statistics text). ±2.6 standard errors holds the fraction with probability about 99% (the normal 0.995
/// quantile is 2.576, NormalMultiplier.Coverage99), so a correct interval fails this check about once in a hundred
/// independent data sets. At n = 600: ±2.6·√(0.16/600) = ±0.042; at n = 8,000: ±0.012. Errors of one series are not
/// fully independent (and the empirical window adapts), so the band is a yardstick, not an exact test; each data set
/// below is fixed, so the result is deterministic.</para>
/// <para><b>Data.</b> The vendored Mauna Loa CO2 series (public, CC-BY-4.0; see Co2RegressionTests), the demo's invented
/// bakery series (samples/StreamForecast.Demo/BakeryScenario.cs, linked in), and long invented series whose model is
/// right (iid normal noise around a constant level, forecast by a moving average or simple exponential smoothing).</para>
/// </remarks>
public sealed class IntervalCoverageTests(ITestOutputHelper output)
{
    private const double Nominal = 0.8;

    private static double Band(long n) => 2.6 * Math.Sqrt(Nominal * (1 - Nominal) / n);

    private static (long Count, long Inside, long Empirical) Measure(double[] series, ForecasterOptions method, int firstOrigin, bool empirical, int horizon = 1, bool nonNegative = false)
    {
        var options = new BacktestOptions(firstOrigin, horizon: horizon, empiricalIntervals: empirical ? new EmpiricalIntervalOptions(Nominal) : null, nonNegative: nonNegative);
        HorizonAccuracy h = Backtester.Evaluate(series, method, options).AtHorizon(horizon);
        return (h.IntervalCount, (long)Math.Round(h.Coverage * h.IntervalCount), h.EmpiricalCount);
    }

    private void Report(string what, (long Count, long Inside, long Empirical) r) =>
        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{what}: coverage {(double)r.Inside / r.Count:0.0000} over {r.Count} intervals ({r.Empirical} empirical), band ±{Band(r.Count):0.0000}"));

    private static double[] Co2() => Co2RegressionTests.LoadForTests();

    [Fact]
    public void Coverage_Co2HoltWintersEmpirical80_WithinBinomialBand()
    {
        // The tuner's choice for this series (Co2RegressionTests: DERIVED regression values of this code).
        var method = new HoltWintersOptions(12, Seasonality.Additive, 0.5858, 0.0116, 0.4744);
        var empirical = Measure(Co2(), method, 24, empirical: true);
        var normal = Measure(Co2(), method, 24, empirical: false);
        Report("CO2 empirical", empirical);
        Report("CO2 normal", normal);
        Assert.InRange((double)empirical.Inside / empirical.Count, Nominal - Band(empirical.Count), Nominal + Band(empirical.Count));
    }

    [Fact]
    public void Coverage_DemoBakeriesEmpirical80_WithinBinomialBand()
    {
        // Every demo series with the same weekly additive Holt-Winters (weights chosen once, common practice ranges),
        // clipped at zero as the demo runs them; counts pooled over the twelve series.
        var method = new HoltWintersOptions(7, Seasonality.Additive, 0.2, 0.01, 0.1);
        (long Count, long Inside, long Empirical) empirical = default, normal = default;
        foreach (BakerySeries s in BakeryScenario.Generate())
        {
            empirical = Add(empirical, Measure(s.Daily, method, 14, empirical: true, nonNegative: true));
            normal = Add(normal, Measure(s.Daily, method, 14, empirical: false, nonNegative: true));
        }

        Report("Demo bakeries empirical", empirical);
        Report("Demo bakeries normal", normal);
        Assert.InRange((double)empirical.Inside / empirical.Count, Nominal - Band(empirical.Count), Nominal + Band(empirical.Count));
    }

    [Theory]
    [InlineData(1, 1)]
    [InlineData(2, 1)]
    [InlineData(1, 4)]
    public void Coverage_LongIidSeriesRightModelEmpirical80_Within78To82Percent(int methodIndex, int horizon)
    {
        ForecasterOptions method = methodIndex == 1 ? new ExponentialSmoothingOptions(0.1) : new MovingAverageOptions(20);
        double[] y = IidNormal(20_000, level: 100, sigma: 10, seed: 14);
        var empirical = Measure(y, method, 50, empirical: true, horizon: horizon);
        var normal = Measure(y, method, 50, empirical: false, horizon: horizon);
        Report(string.Create(CultureInfo.InvariantCulture, $"iid normal, {method.MethodName}, h {horizon}, empirical"), empirical);
        Report(string.Create(CultureInfo.InvariantCulture, $"iid normal, {method.MethodName}, h {horizon}, normal"), normal);
        Assert.InRange((double)empirical.Inside / empirical.Count, 0.78, 0.82);
    }

    [Fact]
    public void Coverage_LongSkewedCountsSesEmpirical80_Within78To82Percent()
    {
        // Skewed counts (exponential noise, rounded) around a constant level: the normal band is symmetric and misses
        // on both sides; the empirical one follows the skew.
        var rng = new Random(15);
        double[] y = [.. Enumerable.Range(0, 20_000).Select(_ => Math.Round(-4 * Math.Log(1 - rng.NextDouble())))];
        var method = new ExponentialSmoothingOptions(0.05);
        var empirical = Measure(y, method, 50, empirical: true, nonNegative: true);
        var normal = Measure(y, method, 50, empirical: false, nonNegative: true);
        Report("skewed counts, SES 0.05, empirical", empirical);
        Report("skewed counts, SES 0.05, normal", normal);
        Assert.InRange((double)empirical.Inside / empirical.Count, 0.78, 0.82);
    }

    private static (long, long, long) Add((long A, long B, long C) x, (long A, long B, long C) y) => (x.A + y.A, x.B + y.B, x.C + y.C);

    private static double[] IidNormal(int n, double level, double sigma, int seed)
    {
        var rng = new Random(seed);
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            // Box–Muller.
            double u1 = 1.0 - rng.NextDouble();
            double u2 = rng.NextDouble();
            y[i] = level + (sigma * Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2));
        }

        return y;
    }
}
