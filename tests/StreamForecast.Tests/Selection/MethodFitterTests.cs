using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Selection;

public class MethodFitterTests
{
    /// <summary>Plain SES one-step SSE with the NIST start (first forecast = first actual), written from NIST §6.4.3.1.</summary>
    private static double PlainSesSse(double[] y, double alpha)
    {
        double forecast = y[0];
        double sse = 0;
        for (int t = 1; t < y.Length; t++)
        {
            double e = y[t] - forecast;
            sse += e * e;
            forecast += alpha * e;
        }

        return sse;
    }

    /// <summary>Plain weighted-moving-average one-step SSE (weights most recent first, divided by their sum).</summary>
    private static double PlainWeightedSse(double[] y, double[] weights)
    {
        double total = weights.Sum();
        double sse = 0;
        for (int t = weights.Length; t < y.Length; t++)
        {
            double forecast = 0;
            for (int i = 0; i < weights.Length; i++)
            {
                forecast += weights[i] * y[t - 1 - i];
            }

            double e = y[t] - (forecast / total);
            sse += e * e;
        }

        return sse;
    }

    [Fact]
    public void FitExponentialSmoothing_LocalLevelProcess_RecoversAlpha()
    {
        // SES is the optimal predictor of the local-level process with the same α (Muth 1960; Hyndman et al. 2008, ETS(A,N,N),
        // from memory). 2,000 periods, α = 0.3: across seeds the estimate lands within ±0.02; asserted within ±0.05.
        double[] y = SelectionTestData.LocalLevel(2000, 0.3, 1.0, seed: 1);
        var fitted = (ExponentialSmoothingOptions)MethodFitter.FitExponentialSmoothing(y).Method;
        Assert.InRange(fitted.Alpha, 0.25, 0.35);
    }

    [Fact]
    public void FitExponentialSmoothing_NistSmoothingSeries_NoWorseThanAFineGridOfAlpha()
    {
        // Oracle: a plain grid search over α = 0.001, 0.002, …, 1 of the plain SES recursion on the NIST §6.4.3.1 data (S1).
        double[] y = ReferenceData.NistSmoothing;
        double best = double.PositiveInfinity;
        for (int i = 1; i <= 1000; i++)
        {
            best = Math.Min(best, PlainSesSse(y, i / 1000.0));
        }

        FittedMethod fit = MethodFitter.FitExponentialSmoothing(y);
        var alpha = ((ExponentialSmoothingOptions)fit.Method).Alpha;
        Assert.True(fit.SumOfSquaredErrors <= best * (1 + 1e-6), $"fitted SSE {fit.SumOfSquaredErrors} vs grid {best}");
        Assert.Equal(PlainSesSse(y, alpha), fit.SumOfSquaredErrors, 1e-9);
        Assert.Equal(11, fit.ErrorCount);
    }

    [Fact]
    public void FitHolt_LocalTrendProcess_RecoversWeights()
    {
        // Holt's method is the optimal predictor of the local linear trend process (ETS(A,A,N), from memory). 3,000 periods,
        // α = 0.5 and trend weight 0.2: across seeds the estimates land within ±0.03; asserted within ±0.06.
        double[] y = SelectionTestData.LocalTrend(3000, 0.5, 0.2, 1.0, seed: 2);
        var fitted = (HoltOptions)MethodFitter.FitHolt(y).Method;
        Assert.InRange(fitted.LevelWeight, 0.44, 0.56);
        Assert.InRange(fitted.TrendWeight, 0.14, 0.26);
        Assert.Equal(1.0, fitted.Damping);
    }

    [Fact]
    public void FitHolt_Damped_KeepsDampingInsideTheUsualRange()
    {
        double[] y = SelectionTestData.LocalTrend(500, 0.5, 0.2, 1.0, seed: 3);
        FittedMethod damped = MethodFitter.FitHolt(y, damped: true);
        var fitted = (HoltOptions)damped.Method;
        Assert.InRange(fitted.Damping, MethodFitter.MinDamping, MethodFitter.MaxDamping);
        FittedMethod undamped = MethodFitter.FitHolt(y);

        // Each fit is at least as good as the true weights with the damping its family allows.
        Assert.True(undamped.SumOfSquaredErrors <= MethodFitter.Score(y, new HoltOptions(0.5, 0.2)).SumOfSquaredErrors);
        Assert.True(damped.SumOfSquaredErrors <= MethodFitter.Score(y, new HoltOptions(0.5, 0.2, 0.98)).SumOfSquaredErrors);
    }

