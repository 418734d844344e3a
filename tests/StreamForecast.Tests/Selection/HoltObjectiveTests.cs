using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Selection.Internal;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// The allocation-free Holt objective the fitter uses per trial must give the forecaster's own one-step SSE bit for bit (the
/// oracle is the library's <see cref="Holt"/> forecaster run by <see cref="MethodFitter.OneStepSquaredErrors"/>), and must
/// decline wherever the forecaster refuses an actual.
/// </summary>
public class HoltObjectiveTests
{
    private static readonly Gen<double[]> s_weights =
        from weights in Gen.Choose(1, 10_000).Select(i => i / 10_000.0).ArrayOf(2)
        from zeroTrend in Gen.Frequency((3, Gen.Constant(false)), (1, Gen.Constant(true)))
        from phi in Gen.Frequency((1, Gen.Constant(1.0)), (2, Gen.Choose(8_000, 10_000).Select(i => i / 10_000.0)))
        select new[] { weights[0], zeroTrend ? 0 : weights[1], phi };

    [Fact]
    public void TrySumOfSquaredErrors_HostileSeries_EqualsForecasterBitForBitOrDeclinesWhereItRefuses()
    {
        // Property: on hostile series (zeros, ±MaxMagnitude and values next to it, subnormals, series of 0 to 60 values), the
        // objective returns the forecaster's SSE and count bit for bit or declines, and never returns a number where the
        // forecaster refuses an actual.
        Gen<(double[] Weights, double[] Series)> cases =
            from weights in s_weights
            from series in HostileSeries.Accepted(60)
            select (weights, series);

        PropertyCases.Check(Prop.ForAll(cases.ToArbitrary(), c => Agrees(c.Weights, c.Series)));
    }

    [Fact]
    public void TrySumOfSquaredErrors_OrdinarySeries_ComputesAndEqualsForecasterBitForBit()
    {
        // Property: on ordinary series with a trend (what tuning sees) the objective does not decline and matches bit for bit.
        Gen<(double[] Weights, double[] Series)> cases =
            from weights in s_weights
            from length in Gen.Choose(2, 120)
            from level in Gen.Choose(-1_000_000, 1_000_000).Select(i => i / 100.0)
            from noise in Gen.Choose(-100_000, 100_000).Select(i => i / 100.0).ArrayOf(length)
            select (weights, noise.Select((e, t) => level + e + (0.5 * t)).ToArray());

        PropertyCases.Check(Prop.ForAll(cases.ToArbitrary(), c =>
            new HoltObjective(c.Series).TrySumOfSquaredErrors(c.Weights[0], c.Weights[1], c.Weights[2], out _, out _)
            && Agrees(c.Weights, c.Series)));
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Fit_WithAndWithoutTheObjective_SameResultBitForBit(bool damped)
    {
        // The whole search (grid, two simplex passes, rounding) gives the same options, SSE and evaluation count whether each
        // trial runs a forecaster or the objective.
        double[] series = Enumerable.Range(0, 120).Select(t => 40.0 + (0.4 * t) + ((t * 53 % 17) / 2.0)).ToArray();
        double[] lower = damped ? [MethodFitter.MinLevelWeight, 0, MethodFitter.MinDamping] : [MethodFitter.MinLevelWeight, 0];
        double[] upper = damped ? [1, 1, MethodFitter.MaxDamping] : [1, 1];
        Func<double[], ForecasterOptions> create = p => new HoltOptions(p[0], p[1], damped ? p[2] : 1.0);
        double[][] grid = damped ? [[0.1, 0.01, 0.9], [0.5, 0.1, 0.9]] : [[0.1, 0.01], [0.5, 0.1]];
        var objective = new HoltObjective(series);

        FittedMethod plain = new ParameterSearch(series, lower, upper, create).Fit(grid);
        FittedMethod fast = new ParameterSearch(series, lower, upper, create,
            tryObjective: (double[] p, out double sse, out long count) => objective.TrySumOfSquaredErrors(p[0], p[1], damped ? p[2] : 1.0, out sse, out count)).Fit(grid);

        Assert.Equal(plain.Method, fast.Method);
        Assert.True(Bits.Same([plain.SumOfSquaredErrors], [fast.SumOfSquaredErrors]));
        Assert.Equal(plain.ErrorCount, fast.ErrorCount);
        Assert.Equal(plain.Evaluations, fast.Evaluations);
    }

    private static bool Agrees(double[] weights, double[] series)
    {
        bool computed = new HoltObjective(series).TrySumOfSquaredErrors(weights[0], weights[1], weights[2], out double sse, out long count);
        try
        {
            (double expected, long expectedCount) = MethodFitter.OneStepSquaredErrors(series, new HoltOptions(weights[0], weights[1], weights[2]), 0);
            return !computed || (Bits.Same([sse], [expected]) && count == expectedCount);
        }
        catch (ArgumentOutOfRangeException)
        {
            return !computed;
        }
    }
}
