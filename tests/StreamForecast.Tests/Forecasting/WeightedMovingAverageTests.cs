using MathNet.Numerics.LinearAlgebra;
using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

public abstract class WeightedMovingAverageContractTests : ForecasterContractTests
{
    /// <summary>Weights, most recent first.</summary>
    protected abstract double[] Weights { get; }

    protected override ForecasterOptions Options => new WeightedMovingAverageOptions(Weights);

    protected override int WarmUpLength => Weights.Length;

    // Batch reference: a MathNet.Numerics dot product of the window (most recent first) with the weights,
    // divided by the sum of the weights.
    protected override double[] BatchForecasts(double[] series)
    {
        int n = Weights.Length;
        var w = Vector<double>.Build.DenseOfArray(Weights);
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            if (k < n)
            {
                result[k] = double.NaN;
                continue;
            }

            var window = Vector<double>.Build.Dense(n, i => series[k - 1 - i]);
            result[k] = window.DotProduct(w) / w.Sum();
        }

        return result;
    }
}

public sealed class WeightedMovingAverageTests : WeightedMovingAverageContractTests
{
    protected override double[] Weights => [3, 2, 1];

    [Theory]
    [InlineData(new double[] { 3, 2, 1 })]
    [InlineData(new double[] { 4, 3, 2, 1 })]
    public void ImportState_WindowRolledBackToZeros_AcceptsTheRoundingResidue(double[] weights)
    {
        // Found in use: once the window is all zeros the running sums hold a residue of about 1e-15 instead of 0, and an
        // exact check refused the state the forecaster had just exported (so an engine snapshot could not restore).
        var options = new WeightedMovingAverageOptions(weights);
        double[] actuals = [22.18, 18.54, 7.38, 16.06, 15.83, 0, 0, 0, 0];
        var f = options.CreateForecaster();
        foreach (double y in actuals)
        {
            f.Update(y);
            double[] state = f.ExportState();
            var copy = options.CreateForecaster();
            copy.ImportState(state);
            Assert.Equal(state, copy.ExportState());
            f.Update(0);
            copy.Update(0);
            Assert.Equal(f.ExportState(), copy.ExportState());
        }
    }

    [Fact]
    public void ImportState_WeightedSumOffByMoreThanRounding_IsRefused()
    {
        var f = new WeightedMovingAverageOptions([3, 2, 1]).CreateForecaster();
        foreach (double y in new[] { 22.18, 18.54, 7.38, 16.06 })
        {
            f.Update(y);
        }

        double[] state = f.ExportState();
        double[] edited = (double[])state.Clone();
        edited[1 + 3 + 2] += 1e-9; // W, the weighted sum
        var ex = Assert.Throws<ArgumentException>(() => f.ImportState(edited));
        Assert.Contains("weighted running sum", ex.Message, StringComparison.Ordinal);
        double[] peakTooSmall = (double[])state.Clone();
        peakTooSmall[1 + 3 + 4] = 1;
        Assert.Throws<ArgumentException>(() => f.ImportState(peakTooSmall));
        Assert.Equal(state, f.ExportState());
    }

    [Fact]
    public void Forecast_NistAveragingSeries_MatchesThreeTwoOneWeightedForecasts()
    {
        // check-values WM1 (DERIVED; the 3-2-1 convention, most recent heaviest, divided by 6, is common practice)
        // on the NIST e-Handbook §6.4.2 series: F_4..F_13.
        double[] expected = [8.666667, 10.333333, 10, 11, 11, 9.166667, 10.666667, 10, 10.666667, 10.166667];
        var f = new WeightedMovingAverageOptions([3, 2, 1]).CreateForecaster();
        var forecasts = new List<double>();
        foreach (double y in ReferenceData.NistAveraging)
        {
            f.Update(y);
            if (f.TryForecast(1, out double next))
            {
                forecasts.Add(next);
            }
        }

        Assert.Equal(expected.Length, forecasts.Count);
        for (int i = 0; i < expected.Length; i++)
        {
            Assert.Equal(expected[i], forecasts[i], 6);
        }
    }