    [Fact]
    public void FitHoltWinters_AdditiveSeasonalProcess_RecoversWeights()
    {
        // Additive Holt-Winters (Winters' seasonal equation) is the optimal predictor of the seasonal process written out in
        // SelectionTestData. 200 seasons of 4, α = 0.4, trend weight 0.1, seasonal weight 0.3: across eight seeds the
        // estimates landed within ±0.04 (α), ±0.02 (trend) and ±0.06 (seasonal); asserted within ±0.08, ±0.05 and ±0.12.
        double[] y = SelectionTestData.AdditiveSeasonal(200, 4, 0.4, 0.1, 0.3, 1.0, seed: 4);
        var fitted = (HoltWintersOptions)MethodFitter.FitHoltWinters(y, 4).Method;
        Assert.InRange(fitted.LevelWeight, 0.32, 0.48);
        Assert.InRange(fitted.TrendWeight, 0.05, 0.15);
        Assert.InRange(fitted.SeasonalWeight, 0.18, 0.42);
        Assert.Equal(Seasonality.Additive, fitted.Seasonality);
    }

    [Fact]
    public void FitWeightedMovingAverage_AutoregressiveProcess_RecoversOptimalPredictorWeights()
    {
        // y(t) = 0.6·y(t−1) + 0.3·y(t−2) + 0.1·y(t−3) + ε: 1 − 0.6z − 0.3z² − 0.1z³ = (1 − z)(1 + 0.4z + 0.1z²), whose other
        // roots have |z| = √10 > 1, so the differences are stationary and the WMA 0.6/0.3/0.1 is the optimal one-step
        // predictor. 3,000 periods: across seeds within ±0.04; asserted within ±0.05.
        double[] y = SelectionTestData.Autoregressive(3000, [0.6, 0.3, 0.1], 1.0, seed: 5);
        var fitted = (WeightedMovingAverageOptions)MethodFitter.FitWeightedMovingAverage(y, 3).Method;
        double total = fitted.Weights.Sum();
        Assert.Equal(1.0, total, 1e-3);
        Assert.InRange(fitted.Weights[0], 0.55, 0.65);
        Assert.InRange(fitted.Weights[1], 0.25, 0.35);
        Assert.InRange(fitted.Weights[2], 0.05, 0.15);

        // A fourth lag the process does not use gets (nearly) no weight, and never a negative one.
        var wider = (WeightedMovingAverageOptions)MethodFitter.FitWeightedMovingAverage(y, 4).Method;
        Assert.InRange(wider.Weights[3], 0.0, 0.06);
        Assert.All(wider.Weights, w => Assert.True(w >= 0));
    }

    [Fact]
    public void FitWeightedMovingAverage_UnconstrainedOptimumHasANegativeWeight_MatchesABruteForceSimplexSearch()
    {
        // y(t) = 1.4·y(t−1) − 0.4·y(t−2) + ε (differences: AR(1) with coefficient 0.4, stationary). Unconstrained least squares
        // would give the infeasible weight −0.4; the constrained minimum lies on the simplex's edge. Oracle: a brute-force
        // search of the plain SSE over the simplex w₁ + w₂ + w₃ = 1, w ≥ 0 on a grid of step 0.005.
        double[] y = SelectionTestData.Autoregressive(600, [1.4, -0.4], 1.0, seed: 6);
        double best = double.PositiveInfinity;
        double[] bestWeights = [];
        const int steps = 200;
        for (int i = 0; i <= steps; i++)
        {
            for (int j = 0; i + j <= steps; j++)
            {
                double[] w = [i / (double)steps, j / (double)steps, (steps - i - j) / (double)steps];
                double sse = PlainWeightedSse(y, w);
                if (sse < best)
                {
                    best = sse;
                    bestWeights = w;
                }
            }
        }

        FittedMethod fit = MethodFitter.FitWeightedMovingAverage(y, 3);
        var fitted = (WeightedMovingAverageOptions)fit.Method;
        Assert.True(fit.SumOfSquaredErrors <= best * (1 + 1e-6), $"fitted SSE {fit.SumOfSquaredErrors} vs grid {best}");
        for (int i = 0; i < 3; i++)
        {
            Assert.Equal(bestWeights[i], fitted.Weights[i], 0.01);
        }

        Assert.Equal(PlainWeightedSse(y, [.. fitted.Weights]), fit.SumOfSquaredErrors, 1e-6 * best);
    }

