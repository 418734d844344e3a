using System.Globalization;
using MathNet.Numerics.LinearAlgebra;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;

namespace StreamForecast.Selection;

/// <summary>
/// Fits the parameters of the library's forecasting methods to a history by minimising the sum of squared one-step
/// errors of the method's own forecaster run over it.
/// </summary>
/// <remarks>
/// <para><b>Objective.</b> The one-step errors are those a live forecaster makes: each actual is compared with the
/// forecast made before it, from the first period the forecaster is warm. Every trial point runs a fresh forecaster
/// from the options under trial over the whole window, so the fitted numbers and the live numbers cannot differ.</para>
/// <para><b>Optimisers.</b> Smoothing weights: MathNet.Numerics' Nelder–Mead simplex (<c>NelderMeadSimplex</c>) over
/// logistic-transformed parameters, from the best point of a small grid, with one restart (see each method for its
/// bounds). Weighted moving-average weights: the exact constrained least-squares solution (non-negative, summing to 1)
/// by a primal active-set method whose linear systems MathNet's LU decomposition solves (MathNet has no
/// non-negative least-squares routine). Moving-average length: an exhaustive search.</para>
/// <para><b>Cost.</b> O(n) per objective evaluation; a smoothing fit takes a few hundred evaluations.</para>
/// <para><b>Thread safety.</b> All members are static and thread-safe.</para>
/// </remarks>
public static class MethodFitter
{
    /// <summary>The smallest level weight α a fit returns (smaller values barely move the level).</summary>
    public const double MinLevelWeight = 0.0001;

    /// <summary>
    /// The smallest damping φ a damped-trend fit returns (Holt and Holt-Winters): 0.8. Hyndman &amp; Athanasopoulos,
    /// <i>Forecasting: Principles and Practice</i> (2nd ed., §7.4, from memory): "in practice, φ is rarely less than 0.8 as the
    /// damping has a very strong effect for smaller values", and values near 1 cannot be told from an undamped trend, so
    /// φ is restricted to 0.8–0.98.
    /// </summary>
    public const double MinDamping = 0.8;

    /// <summary>The largest damping φ a damped-trend fit returns (Holt and Holt-Winters): 0.98 (same source as <see cref="MinDamping"/>).</summary>
    public const double MaxDamping = 0.98;

    /// <summary>The largest first-order error adjustment λ <see cref="FitTwoSeasonHoltWinters"/> returns.</summary>
    public const double MaxErrorAdjustment = 0.95;

    /// <summary>The longest weighted moving average <see cref="FitWeightedMovingAverage"/> fits.</summary>
    public const int MaxWeightedLength = 200;

    private static readonly double[] s_levelGrid = [0.02, 0.05, 0.1, 0.2, 0.3, 0.5, 0.7, 0.9, 1.0];

    /// <summary>Scores a method as it is: the sum of its one-step squared errors over the history.</summary>
    /// <param name="series">The history, oldest first; every value finite.</param>
    /// <param name="method">The method.</param>
    /// <returns>The method with its SSE (<see cref="FittedMethod.Evaluations"/> is 1).</returns>
    /// <exception cref="ArgumentNullException"><paramref name="method"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value is not finite, or the method rejects one.</exception>
    public static FittedMethod Score(ReadOnlySpan<double> series, ForecasterOptions method)
    {
        ArgumentNullException.ThrowIfNull(method);
        SelectionThrowHelper.CheckFinite(series, nameof(series));
        (double sse, long count) = OneStepSquaredErrors(series, method, 0);
        return new FittedMethod(method, sse, count, 1);
    }

