using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Selection.Internal;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// Tuning with fitted Holt-Winters starts (<see cref="TuningOptions.FitStartValues"/>): the fixed-start fits are reused, every
/// variant gets its start fitted at its fixed weights, and only the leading variant a round of weights refined with that start
/// held and the start solved again (<see cref="HoltWintersStartFit.FitAlternating"/>).
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
    [InlineData(Seasonality.Additive, false, 1)]
    [InlineData(Seasonality.Additive, true, 2)]
    [InlineData(Seasonality.Multiplicative, false, 3)]
    [InlineData(Seasonality.Multiplicative, true, 4)]
    public void GivenStartResiduals_FittedStart_EqualsTheForecastersErrorsBitForBit(Seasonality seasonality, bool damped, int seed)
    {
        double[] y = Orders(seed);
        FittedMethod fixedStart = MethodFitter.FitHoltWinters(y, 13, seasonality, damped);
        var options = Assert.IsType<HoltWintersOptions>(HoltWintersStartFit.FitAtFixedWeights(y, fixedStart).Method);
        Assert.Equal(HoltWintersStartKind.Given, options.Start.Kind);
        double[] weights = damped
            ? [options.LevelWeight, options.TrendWeight, options.SeasonalWeight, options.Damping]
            : [options.LevelWeight, options.TrendWeight, options.SeasonalWeight];
        var state = new double[14];
        state[0] = options.Start.Level!.Value;
        state[1] = options.Start.Trend!.Value;
        for (int i = 0; i < 12; i++)
        {
            state[i + 2] = options.Start.SeasonalIndices[i];
        }

        var errors = new double[y.Length];
        Assert.True(new GivenStartResiduals(y, 13, seasonality).TryRun(weights, damped, state, errors));

        // The forecaster of the same options, run period by period: every error identical.
        Forecaster forecaster = options.CreateForecaster();
        for (int t = 0; t < y.Length; t++)
        {
            Assert.True(forecaster.TryForecast(1, out double forecast));
            Assert.Equal(BitConverter.DoubleToInt64Bits(y[t] - forecast), BitConverter.DoubleToInt64Bits(errors[t]));
            forecaster.Update(y[t]);
        }
    }

    [Fact]
    public void GivenStartResiduals_StateTheOptionsRefuse_Fails()
    {
        double[] y = Orders(6);
        var errors = new double[y.Length];
        var state = new double[14];
        state[0] = 120;
        state[2] = 1;
        var multiplicative = new GivenStartResiduals(y, 13, Seasonality.Multiplicative);

        // Indices 1 … 12 give a last index of 13 − 1 = 12 with the rest 0: HoltWintersOptions refuses a multiplicative index of 0.
        Assert.Throws<ArgumentException>(() => new HoltWintersOptions(13, Seasonality.Multiplicative, 0.3, 0.1, 0.2,
            start: HoltWintersStart.Given(120, 0, [1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 12])));
        Assert.False(multiplicative.TryRun([0.3, 0.1, 0.2], false, state, errors));

        // A level beyond NumericDomain.MaxMagnitude, and a weight out of range, fail for additive seasonality as well.
        var additive = new GivenStartResiduals(y, 13, Seasonality.Additive);
        state[0] = 2e15;
        Assert.False(additive.TryRun([0.3, 0.1, 0.2], false, state, errors));
        state[0] = 120;
        Assert.True(additive.TryRun([0.3, 0.1, 0.2], false, state, errors));
        Assert.False(additive.TryRun([0.3, 1.5, 0.2], false, state, errors));
    }

    [Theory]
    [InlineData(Seasonality.Additive, false, 7)]
    [InlineData(Seasonality.Additive, true, 8)]
    [InlineData(Seasonality.Multiplicative, false, 9)]
    [InlineData(Seasonality.Multiplicative, true, 10)]
    public void FitAlternating_SeasonalHistory_NeverWorseThanTheStartAtFixedWeightsNorTheFixedStart(Seasonality seasonality, bool damped, int seed)
    {
        double[] y = Orders(seed);
        FittedMethod fixedStart = MethodFitter.FitHoltWinters(y, 13, seasonality, damped);
        FittedMethod atFixedWeights = HoltWintersStartFit.FitAtFixedWeights(y, fixedStart);

        FittedMethod refined = HoltWintersStartFit.FitAlternating(y, fixedStart, atFixedWeights);

        // Block-coordinate descent on the error over periods 1 … n: the round is kept only when it lowers it.
        var options = Assert.IsType<HoltWintersOptions>(refined.Method);
        if (atFixedWeights.Method is not HoltWintersOptions { Start.Kind: HoltWintersStartKind.Given })
        {
            Assert.Same(atFixedWeights, refined);
            return;
        }

        Assert.Equal(HoltWintersStartKind.Given, options.Start.Kind);
        Assert.True(refined.SumOfSquaredErrors <= atFixedWeights.SumOfSquaredErrors, $"{refined} vs {atFixedWeights}");
        Assert.Equal(OneStepError.Sse(y, options, 0), refined.SumOfSquaredErrors, 1e-9 * refined.SumOfSquaredErrors);

        // The fixed-start guarantee: no worse over the periods the fixed-start fit is scored on.
        Assert.True(OneStepError.Sse(y, options, 26) <= fixedStart.SumOfSquaredErrors * (1 + 1e-12), $"{refined} vs {fixedStart}");
    }

    [Fact]
    public void FitAlternating_FixedStartKept_ReturnsItUnchanged()
    {
        double[] y = Orders(3);
        FittedMethod fixedStart = MethodFitter.FitHoltWinters(y, 13);

        // Nothing to alternate from when the start at fixed weights was not kept.
        Assert.Same(fixedStart, HoltWintersStartFit.FitAlternating(y, fixedStart, fixedStart));
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
    public void Tune_FitStartValues_NewWeightsForTheLeadingVariantOnlyAndNeverWorseThanWithout(int seed)
    {
        double[] y = Orders(seed);
        var plainOptions = new TuningOptions(seasonLength: 13);

        TuningResult plain = SeriesTuner.Tune(y, plainOptions);
        TuningResult fitted = SeriesTuner.Tune(y, new TuningOptions(seasonLength: 13, fitStartValues: true));

        var fixedStarts = fitted.Ranking.Select(c => c.Method).OfType<HoltWintersOptions>().Where(o => o.Start.Kind != HoltWintersStartKind.Given).ToList();
        var givenStarts = fitted.Ranking.Select(c => c.Method).OfType<HoltWintersOptions>().Where(o => o.Start.Kind == HoltWintersStartKind.Given).ToList();
        Assert.Equal(4, fixedStarts.Count); // additive, multiplicative, each undamped and damped
        Assert.NotEmpty(givenStarts);

        // Starts fitted at fixed weights share a fixed-start candidate's weights; the leading variant's refinement (new weights) is made once at most.
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
