using StreamForecast.Forecasting;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// Fits Holt-Winters weights together with a given start state (level ℓ₀, trend b₀, m seasonal indices before the first
/// actual): the weights by the simplex search of <see cref="ParameterSearch"/>, the start state for each trial of weights by
/// <see cref="StartStateSolver"/> (least squares over every one-step error of the history, periods 1 … n).
/// </summary>
/// <remarks>
/// <para><b>Identification.</b> Adding a constant to the level and subtracting it from every additive index (or scaling the
/// level and dividing every multiplicative index) leaves the forecasts unchanged, so the fitted indices are kept normalised:
/// m − 1 are free and the last makes them sum to 0 (additive) or average 1 (multiplicative), the usual convention.</para>
/// <para><b>Seed.</b> The classical-decomposition start of the first two seasons (<see cref="HoltWintersStart.ClassicalDecomposition"/>),
/// moved back from period m to period 0 along its trend; the same seed for every trial, so the result does not depend on the
/// order the search visits points in.</para>
/// <para><b>Guarantee.</b> The result is compared with the fixed-start fit over the periods that fit scores (those after
/// the two start seasons) and the fixed-start fit is returned unless the fitted start is at least as good there.</para>
/// </remarks>
internal static class HoltWintersStartFit
{
    /// <summary>The simplex iteration limit over the weights (each trial solves a start state, so it is kept lower than a plain fit's).</summary>
    private const int MaxIterations = 300;

    public static FittedMethod Fit(
        double[] series,
        int seasonLength,
        Seasonality seasonality,
        bool damped,
        double[] lower,
        double[] upper,
        FittedMethod fixedStart)
    {
        int m = seasonLength;
        bool multiplicative = seasonality == Seasonality.Multiplicative;
        var fixedOptions = (HoltWintersOptions)fixedStart.Method;
        double[]? seed = Seed(series, fixedOptions);
        if (seed is null)
        {
            return fixedStart;
        }

        double scale = Scale(series);
        int iterations = multiplicative ? 4 : 1;
        var residuals = new GivenStartResiduals(series, m, seasonality);
        var solver = new StartStateSolver(series.Length, seed.Length);
        Func<double[], ForecasterOptions> create = weights =>
        {
            (double[] State, double Sse)? solved = solver.Solve(seed, scale, (state, errors) => residuals.TryRun(weights, damped, state, errors), iterations);
            if (solved is null)
            {
                throw new ArgumentOutOfRangeException(nameof(weights), "no start state runs over the history with these weights");
            }

            return Options(m, seasonality, weights, damped, solved.Value.State);
        };

        double[] from = Weights(fixedOptions, damped);
        FittedMethod fitted;
        try
        {
            fitted = new ParameterSearch(series, lower, upper, create, MaxIterations, passes: 1).Fit([from]);
        }
        catch (ArgumentException)
        {
            return fixedStart;
        }

        // The guarantee: never worse than the fixed-start fit over the periods that fit is scored on.
        (double sse, _) = MethodFitter.OneStepSquaredErrors(series, fitted.Method, fixedOptions.WarmUpLength);
        return sse <= fixedStart.SumOfSquaredErrors ? fitted : fixedStart;
    }