    [Theory]
    [InlineData(4, 7)]
    [InlineData(6, 8)]
    public void SearchMovingAverage_AveragingProcess_RecoversLength(int length, int seed)
    {
        // y(t) = mean of y(t−1) … y(t−n) + ε: 1 − (z + … + zⁿ)/n = (1 − z)·Ψ(z) with Ψ's coefficients (n−j)/n strictly
        // decreasing, so by the Eneström–Kakeya theorem (from memory) Ψ has no root inside the unit circle and the MA(n)
        // forecast is the optimal predictor of this (difference-stationary) process. 4,000 periods: the search over 2 … 12
        // found n exactly on five of five seeds tried.
        var weights = Enumerable.Repeat(1.0 / length, length).ToArray();
        double[] y = SelectionTestData.Autoregressive(4000, weights, 1.0, seed);
        var fitted = (MovingAverageOptions)MethodFitter.SearchMovingAverage(y, 2, 12).Method;
        Assert.Equal(length, fitted.Length);
    }

    [Fact]
    public void SearchMovingAverage_ScoresEveryLengthOverTheSamePeriods()
    {
        // Plain recomputation: every MA(n), n = 1 … 3, scored on periods 4 … 12 of the NIST §6.4.2 data (N1).
        double[] y = ReferenceData.NistAveraging;
        FittedMethod fit = MethodFitter.SearchMovingAverage(y, 1, 3);
        double best = double.PositiveInfinity;
        int bestLength = 0;
        for (int n = 1; n <= 3; n++)
        {
            double sse = 0;
            for (int t = 3; t < y.Length; t++)
            {
                double mean = 0;
                for (int i = 1; i <= n; i++)
                {
                    mean += y[t - i];
                }

                double e = y[t] - (mean / n);
                sse += e * e;
            }

            if (sse < best)
            {
                best = sse;
                bestLength = n;
            }
        }

        Assert.Equal(bestLength, ((MovingAverageOptions)fit.Method).Length);
        Assert.Equal(best, fit.SumOfSquaredErrors, 1e-9);
        Assert.Equal(9, fit.ErrorCount);
    }

    [Fact]
    public void Fits_TooShortHistories_ThrowSayingHowManyAreNeeded()
    {
        double[] y = [1, 2, 3];
        Assert.Contains("needs at least", Assert.Throws<ArgumentException>(() => MethodFitter.FitExponentialSmoothing(y)).Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentException>(() => MethodFitter.FitHolt(y));
        Assert.Throws<ArgumentException>(() => MethodFitter.FitHoltWinters(y, 4));
        Assert.Throws<ArgumentException>(() => MethodFitter.FitWeightedMovingAverage(y, 3));
        Assert.Throws<ArgumentException>(() => MethodFitter.SearchMovingAverage(y, 1, 3));
        Assert.Throws<ArgumentOutOfRangeException>(() => MethodFitter.FitExponentialSmoothing([1, 2, double.NaN, 4, 5, 6]));
    }

    [Fact]
    public void FitHoltWinters_MultiplicativeOnAStartSeasonOfZeros_ThrowsSayingTheMethodCouldNotRun()
    {
        // Multiplicative seasonality rejects a start season of zeros for every parameter: the fit says so.
        double[] y = [0, 0, 0, 0, 5, 6, 7, 8, 5, 6, 7, 8, 5, 6, 7, 8];
        var ex = Assert.Throws<ArgumentException>(() => MethodFitter.FitHoltWinters(y, 4, Seasonality.Multiplicative));
        Assert.Contains("could not run", ex.Message, StringComparison.Ordinal);
    }
}
