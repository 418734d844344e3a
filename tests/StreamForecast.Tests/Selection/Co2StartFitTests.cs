using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using Xunit.Abstractions;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Fitting the Holt-Winters start state with the weights, on the vendored monthly Mauna Loa CO2 record (Scripps CO2 Program,
/// CC-BY-4.0, from the npm package vega-datasets; Data/co2-concentration.NOTICE.md): the contiguous run 1964-05 … 2020-04,
/// fitted on the first 336 months, held out on the other 336.
/// </summary>
public class Co2StartFitTests(ITestOutputHelper output)
{
    private const int Window = 336;

    private static readonly Lazy<double[]> s_co2 = new(() => File.ReadLines(Path.Combine(AppContext.BaseDirectory, "Data", "co2-concentration.csv"))
        .Skip(1)
        .Select(line => line.Split(','))
        .Where(fields => string.CompareOrdinal(fields[0], "1964-05-01") >= 0)
        .Select(fields => double.Parse(fields[1], CultureInfo.InvariantCulture))
        .ToArray());

    [Theory]
    [InlineData(Seasonality.Additive, false)]
    [InlineData(Seasonality.Additive, true)]
    [InlineData(Seasonality.Multiplicative, false)]
    public void FitHoltWinters_FitStartValuesOnCo2_IsNoWorseInSample(Seasonality seasonality, bool damped)
    {
        double[] co2 = s_co2.Value;
        ReadOnlySpan<double> training = co2.AsSpan(0, Window);

        FittedMethod fixedStart = MethodFitter.FitHoltWinters(training, 12, seasonality, damped);
        FittedMethod fittedStart = MethodFitter.FitHoltWinters(training, 12, seasonality, damped, fitStartValues: true);

        // In sample: the same periods for both, 25 … 336 (the fixed start's first forecast is for period 25).
        double fixedIn = SumOfSquares(co2, fixedStart.Method, 24, Window);
        double fittedIn = SumOfSquares(co2, fittedStart.Method, 24, Window);

        // Out of sample: each method run over the whole record, scored on periods 337 … 672 only.
        double fixedOut = SumOfSquares(co2, fixedStart.Method, Window, co2.Length);
        double fittedOut = SumOfSquares(co2, fittedStart.Method, Window, co2.Length);
        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{seasonality}, damped {damped}: in-sample SSE {fixedIn:G6} -> {fittedIn:G6} ({100 * (1 - (fittedIn / fixedIn)):F1}% lower); holdout SSE {fixedOut:G6} -> {fittedOut:G6} ({100 * (1 - (fittedOut / fixedOut)):F1}% lower); {fittedStart.Method.MethodName}"));

        // The fitter's guarantee: never worse than the fixed start over the periods both score (in sample).
        Assert.Equal(fixedStart.SumOfSquaredErrors, fixedIn, 1e-9 * fixedIn);
        Assert.True(fittedIn <= fixedIn, $"in sample: fitted start {fittedIn}, fixed start {fixedIn}");

        // Recorded when written (this code, 2026-12; DERIVED, not published values), printed by the line above:
        //   additive:                in-sample SSE 29.69 → 22.89 (22.9% lower); holdout SSE 37.76 → 50.37 (33% higher)
        //   additive, damped:        in-sample SSE 31.22 → 24.21 (22.4% lower); holdout SSE 40.67 → 51.22 (26% higher)
        //   multiplicative:          in-sample SSE 29.58 → 21.50 (27.3% lower); holdout SSE 37.96 → 47.89 (26% higher)
        // With a free start the seasonal weight falls to 0 (the start indices alone fit 1964–1992), and the seasonal swing of
        // the later years then goes unfollowed; so the fitted start alone is worse out of sample on this record, which is why
        // the tuner backtests it beside the fixed-start fit instead of replacing it (next test). Not asserted either way.
        Assert.True(fittedStart.Method is HoltWintersOptions { Start.Kind: HoltWintersStartKind.Given or HoltWintersStartKind.SeasonMeans });
    }

    [Fact]
    public void Tune_FitStartValuesOnCo2_IsNoWorseOutOfSample()
    {
        double[] co2 = s_co2.Value;

        TuningResult fixedStarts = SeriesTuner.Tune(co2, new TuningOptions(seasonLength: 12));
        TuningResult fittedStarts = SeriesTuner.Tune(co2, new TuningOptions(seasonLength: 12, fitStartValues: true));
        output.WriteLine($"fixed starts: {fixedStarts.Chosen}; with fitted starts: {fittedStarts.Chosen}");

        // Out of sample (the backtest over months 337 … 672): the fitted-start candidates are added beside the fixed-start ones,
        // so the choice can only improve or stay.
        Assert.True(fittedStarts.Chosen.Score <= fixedStarts.Chosen.Score, $"{fittedStarts.Chosen} vs {fixedStarts.Chosen}");
        Assert.Contains(fittedStarts.Ranking, c => c.Method is HoltWintersOptions { Start.Kind: HoltWintersStartKind.Given });
    }

    /// <summary>The squared one-step errors of a fresh forecaster run over the record, summed over 0-based positions from … to − 1.</summary>
    private static double SumOfSquares(double[] series, ForecasterOptions method, int from, int to)
    {
        Forecaster f = method.CreateForecaster();
        double sse = 0;
        for (int t = 0; t < to; t++)
        {
            if (t >= from)
            {
                double e = series[t] - f.Forecast(1);
                sse += e * e;
            }

            f.Update(series[t]);
        }

        return sse;
    }
}