    /// <summary>
    /// Finds the moving-average length n in [<paramref name="minLength"/>, <paramref name="maxLength"/>] with the smallest
    /// one-step SSE. Every length is scored over the same periods, those after the first <paramref name="maxLength"/>
    /// actuals, so that shorter windows do not gain from scoring extra early periods. Ties go to the shorter window.
    /// </summary>
    /// <param name="series">The history, oldest first; every value finite, more than <paramref name="maxLength"/> + 1 of them.</param>
    /// <param name="minLength">The shortest window, 1 or more.</param>
    /// <param name="maxLength">The longest window, at least <paramref name="minLength"/>.</param>
    /// <returns>The best length with its SSE over the common periods.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A length is out of range, or a value is not finite.</exception>
    /// <exception cref="ArgumentException">The history is too short to score two periods after <paramref name="maxLength"/>.</exception>
    public static FittedMethod SearchMovingAverage(ReadOnlySpan<double> series, int minLength, int maxLength)
    {
        if (minLength < 1 || minLength > MovingAverageOptions.MaxLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(minLength), minLength, "the shortest window must be between 1 and 1,000,000 periods");
        }

        if (maxLength < minLength || maxLength > MovingAverageOptions.MaxLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(maxLength), maxLength, "the longest window must be at least the shortest and at most 1,000,000 periods");
        }

        SelectionThrowHelper.CheckFinite(series, nameof(series));
        if (series.Length < maxLength + 2)
        {
            SelectionThrowHelper.ThrowArgument(nameof(series), string.Create(CultureInfo.InvariantCulture,
                $"The history has {series.Length} actuals; searching windows up to {maxLength} needs at least {maxLength + 2}."));
        }

        FittedMethod? best = null;
        for (int length = minLength; length <= maxLength; length++)
        {
            var options = new MovingAverageOptions(length);
            (double sse, long count) = OneStepSquaredErrors(series, options, maxLength);
            if (best is null || sse < best.SumOfSquaredErrors)
            {
                best = new FittedMethod(options, sse, count, maxLength - minLength + 1);
            }
        }

        return best!;
    }

    /// <summary>
    /// Fits the weights of a <paramref name="length"/>-period weighted moving average by least squares on the one-step
    /// errors, with every weight non-negative and the weights summing to 1 (the most recent period may get the largest
    /// weight but need not).
    /// </summary>
    /// <param name="series">The history, oldest first; every value finite, at least 2·<paramref name="length"/> + 2 of them.</param>
    /// <param name="length">The window length k, 1 to <see cref="MaxWeightedLength"/>.</param>
    /// <returns>
    /// <see cref="WeightedMovingAverageOptions"/> with the fitted weights (most recent first, rounded to four decimals) and the
    /// SSE of that forecaster over the history.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="length"/> is out of range, or a value is not finite.</exception>
    /// <exception cref="ArgumentException">The history is too short.</exception>
    /// <remarks>
    /// The problem is min ‖y − Xw‖² over w ≥ 0, Σw = 1, where row t of X holds y(t−1) … y(t−k) and the target is y(t), for
    /// every t after the first k periods (exactly the periods the forecaster scores). G = XᵀX and c = Xᵀy are formed with
    /// MathNet.Numerics; the constrained minimum is found by a primal active-set method (Nocedal &amp; Wright, Numerical
    /// Optimization, Algorithm 16.3, from memory) whose KKT systems MathNet's LU decomposition solves. O(n·k² + k³).
    /// </remarks>
    public static FittedMethod FitWeightedMovingAverage(ReadOnlySpan<double> series, int length)
    {
        if (length is < 1 or > MaxWeightedLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(length), length, "the weighted window must be between 1 and 200 periods");
        }

        SelectionThrowHelper.CheckFinite(series, nameof(series));
        int rows = series.Length - length;
        if (rows < length + 2)
        {
            SelectionThrowHelper.ThrowArgument(nameof(series), string.Create(CultureInfo.InvariantCulture,
                $"The history has {series.Length} actuals; fitting {length} weights needs at least {(2 * length) + 2}."));
        }

        Matrix<double> x = Matrix<double>.Build.Dense(rows, length);
        Vector<double> y = Vector<double>.Build.Dense(rows);
        for (int r = 0; r < rows; r++)
        {
            int t = length + r;
            y[r] = series[t];
            for (int i = 0; i < length; i++)
            {
                x[r, i] = series[t - 1 - i];
            }
        }

        double[] weights = SimplexLeastSquares.Solve(x.TransposeThisAndMultiply(x), x.TransposeThisAndMultiply(y));
        var rounded = new double[length];
        double total = 0;
        for (int i = 0; i < length; i++)
        {
            rounded[i] = Math.Round(weights[i], 4, MidpointRounding.ToEven);
            total += rounded[i];
        }

        var options = new WeightedMovingAverageOptions(total > 0 ? rounded : weights);
        (double sse, long count) = OneStepSquaredErrors(series, options, 0);
        return new FittedMethod(options, sse, count, 1);
    }

    /// <summary>
    /// Fits the smoothing weight α of single exponential smoothing, α in [<see cref="MinLevelWeight"/>, 1], by minimising the
    /// one-step SSE (Nelder–Mead from the best of a grid; see <see cref="MethodFitter"/>).
    /// </summary>
    /// <param name="series">The history, oldest first; every value finite; at least three one-step errors after the warm-up.</param>
    /// <param name="start">The start rule, kept as given; default <see cref="LevelStart.FirstActual"/>.</param>
    /// <returns>The fitted options and their SSE.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A value is not finite.</exception>
    /// <exception cref="ArgumentException">The history is too short.</exception>
    public static FittedMethod FitExponentialSmoothing(ReadOnlySpan<double> series, LevelStart start = default)
    {
        SelectionThrowHelper.CheckFinite(series, nameof(series));
        CheckErrors(series.Length, start.WarmUpLength, 1);
        var search = new ParameterSearch(series.ToArray(), [MinLevelWeight], [1.0], p => new ExponentialSmoothingOptions(p[0], start));
        var grid = new List<double[]>(s_levelGrid.Length);
        foreach (double alpha in s_levelGrid)
        {
            grid.Add([alpha]);
        }

        return search.Fit(grid);
    }

    /// <summary>
    /// Fits Holt's linear trend method: the level weight α in [<see cref="MinLevelWeight"/>, 1] and the trend weight in
    /// [0, 1], and with <paramref name="damped"/> the damping φ in [<see cref="MinDamping"/>, <see cref="MaxDamping"/>].
    /// </summary>
    /// <param name="series">The history, oldest first; every value finite; enough one-step errors after the warm-up (two more than parameters).</param>
    /// <param name="damped">Whether to fit a damped trend; false (the default) keeps φ = 1.</param>
    /// <param name="start">The start rule, kept as given; default <see cref="HoltStart.FirstTwoActuals"/>.</param>
    /// <returns>The fitted options and their SSE.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A value is not finite.</exception>
    /// <exception cref="ArgumentException">The history is too short.</exception>
    public static FittedMethod FitHolt(ReadOnlySpan<double> series, bool damped = false, HoltStart start = default)
    {
        SelectionThrowHelper.CheckFinite(series, nameof(series));
        CheckErrors(series.Length, start.WarmUpLength, damped ? 3 : 2);
        double[] lower = damped ? [MinLevelWeight, 0, MinDamping] : [MinLevelWeight, 0];
        double[] upper = damped ? [1, 1, MaxDamping] : [1, 1];
        double[] history = series.ToArray();

        // With the default start each trial runs the forecaster's own equations (HoltEquations) without creating options or a
        // forecaster: the same SSE bit for bit; the forecaster runs for the other starts and where the equations decline.
        HoltObjective? objective = start.Kind == HoltStartKind.FirstTwoActuals ? new HoltObjective(history) : null;
        var search = new ParameterSearch(history, lower, upper,
            p => new HoltOptions(p[0], p[1], damped ? p[2] : 1.0, start),
            tryObjective: objective is null ? null : (double[] p, out double sse, out long count) =>
                objective.TrySumOfSquaredErrors(p[0], p[1], damped ? p[2] : 1.0, out sse, out count));
        var grid = new List<double[]>();
        foreach (double alpha in (double[])[0.1, 0.3, 0.5, 0.8])
        {
            foreach (double beta in (double[])[0.01, 0.1, 0.3])
            {
                grid.Add(damped ? [alpha, beta, 0.9] : [alpha, beta]);
            }
        }

        return search.Fit(grid);
    }

    /// <summary>
    /// Fits the Holt-Winters method: the level weight α in [<see cref="MinLevelWeight"/>, 1], the trend weight and the seasonal
    /// weight in [0, 1], with <paramref name="damped"/> the damping φ in [<see cref="MinDamping"/>, <see cref="MaxDamping"/>], and
    /// with <paramref name="fitStartValues"/> the start level, trend and seasonal indices as well.
    /// </summary>
    /// <param name="series">The history, oldest first; every value finite (and, for multiplicative seasonality, zero or more); more than two seasons plus five periods.</param>
    /// <param name="seasonLength">The season length m, 2 or more.</param>
    /// <param name="seasonality">Additive (the default) or multiplicative.</param>
    /// <param name="damped">Whether to fit a damped trend; false (the default) keeps φ = 1.</param>
    /// <param name="fitStartValues">
    /// False (the default): the start comes from the first two seasons (<see cref="HoltWintersStart.SeasonMeans"/>) and the
    /// errors are scored from period 2m + 1 on. True: the start state is estimated with the weights (the usual state-space
    /// practice of treating the initial states as parameters), by least squares over every one-step error from period 1 on,
    /// seeded from the classical decomposition of the first two seasons; the result is a <see cref="HoltWintersStart.Given"/>
    /// start with indices normalised to sum to 0 or average 1. It is returned only when it is at least as good as the
    /// fixed-start fit over the periods that fit scores (from 2m + 1 on); otherwise the fixed-start fit is returned, so
    /// fitting the start is never worse on the fitting window. Costs about m + 2 runs over the history per trial of weights
    /// (several times more for multiplicative seasonality), instead of one.
    /// </param>
    /// <returns>
    /// The fitted options and their SSE (over periods 2m + 1 … n for a computed start, 1 … n for a fitted one; see
    /// <see cref="FittedMethod.ErrorCount"/>).
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="seasonLength"/> is out of range, or a value is not finite.</exception>
    /// <exception cref="ArgumentException">The history is too short, or the method rejects it for every parameter tried.</exception>
    public static FittedMethod FitHoltWinters(
        ReadOnlySpan<double> series,
        int seasonLength,
        Seasonality seasonality = Seasonality.Additive,
        bool damped = false,
        bool fitStartValues = false)
    {
        if (seasonLength is < 2 or > HoltWintersOptions.MaxSeasonLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the season length must be between 2 and 100,000 periods");
        }

        SelectionThrowHelper.CheckFinite(series, nameof(series));
        CheckErrors(series.Length, 2 * seasonLength, damped ? 4 : 3);
        double[] history = series.ToArray();
        double[] lower = damped ? [MinLevelWeight, 0, 0, MinDamping] : [MinLevelWeight, 0, 0];
        double[] upper = damped ? [1, 1, 1, MaxDamping] : [1, 1, 1];
        // Each trial runs the forecaster's own equations (HoltWintersEquations) without creating options or a forecaster:
        // the same SSE bit for bit at a fraction of the cost; the forecaster runs where those would decline.
        var objective = new HoltWintersObjective(history, seasonLength, seasonality);
        var search = new ParameterSearch(history, lower, upper,
            p => new HoltWintersOptions(seasonLength, seasonality, p[0], p[1], p[2], damped ? p[3] : 1.0),
            tryObjective: (double[] p, out double sse, out long count) =>
                objective.TrySumOfSquaredErrors(p[0], p[1], p[2], damped ? p[3] : 1.0, out sse, out count));
        var grid = new List<double[]>();
        foreach (double alpha in (double[])[0.1, 0.3, 0.6])
        {
            foreach (double beta in (double[])[0.01, 0.1])
            {
                foreach (double gamma in (double[])[0.05, 0.2, 0.5])
                {
                    grid.Add(damped ? [alpha, beta, gamma, 0.9] : [alpha, beta, gamma]);
                }
            }
        }

        FittedMethod fixedStart = search.Fit(grid);
        return fitStartValues
            ? HoltWintersStartFit.Fit(history, seasonLength, seasonality, damped, lower, upper, fixedStart)
            : fixedStart;
    }

    /// <summary>
    /// Fits Holt-Winters with two seasonal cycles (<see cref="TwoSeasonHoltWintersOptions"/>) without a trend component: the
    /// level weight α in [<see cref="MinLevelWeight"/>, 1], the two cycle weights in [0, 1] and the first-order error
    /// adjustment λ in [0, <see cref="MaxErrorAdjustment"/>].
    /// </summary>
    /// <param name="series">The history, oldest first; every value finite (and, for multiplicative seasonality, zero or more); more than two long cycles plus six periods.</param>
    /// <param name="shortCycle">The short cycle m₁ (the day, in periods), 2 or more.</param>
    /// <param name="longCycle">The long cycle m₂ (the week, in periods), above m₁ and at most <see cref="HoltWintersOptions.MaxSeasonLength"/>.</param>
    /// <param name="seasonality">Additive (the default) or multiplicative.</param>
    /// <returns>The fitted options and their SSE.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A cycle length is out of range, or a value is not finite.</exception>
    /// <exception cref="ArgumentException">The history is too short, or the method rejects it for every parameter tried.</exception>
    /// <remarks>
    /// No trend: over the few weeks an intraday history covers, the level follows slow changes, and leaving the trend out
    /// keeps the fit to four parameters. The error adjustment's lower bound of 0 keeps the usual positive error correlation of
    /// intraday series (common practice); a caller wanting a trend or a negative λ scores its own options with <see cref="Score"/>.
    /// </remarks>
    public static FittedMethod FitTwoSeasonHoltWinters(ReadOnlySpan<double> series, int shortCycle, int longCycle, Seasonality seasonality = Seasonality.Additive)
    {
        if (shortCycle < 2 || longCycle <= shortCycle || longCycle > HoltWintersOptions.MaxSeasonLength)
        {
            SelectionThrowHelper.ThrowOutOfRange(nameof(longCycle), longCycle, "the cycles must satisfy 2 ≤ short cycle < long cycle ≤ 100,000 periods");
        }

        SelectionThrowHelper.CheckFinite(series, nameof(series));
        CheckErrors(series.Length, 2 * longCycle, 4);
        var search = new ParameterSearch(series.ToArray(), [MinLevelWeight, 0, 0, 0], [1, 1, 1, MaxErrorAdjustment],
            p => new TwoSeasonHoltWintersOptions(shortCycle, longCycle, seasonality, p[0], null, p[1], p[2], p[3]));
        var grid = new List<double[]>();
        foreach (double alpha in (double[])[0.05, 0.2, 0.5])
        {
            foreach (double cycle in (double[])[0.05, 0.2])
            {
                foreach (double adjust in (double[])[0, 0.5])
                {
                    grid.Add([alpha, cycle, cycle, adjust]);
                }
            }
        }

        return search.Fit(grid);
    }

    /// <summary>
    /// Runs a fresh forecaster of <paramref name="method"/> over <paramref name="series"/> and sums the squared one-step
    /// errors of the periods at 0-based positions ≥ <paramref name="firstScored"/> that had a forecast.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">The forecaster rejects an actual.</exception>
    internal static (double Sse, long Count) OneStepSquaredErrors(ReadOnlySpan<double> series, ForecasterOptions method, int firstScored)
    {
        Forecaster forecaster = method.CreateForecaster();
        var sum = default(SquaredErrorSum);
        for (int t = 0; t < series.Length; t++)
        {
            double actual = series[t];
            if (t >= firstScored && forecaster.TryForecast(1, out double forecast))
            {
                sum.Add(actual, forecast);
            }

            forecaster.Update(actual);
        }

        return (sum.Value, sum.Count);
    }

    private static void CheckErrors(int length, int warmUp, int parameters)
    {
        int needed = warmUp + parameters + 2;
        if (length < needed)
        {
            SelectionThrowHelper.ThrowArgument("series", string.Create(CultureInfo.InvariantCulture,
                $"The history has {length} actuals; fitting {parameters} parameter(s) after a warm-up of {warmUp} needs at least {needed}."));
        }
    }
}
