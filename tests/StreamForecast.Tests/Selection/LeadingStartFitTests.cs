using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Selection.Internal;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Tuning with fitted Holt-Winters starts (<see cref="TuningOptions.FitStartValues"/>): the fixed-start fits are reused, every
/// variant gets its start fitted at its fixed weights, and only the leading variant the joint fit of start and weights.
/// Behaviour tests on invented data (the CO2 checks against published numbers are in <see cref="Co2StartFitTests"/>).
/// </summary>
public class LeadingStartFitTests
{
    /// <summary>Invented: a bakery's weekly flour orders over two and a half years, level 120 rising, a ±15 yearly swing, noise.</summary>
    private static double[] Orders(int seed)
    {
        var random = new Random(seed);
        var y = new double[130];
        for (int t = 0; t < y.Length; t++)
        {
            y[t] = 120 + (0.2 * t) + (15 * Math.Sin(2 * Math.PI * t / 13)) + (6 * (random.NextDouble() - 0.5));
        }

        return y;
    }

    private static bool SameWeights(HoltWintersOptions a, HoltWintersOptions b) =>
        a.Seasonality == b.Seasonality && a.LevelWeight == b.LevelWeight && a.TrendWeight == b.TrendWeight
        && a.SeasonalWeight == b.SeasonalWeight && a.Damping == b.Damping;

    [Theory]
    [InlineData(Seasonality.Additive, false)]
    [InlineData(Seasonality.Additive, true)]
    [InlineData(Seasonality.Multiplicative, false)]
    public void RefineHoltWintersStart_FromFixedStartFit_EqualsFittingWithStartValues(Seasonality seasonality, bool damped)
    {
        double[] y = Orders(5);

        FittedMethod fixedStart = MethodFitter.FitHoltWinters(y, 13, seasonality, damped);
        FittedMethod refined = MethodFitter.RefineHoltWintersStart(y, fixedStart);
        FittedMethod direct = MethodFitter.FitHoltWinters(y, 13, seasonality, damped, fitStartValues: true);

        Assert.Equal(direct.Method, refined.Method);
        Assert.Equal(direct.SumOfSquaredErrors, refined.SumOfSquaredErrors);
        Assert.Equal(direct.ErrorCount, refined.ErrorCount);
    }

    [Theory]
    [InlineData(Seasonality.Additive, false, 1)]
    [InlineData(Seasonality.Additive, true, 2)]
    [InlineData(Seasonality.Multiplicative, false, 3)]
    [InlineData(Seasonality.Multiplicative, true, 4)]
    public void FitAtFixedWeights_SeasonalHistory_KeepsWeightsAndIsNeverWorseOnFixedStartPeriods(Seasonality seasonality, bool damped, int seed)
    {
        double[] y = Orders(seed);
        FittedMethod fixedStart = MethodFitter.FitHoltWinters(y, 13, seasonality, damped);

        FittedMethod refined = HoltWintersStartFit.FitAtFixedWeights(y, fixedStart);

        var fixedOptions = Assert.IsType<HoltWintersOptions>(fixedStart.Method);
        var options = Assert.IsType<HoltWintersOptions>(refined.Method);
        Assert.True(SameWeights(fixedOptions, options));
        Assert.True(OneStepError.Sse(y, options, 26) <= fixedStart.SumOfSquaredErrors * (1 + 1e-12), $"{refined} vs {fixedStart}");
        if (options.Start.Kind == HoltWintersStartKind.Given)
        {
            // A given start is scored from period 1, like the joint fit's.
            Assert.Equal(y.Length, refined.ErrorCount);
            Assert.Equal(OneStepError.Sse(y, options, 0), refined.SumOfSquaredErrors, 1e-9 * refined.SumOfSquaredErrors);
        }
    }

    [Theory]
    [InlineData(11)]
    [InlineData(12)]
    public void Tune_FitStartValues_JointFitForTheLeadingVariantOnlyAndNeverWorseThanWithout(int seed)
    {
        double[] y = Orders(seed);
        var plainOptions = new TuningOptions(seasonLength: 13);

        TuningResult plain = SeriesTuner.Tune(y, plainOptions);
        TuningResult fitted = SeriesTuner.Tune(y, new TuningOptions(seasonLength: 13, fitStartValues: true));

        var fixedStarts = fitted.Ranking.Select(c => c.Method).OfType<HoltWintersOptions>().Where(o => o.Start.Kind != HoltWintersStartKind.Given).ToList();
        var givenStarts = fitted.Ranking.Select(c => c.Method).OfType<HoltWintersOptions>().Where(o => o.Start.Kind == HoltWintersStartKind.Given).ToList();
        Assert.Equal(4, fixedStarts.Count); // additive, multiplicative, each undamped and damped
        Assert.NotEmpty(givenStarts);

        // Starts fitted at fixed weights share a fixed-start candidate's weights; a joint fit (new weights) is made once at most.
        Assert.True(givenStarts.Count(g => !fixedStarts.Any(f => SameWeights(f, g))) <= 1);

        // Every candidate of the plain run is still there, so the choice is never worse in the backtest.
        Assert.All(plain.Ranking, c => Assert.Contains(fitted.Ranking, d => d.Method.Equals(c.Method)));
        Assert.True(fitted.Chosen.Score <= plain.Chosen.Score);
    }

    [Fact]
    public void Tune_FitStartValuesOnTinyValuesWithRareSpikes_ChoosesAScoredCandidateWithoutThrowing()
    {
        // Hostile for the start solvers: positive actuals near zero (multiplicative states close to the floor) and spikes
        // six orders of magnitude larger once a season.
        var random = new Random(21);
        var y = new double[130];
        for (int t = 0; t < y.Length; t++)
        {
            y[t] = t % 13 == 5 ? 1e6 * (1 + random.NextDouble()) : 1e-6 * (1 + random.NextDouble());
        }

        TuningResult result = SeriesTuner.Tune(y, new TuningOptions(seasonLength: 13, fitStartValues: true));

        Assert.True(result.Chosen.IsComplete);
        Assert.True(double.IsFinite(result.Chosen.Score));
    }
}
