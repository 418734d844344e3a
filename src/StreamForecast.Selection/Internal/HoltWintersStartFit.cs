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

        double scale = 0;
        foreach (double y in series)
        {
            scale = Math.Max(scale, Math.Abs(y));
        }

        scale = Math.Max(scale, 1e-9);
        // Additive: the errors are affine in the start state, so one step is exact. Multiplicative: a few.
        int iterations = multiplicative ? 4 : 1;
        Func<double[], ForecasterOptions> create = weights =>
        {
            (double[] State, double Sse)? solved = StartStateSolver.Solve(series, seed, scale, state => Options(m, seasonality, weights, damped, state), iterations);
            if (solved is null)
            {
                throw new ArgumentOutOfRangeException(nameof(weights), "no start state runs over the history with these weights");
            }

            return Options(m, seasonality, weights, damped, solved.Value.State);
        };

        double[] from = damped
            ? [fixedOptions.LevelWeight, fixedOptions.TrendWeight, fixedOptions.SeasonalWeight, fixedOptions.Damping]
            : [fixedOptions.LevelWeight, fixedOptions.TrendWeight, fixedOptions.SeasonalWeight];
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
