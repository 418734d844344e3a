using FsCheck;
using FsCheck.Fluent;
using MathNet.Numerics.Statistics;
using StreamForecast.Internal;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Tracking;

/// <summary>
/// The online quantiles behind empirical intervals against an exact batch reference: MathNet.Numerics
/// <c>Statistics.QuantileCustom(data, p, QuantileDefinition.R6)</c>, Hyndman &amp; Fan (1996) definition 6 (rank (n + 1)·p,
/// linear interpolation, clamped to the smallest and largest value), recomputed from scratch over the last n values.
/// </summary>
public sealed class ErrorQuantileWindowTests
{
    private static Gen<double> Value { get; } = Gen.Frequency(
        (6, Gen.Choose(-100_000, 100_000).Select(i => i / 100.0)),
        (2, Gen.Choose(-3, 3).Select(i => (double)i)), // ties
        (1, Gen.Elements(0.0, -0.0, 1e15, -1e15, 1e-300)));

    [Fact]
    public void Quantile_RandomSequences_EqualsBatchDefinition6OfTheWindow() =>
        PropertyCases.Check(Prop.ForAll(
            Gen.Choose(1, 40).ToArbitrary(),
            Value.ArrayOf().Select(a => a.Length == 0 ? [1.0] : a).ToArbitrary(),
            Gen.Choose(0, 1000).Select(i => i / 1000.0).ToArbitrary(),
            (capacity, values, p) =>
            {
                var window = new ErrorQuantileWindow(capacity);
                for (int i = 0; i < values.Length; i++)
                {
                    window.Add(values[i]);
                    double[] last = values[Math.Max(0, i + 1 - capacity)..(i + 1)];
                    double expected = Statistics.QuantileCustom(last, p, QuantileDefinition.R6);
                    double actual = window.Quantile(p);
                    double scale = Math.Max(1, last.Max(Math.Abs));
                    if (window.Count != last.Length || Math.Abs(expected - actual) > 1e-13 * scale)
                    {
                        return false;
                    }
                }

                return true;
            }));

    [Fact]
    public void Quantile_TenValuesAtTenthAndNinetiethPercentile_MatchesHandComputedRanks()
    {
        // Rank (n + 1)·p = 1.1 and 9.9 for n = 10 (Hyndman & Fan definition 6): 1 + 0.1·(2 − 1) and 9 + 0.9·(10 − 9).
        var window = new ErrorQuantileWindow(10);
        foreach (double v in new double[] { 7, 3, 10, 1, 4, 9, 2, 6, 8, 5 })
        {
            window.Add(v);
        }

        Assert.Equal(1.1, window.Quantile(0.1), 1e-12);
        Assert.Equal(9.9, window.Quantile(0.9), 1e-12);
        Assert.Equal(5.5, window.Quantile(0.5), 1e-12);
    }

    [Fact]
    public void Export_AfterWrapAround_ImportRebuildsTheSameQuantilesBitForBit() =>
        PropertyCases.Check(Prop.ForAll(Gen.Choose(1, 30).ToArbitrary(), Value.ArrayOf().ToArbitrary(), (capacity, values) =>
        {
            var window = new ErrorQuantileWindow(capacity);
            foreach (double v in values)
            {
                window.Add(v);
            }

            var state = new double[1 + capacity];
            window.Export(state);
            Assert.Null(ErrorQuantileWindow.Validate(state, capacity, "window"));
            var copy = new ErrorQuantileWindow(capacity);
            copy.Import(state);
            var again = new double[1 + capacity];
            copy.Export(again);
            bool same = Bits.Same(state, again);
            for (int i = 0; same && i <= 20 && window.Count > 0; i++)
            {
                same = BitConverter.DoubleToInt64Bits(window.Quantile(i / 20.0)) == BitConverter.DoubleToInt64Bits(copy.Quantile(i / 20.0));
            }

            return same;
        }));

    [Theory]
    [InlineData(new double[] { -1, 0, 0, 0, 0 }, "count")]        // negative
    [InlineData(new double[] { 2, 1, 2, 3, 0 }, "value")]         // count 2 but a value in an unused place
    [InlineData(new double[] { 2.5, 1, 2, 0, 0 }, "count")]       // not a whole number
    [InlineData(new double[] { 5, 1, 2, 3, 4 }, "count")]         // more than the capacity
    [InlineData(new double[] { 2, double.NaN, 2, 0, 0 }, "value")] // not finite
    [InlineData(new double[] { 2, -0.0, 2, 0, 0 }, "value")]      // −0 is never stored
    [InlineData(new double[] { 1, 1, 5, 0, 0 }, "value")]         // unused place not zero
    public void Validate_StateNoWindowReaches_NamesTheProblem(double[] state, string expected)
    {
        string? problem = ErrorQuantileWindow.Validate(state, 4, "window");
        Assert.NotNull(problem);
        Assert.Contains(expected, problem, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(NormalMultiplier.Coverage80)]
    [InlineData(NormalMultiplier.Coverage90)]
    [InlineData(NormalMultiplier.Coverage95)]
    [InlineData(NormalMultiplier.Coverage99)]
    [InlineData(0.1)]
    [InlineData(4.0)]
    [InlineData(8.5)]
    public void NormalCoverageOf_Multiplier_MatchesMathNetNormalCdf(double z)
    {
        // Reference: MathNet.Numerics.Distributions.Normal.CDF, 2Φ(z) − 1.
        double expected = 2 * MathNet.Numerics.Distributions.Normal.CDF(0, 1, z) - 1;
        Assert.Equal(expected, NormalCoverage.Of(z), 1e-14);
    }

    [Theory]
    [InlineData(0.5)]
    [InlineData(0.8)]
    [InlineData(0.95)]
    [InlineData(0.999)]
    public void NormalCoverageMultiplierFor_Coverage_MatchesMathNetInverseCdf(double coverage)
    {
        // Reference: MathNet.Numerics.Distributions.Normal.InvCDF at (1 + c)/2.
        double expected = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, (1 + coverage) / 2);
        Assert.Equal(expected, NormalCoverage.MultiplierFor(coverage), 1e-10);
    }

    [Fact]
    public void EmpiricalIntervalOptions_Defaults_AreEightyPercentHundredErrorsTwentyToStart()
    {
        var options = new EmpiricalIntervalOptions();
        Assert.Equal(0.8, options.Coverage);
        Assert.Equal(100, options.Window);
        Assert.Equal(20, options.MinimumErrors);
        Assert.Equal(NormalMultiplier.Coverage80, options.FallbackMultiplier, 1e-12);
        Assert.Equal(39, new EmpiricalIntervalOptions(0.95).MinimumErrors); // rank (n + 1)·0.025 ≥ 1 needs n ≥ 39
    }

    [Theory]
    [InlineData(0.0, 100, null)]
    [InlineData(1.0, 100, null)]
    [InlineData(double.NaN, 100, null)]
    [InlineData(0.8, 100, 8)]      // 80% needs at least 9 errors
    [InlineData(0.8, 10, 20)]      // window below the minimum
    [InlineData(0.8, 10_001, 20)]
    public void EmpiricalIntervalOptions_OutOfRange_Throws(double coverage, int window, int? minimum) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => new EmpiricalIntervalOptions(coverage, window, minimum));
}
