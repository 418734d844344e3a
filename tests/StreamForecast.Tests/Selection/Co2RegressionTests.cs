using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Regression tests of the tuner and of Holt-Winters fitting on a real seasonal series: the monthly Mauna Loa CO2
/// concentration (Scripps CO2 Program, CC-BY-4.0, vendored from the npm package vega-datasets; see
/// Data/co2-concentration.NOTICE.md). The exact numbers are DERIVED regression values: computed by this code when the
/// test was written, recorded to catch unintended changes, not published values.
/// </summary>
public class Co2RegressionTests
{
    private static readonly Lazy<double[]> s_co2 = new(Load);

    /// <summary>The loaded series, shared with other tests of the same data.</summary>
    internal static double[] LoadForTests() => s_co2.Value;

    /// <summary>The contiguous monthly run 1964-05 … 2020-04 (672 months) of the "CO2" column.</summary>
    private static double[] Load()
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Data", "co2-concentration.csv");
        var values = new List<double>();
        foreach (string line in File.ReadLines(path).Skip(1))
        {
            string[] fields = line.Split(','); // three plain numeric/date columns, no quoting in this file
            if (string.CompareOrdinal(fields[0], "1964-05-01") >= 0)
            {
                values.Add(double.Parse(fields[1], CultureInfo.InvariantCulture));
            }
        }

        return [.. values];
    }

    [Fact]
    public void Load_VendoredFile_HasContiguousRunOf672Months()
    {
        double[] co2 = s_co2.Value;

        Assert.Equal(672, co2.Length); // 1964-05 … 2020-04 inclusive: 56 years × 12 months
        Assert.All(co2, v => Assert.InRange(v, 300, 420)); // ppm range of the record (data file)
    }

    [Fact]
    public void Tune_MaunaLoaCo2_ChoosesHoltWintersBetterThanSeasonalNaive()
    {
        TuningResult result = SeriesTuner.Tune(s_co2.Value, new TuningOptions(seasonLength: 12));

        // Behaviour: trend plus a yearly cycle, so a seasonal smoothing method must win, and beat the seasonal naive
        // forecast (which ignores the trend) and the default SES(0.2) by a wide margin (common practice).
        var chosen = Assert.IsType<HoltWintersOptions>(result.Method);
        Assert.Equal(12, chosen.SeasonLength);
        CandidateEvaluation seasonalNaive = result.Ranking.First(c => c.Method is NaiveOptions { SeasonLength: 12 });
        Assert.True(result.Chosen.Score < 0.5 * seasonalNaive.Score, $"chosen {result.Chosen}, seasonal naive {seasonalNaive}");
        Assert.True(result.Chosen.Score < 0.5 * result.Default.Score, $"chosen {result.Chosen}, default {result.Default}");

        // DERIVED regression values (this code, 2026-12): fitting window 336 months, backtest over the other 336.
        Assert.Equal(336, result.FirstOrigin);
        Assert.Equal("HoltWinters(additive, m 12, 0.5858, 0.0116, 0.4744)", result.Method.MethodName);
        Assert.Equal(0.3352320082025006, result.Chosen.Score, 1e-9);
        Assert.Equal(336, result.Chosen.AtHorizon(1).Count);
        Assert.Equal(2.144132497460609, seasonalNaive.Score, 1e-9);
        Assert.Equal(2.4573194314233637, result.Default.Score, 1e-9);
    }

    [Fact]
    public void FitHoltWinters_MaunaLoaCo2FirstHalf_RegressionParameters()
    {
        double[] co2 = s_co2.Value;

        FittedMethod fit = MethodFitter.FitHoltWinters(co2.AsSpan(0, 336), 12, Seasonality.Additive);

        // DERIVED regression values (this code, 2026-12).
        var method = Assert.IsType<HoltWintersOptions>(fit.Method);
        Assert.Equal(0.5858, method.LevelWeight, 1e-12);
        Assert.Equal(0.0116, method.TrendWeight, 1e-12);
        Assert.Equal(0.4744, method.SeasonalWeight, 1e-12);
        Assert.Equal(312, fit.ErrorCount); // 336 months minus the two-season start window
        Assert.Equal(0.09516143436684982, fit.MeanSquaredError, 1e-9);

        // Cross-check: the fitted weights score the same one-step MSE when the method is re-run by MethodFitter.Score.
        Assert.Equal(fit.MeanSquaredError, MethodFitter.Score(co2.AsSpan(0, 336), method).MeanSquaredError, 1e-12);
    }
}