    /// <summary>
    /// The start state alone, fitted with the weights of <paramref name="fixedStart"/> kept: one least-squares solve (one
    /// linear step for additive seasonality, a few for multiplicative) from the decomposition seed, about m + 2 runs over the
    /// history per step instead of that many per trial of weights. The same guarantee as <see cref="Fit"/>: the fixed-start fit
    /// is returned unless the fitted start is at least as good over the periods that fit is scored on.
    /// </summary>
    public static FittedMethod FitAtFixedWeights(double[] series, FittedMethod fixedStart)
    {
        var fixedOptions = (HoltWintersOptions)fixedStart.Method;
        int m = fixedOptions.SeasonLength;
        bool damped = fixedOptions.Damping < 1;
        double[]? seed = Seed(series, fixedOptions);
        if (seed is null)
        {
            return fixedStart;
        }

        double[] weights = Weights(fixedOptions, damped);
        int iterations = fixedOptions.Seasonality == Seasonality.Multiplicative ? 4 : 1;
        try
        {
            var residuals = new GivenStartResiduals(series, m, fixedOptions.Seasonality);
            (double[] State, double Sse)? solved = new StartStateSolver(series.Length, seed.Length).Solve(seed, Scale(series),
                (state, errors) => residuals.TryRun(weights, damped, state, errors), iterations);
            if (solved is null)
            {
                return fixedStart;
            }

            HoltWintersOptions options = Options(m, fixedOptions.Seasonality, weights, damped, solved.Value.State);
            (double scored, _) = MethodFitter.OneStepSquaredErrors(series, options, fixedOptions.WarmUpLength);
            if (!(scored <= fixedStart.SumOfSquaredErrors))
            {
                return fixedStart;
            }

            (double sse, long count) = MethodFitter.OneStepSquaredErrors(series, options, 0);
            return new FittedMethod(options, sse, count, iterations + 2);
        }
        catch (ArgumentException)
        {
            // A start state the method refuses, or one its forecaster rejects an actual from: keep the fixed start.
            return fixedStart;
        }
    }

    /// <summary>
    /// The start and the weights refined in turn from the start fitted at fixed weights (<paramref name="atFixedWeights"/>, a
    /// <see cref="FitAtFixedWeights"/> result of <paramref name="fixedStart"/>): block-coordinate descent on the same sum of
    /// squared one-step errors (periods 1 … n) as the joint fit of <see cref="Fit"/>. One round: the weights searched with
    /// that start held (the simplex of <see cref="ParameterSearch"/>, one pass from the fixed-start weights, each trial one run
    /// over the history), then the start solved once for the new weights (<see cref="FitAtFixedWeights"/>, from the
    /// decomposition seed). The round is kept only when it lowers the error over periods 1 … n, so the result is at least as
    /// good as <paramref name="atFixedWeights"/> there, and it keeps <see cref="Fit"/>'s guarantee against <paramref name="fixedStart"/>. About a fixed-start fit's cost plus
    /// one start solve, instead of a start solve per trial of weights (benchmarks/README.md, issue 15 target 5).
    /// </summary>
    /// <returns>The refined fit; <paramref name="atFixedWeights"/> when the round does not lower its error or it has no fitted start.</returns>
    public static FittedMethod FitAlternating(double[] series, FittedMethod fixedStart, FittedMethod atFixedWeights)
    {
        var fixedOptions = (HoltWintersOptions)fixedStart.Method;
        if (atFixedWeights.Method is not HoltWintersOptions { Start.Kind: HoltWintersStartKind.Given } startOptions)
        {
            return atFixedWeights;
        }

        int m = fixedOptions.SeasonLength;
        Seasonality seasonality = fixedOptions.Seasonality;
        bool damped = fixedOptions.Damping < 1;
        HoltWintersStart start = startOptions.Start;
        var state = new double[m + 1];
        state[0] = start.Level!.Value;
        state[1] = start.Trend!.Value;
        for (int i = 0; i < m - 1; i++)
        {
            state[i + 2] = start.SeasonalIndices[i];
        }

        var residuals = new GivenStartResiduals(series, m, seasonality);
        var errors = new double[series.Length];
        double[] lower = damped ? [MethodFitter.MinLevelWeight, 0, 0, MethodFitter.MinDamping] : [MethodFitter.MinLevelWeight, 0, 0];
        double[] upper = damped ? [1, 1, 1, MethodFitter.MaxDamping] : [1, 1, 1];
        try
        {
            // The weights with the start held: each trial is one run of the equations (the forecaster's SSE bit for bit).
            var search = new ParameterSearch(series, lower, upper, weights => Options(m, seasonality, weights, damped, state), MaxIterations, passes: 1,
                tryObjective: (double[] weights, out double sse, out long count) =>
                {
                    sse = 0;
                    count = 0;
                    if (!residuals.TryRun(weights, damped, state, errors))
                    {
                        return false;
                    }

                    var sum = default(SquaredErrorSum);
                    foreach (double error in errors)
                    {
                        sum.Add(error, 0);
                    }

                    sse = sum.Value;
                    count = sum.Count;
                    return true;
                });
            var weightsFit = (HoltWintersOptions)search.Fit([Weights(startOptions, damped)]).Method;

            // The start for the new weights, from the decomposition seed as for every fitted start.
            var newWeights = new HoltWintersOptions(m, seasonality, weightsFit.LevelWeight, weightsFit.TrendWeight, weightsFit.SeasonalWeight, weightsFit.Damping);
            FittedMethod refined = FitAtFixedWeights(series, new FittedMethod(newWeights, fixedStart.SumOfSquaredErrors, fixedStart.ErrorCount, 1));
            return refined.Method is HoltWintersOptions { Start.Kind: HoltWintersStartKind.Given } && refined.SumOfSquaredErrors < atFixedWeights.SumOfSquaredErrors
                ? refined
                : atFixedWeights;
        }
        catch (ArgumentException)
        {
            // Weights the method refuses for this history: keep the start fitted at fixed weights.
            return atFixedWeights;
        }
    }

