using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Tests.Selection;

/// <summary>Fitting Holt-Winters damped and with fitted start values (<see cref="MethodFitter.FitHoltWinters"/>).</summary>
public class StartValueFitTests
{
    /// <summary>Invented: a fleet sensor's monthly message count, level 200 rising 0.5 a month, a ±20 yearly swing, noise.</summary>
    private static double[] Sensor(int length, int seed)
    {
        var random = new Random(seed);
        var y = new double[length];
        for (int t = 0; t < length; t++)
        {
            y[t] = 200 + (0.5 * t) + (20 * Math.Cos(2 * Math.PI * t / 12)) + (8 * (random.NextDouble() - 0.5));
        }

        return y;
    }

    [Theory]
    [InlineData(Seasonality.Additive, 1)]
    [InlineData(Seasonality.Additive, 2)]
    [InlineData(Seasonality.Multiplicative, 3)]
    public void FitHoltWinters_FitStartValues_NeverWorseThanFixedStartOnItsPeriods(Seasonality seasonality, int seed)
    {
        double[] y = Sensor(96, seed);

        FittedMethod fixedStart = MethodFitter.FitHoltWinters(y, 12, seasonality);
        FittedMethod fitted = MethodFitter.FitHoltWinters(y, 12, seasonality, fitStartValues: true);

        // The fitter's guarantee, over the periods the fixed start scores (25 … 96).
        Assert.True(OneStepError.Sse(y, fitted.Method, 24) <= fixedStart.SumOfSquaredErrors * (1 + 1e-12));
        var method = Assert.IsType<HoltWintersOptions>(fitted.Method);
        if (method.Start.Kind == HoltWintersStartKind.Given)
        {
            // The fitted start is scored from period 1 and its indices are normalised (sum 0 or mean 1), as documented.
            Assert.Equal(96, fitted.ErrorCount);
            double sum = method.Start.SeasonalIndices.Sum();
            Assert.Equal(seasonality == Seasonality.Additive ? 0 : 12, sum, 1e-9);
        }
    }

    [Fact]
    public void FitHoltWinters_FitStartValuesAdditive_StartIsALeastSquaresMinimum()
    {
        // For fixed weights the one-step errors are affine in the start state, so the fitted start must be the exact
        // least-squares minimum: moving any state number (keeping the indices summing to 0) cannot lower the SSE.
        double[] y = Sensor(120, 5);
        var method = Assert.IsType<HoltWintersOptions>(MethodFitter.FitHoltWinters(y, 12, fitStartValues: true).Method);
        Assert.Equal(HoltWintersStartKind.Given, method.Start.Kind);
        double best = OneStepError.Sse(y, method, 0);
        double[] indices = [.. method.Start.SeasonalIndices];
        for (int j = 0; j < 13; j++)
        {
            foreach (double delta in (double[])[-0.01, 0.01])
            {
                double level = method.Start.Level!.Value, trend = method.Start.Trend!.Value;
                double[] moved = (double[])indices.Clone();
                if (j == 0)
                {
                    level += delta;
                }
                else if (j == 1)
                {
                    trend += delta / 100;
                }
                else
                {
                    moved[j - 2] += delta;
                    moved[11] -= delta;
                }

                var perturbed = new HoltWintersOptions(12, Seasonality.Additive, method.LevelWeight, method.TrendWeight, method.SeasonalWeight,
                    method.Damping, start: HoltWintersStart.Given(level, trend, moved));
                Assert.True(OneStepError.Sse(y, perturbed, 0) >= best * (1 - 1e-9), $"state number {j} moved by {delta}");
            }
        }
    }

    [Fact]
    public void FitHoltWinters_Damped_DampingInTheUsualRange()
    {
        double[] y = Sensor(96, 7);

        var method = Assert.IsType<HoltWintersOptions>(MethodFitter.FitHoltWinters(y, 12, damped: true).Method);

        // FPP 2nd ed. §7.4 (from memory): φ restricted to 0.8 … 0.98.
        Assert.InRange(method.Damping, MethodFitter.MinDamping, MethodFitter.MaxDamping);
        Assert.Equal(0.8, MethodFitter.MinDamping);
        Assert.Equal(0.98, MethodFitter.MaxDamping);
    }

    [Fact]
    public void TuningOptions_FitStartValues_DefaultsToFalseAndTakesPartInEquality()
    {
        Assert.False(TuningOptions.Default.FitStartValues);
        Assert.NotEqual(TuningOptions.Default, new TuningOptions(fitStartValues: true));
        Assert.Equal(new TuningOptions(fitStartValues: true), new TuningOptions(fitStartValues: true));
    }

    [Fact]
    public void Tune_FitStartValuesWithSeasons_AddsDampedAndFittedStartCandidates()
    {
        double[] y = Sensor(96, 9);

        TuningResult plain = SeriesTuner.Tune(y, new TuningOptions(seasonLength: 12));
        TuningResult fitted = SeriesTuner.Tune(y, new TuningOptions(seasonLength: 12, fitStartValues: true));

        Assert.Contains(plain.Ranking, c => c.Method is HoltWintersOptions { Damping: < 1 });
        Assert.DoesNotContain(plain.Ranking, c => c.Method is HoltWintersOptions { Start.Kind: HoltWintersStartKind.Given });
        Assert.True(fitted.Chosen.Score <= plain.Chosen.Score);
    }
}