    [Fact]
    public void Options_FractionalAndIntegerWeights_GiveSameForecast()
    {
        // Dividing by the sum of the weights makes 3/2/1 and 0.5/0.3333/0.1667 equivalent (common practice).
        var ints = new WeightedMovingAverageOptions([3, 2, 1]).CreateForecaster();
        var fractions = new WeightedMovingAverageOptions([0.5, 1.0 / 3, 1.0 / 6]).CreateForecaster();
        foreach (double y in ReferenceData.NistAveraging)
        {
            ints.Update(y);
            fractions.Update(y);
        }

        Assert.Equal(ints.Forecast(), fractions.Forecast(), 12);
    }

    [Fact]
    public void Options_OldestFirstOrder_IsReversedMostRecentFirst()
    {
        var a = new WeightedMovingAverageOptions([1, 2, 5], WeightOrder.OldestFirst);
        var b = new WeightedMovingAverageOptions([5, 2, 1]);
        Assert.Equal(b, a);
        Assert.Equal(b.GetHashCode(), a.GetHashCode());
        Assert.Equal([5.0, 2.0, 1.0], a.Weights.ToArray());
    }

    [Fact]
    public void Options_LinearWeights_AreDetected()
    {
        Assert.True(new WeightedMovingAverageOptions([3, 2, 1]).IsLinear);
        Assert.True(new WeightedMovingAverageOptions([1.5, 1, 0.5]).IsLinear);
        Assert.False(new WeightedMovingAverageOptions([1, 2, 3]).IsLinear);
        Assert.False(new WeightedMovingAverageOptions([0.5, 0.3, 0.2]).IsLinear);
    }

    [Theory]
    [InlineData(new double[] { })]
    [InlineData(new double[] { 1, -1 })]
    [InlineData(new double[] { 1, double.NaN })]
    [InlineData(new double[] { double.PositiveInfinity })]
    public void Constructor_InvalidWeights_ThrowsOutOfRange(double[] weights)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new WeightedMovingAverageOptions(weights));
    }

    [Fact]
    public void Constructor_AllZeroWeights_Throws()
    {
        var ex = Assert.Throws<ArgumentException>(() => new WeightedMovingAverageOptions([0, 0, 0]));
        Assert.Contains("zero", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Forecast_TenMillionRandomWalkUpdates_LinearWeightsMatchFreshWeightedAverage()
    {
        // Same exactness bound as the moving average (issue 2): ≤ 1e-12 relative after 10^7 random-walk updates.
        const int updates = 10_000_000;
        foreach (int n in new[] { 12, 365 })
        {
            var weights = Enumerable.Range(0, n).Select(i => (double)(n - i)).ToArray();
            var f = new WeightedMovingAverageOptions(weights).CreateForecaster();
            var rng = new Random(99 + n);
            var last = new double[n];
            double y = 1e6;
            for (int t = 0; t < updates; t++)
            {
                y += (rng.NextDouble() - 0.5) * 1000;
                f.Update(y);
                last[t % n] = y;
            }

            // Fresh weighted average of the final window, most recent first, in decimal arithmetic.
            decimal num = 0, den = 0;
            for (int age = 0; age < n; age++)
            {
                int t = updates - 1 - age;
                num += (decimal)last[t % n] * (n - age);
                den += n - age;
            }

            double expected = (double)(num / den);
            Assert.True(Math.Abs(f.Forecast() - expected) <= 1e-12 * Math.Abs(expected), $"n={n}: {f.Forecast():R} vs {expected:R}");
        }
    }
}

public sealed class WeightedMovingAverageArbitraryWeightsTests : WeightedMovingAverageContractTests
{
    protected override double[] Weights => [0.4, 0.3, 0.2, 0.1, 0.25, 0, 0.05];
}

public sealed class WeightedMovingAverageLongArbitraryWeightsTests : WeightedMovingAverageContractTests
{
    // Long enough to take the vectorised dot-product path.
    protected override double[] Weights => [.. Enumerable.Range(0, 52).Select(i => 1.0 / (1 + (i % 5)))];

    protected override double[] Sample => [.. Enumerable.Range(0, 160).Select(t => 50 + (t % 7) + (0.25 * t))];
}

public sealed class WeightedMovingAverageLongLinearTests : WeightedMovingAverageContractTests
{
    protected override double[] Weights => [.. Enumerable.Range(0, 52).Select(i => (double)(52 - i))];

    protected override double[] Sample => [.. Enumerable.Range(0, 160).Select(t => 50 + (t % 7) + (0.25 * t))];
}