    /// <summary>The largest magnitude of the history (at least 1e-9): the solver's scale. Additive errors are affine in the start state, so one solver step is exact; multiplicative ones take a few.</summary>
    private static double Scale(double[] series)
    {
        double scale = 0;
        foreach (double y in series)
        {
            scale = Math.Max(scale, Math.Abs(y));
        }

        return Math.Max(scale, 1e-9);
    }

    private static double[] Weights(HoltWintersOptions options, bool damped) => damped
        ? [options.LevelWeight, options.TrendWeight, options.SeasonalWeight, options.Damping]
        : [options.LevelWeight, options.TrendWeight, options.SeasonalWeight];

    /// <summary>The state numbers ℓ₀, b₀, s₁ … s(m−1) of the decomposition start moved back to period 0.</summary>
    private static double[]? Seed(double[] series, HoltWintersOptions weights)
    {
        int m = weights.SeasonLength;
        var options = new HoltWintersOptions(m, weights.Seasonality, weights.LevelWeight, weights.TrendWeight, weights.SeasonalWeight,
            weights.Damping, start: HoltWintersStart.ClassicalDecomposition);
        var forecaster = new HoltWinters(options);
        try
        {
            for (int t = 0; t < 2 * m; t++)
            {
                forecaster.Update(series[t]);
            }
        }
        catch (ArgumentOutOfRangeException)
        {
            return null;
        }

        HoltWintersStartValues start = forecaster.StartValues!;
        var seed = new double[m + 1];
        double level = start.Level - (m * start.Trend);
        seed[0] = weights.Seasonality == Seasonality.Multiplicative ? Math.Max(level, 0.5 * start.Level) : level;
        seed[1] = start.Trend;
        for (int i = 0; i < m - 1; i++)
        {
            seed[i + 2] = start.SeasonalIndices[i];
        }

        return seed;
    }

    private static HoltWintersOptions Options(int m, Seasonality seasonality, double[] weights, bool damped, double[] state)
    {
        var indices = new double[m];
        double total = 0;
        for (int i = 0; i < m - 1; i++)
        {
            indices[i] = state[i + 2];
            total += indices[i];
        }

        indices[m - 1] = seasonality == Seasonality.Multiplicative ? m - total : -total;
        return new HoltWintersOptions(m, seasonality, weights[0], weights[1], weights[2], damped ? weights[3] : 1.0,
            start: HoltWintersStart.Given(state[0], state[1], indices));
    }
}
