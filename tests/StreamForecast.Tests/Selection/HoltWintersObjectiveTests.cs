using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Selection.Internal;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Selection;

/// <summary>
/// The allocation-free Holt-Winters objective the fitter uses per trial must give the forecaster's own one-step SSE bit for
/// bit (the oracle is the library's <see cref="HoltWinters"/> forecaster run by <see cref="MethodFitter.OneStepSquaredErrors"/>),
/// and must decline wherever the forecaster refuses an actual.
/// </summary>
public class HoltWintersObjectiveTests
{
    private static readonly Gen<(int M, bool Multiplicative, double[] Weights, double Phi)> s_methods =
        from m in Gen.Choose(2, 8)
        from multiplicative in Gen.Elements(false, true)
        from weights in Gen.Choose(1, 10_000).Select(i => i / 10_000.0).ArrayOf(3)
        from zeroTrend in Gen.Frequency((3, Gen.Constant(false)), (1, Gen.Constant(true)))
        from zeroSeasonal in Gen.Frequency((3, Gen.Constant(false)), (1, Gen.Constant(true)))
        from phi in Gen.Frequency((1, Gen.Constant(1.0)), (2, Gen.Choose(8_000, 10_000).Select(i => i / 10_000.0)))
        select (m, multiplicative, new[] { weights[0], zeroTrend ? 0 : weights[1], zeroSeasonal ? 0 : weights[2] }, phi);

    [Fact]
    public void TrySumOfSquaredErrors_HostileSeries_EqualsForecasterBitForBitOrDeclinesWhereItRefuses()
    {
        // Property: on hostile series (zeros, ±MaxMagnitude and values next to it, subnormals, short series), the objective either
        // returns the forecaster's SSE and error count bit for bit, or declines; it never returns a number where the forecaster
        // refuses an actual.
        Gen<((int M, bool Multiplicative, double[] Weights, double Phi) Method, double[] Series)> cases =
            from method in s_methods
            from series in HostileSeries.Accepted(60)
            select (method, series);

        PropertyCases.Check(Prop.ForAll(cases.ToArbitrary(), c => Agrees(c.Method, c.Series)));
    }

    [Fact]
    public void TrySumOfSquaredErrors_OrdinarySeries_ComputesAndEqualsForecasterBitForBit()
    {
        // Property: on ordinary positive seasonal series (what tuning sees) the objective does not decline, and its SSE and count
        // are the forecaster's bit for bit, for both seasonalities, damped or not, down to the shortest series it scores.
        Gen<((int M, bool Multiplicative, double[] Weights, double Phi) Method, double[] Series)> cases =
            from method in s_methods
            from length in Gen.Choose((2 * method.M) + 1, 120)
            from level in Gen.Choose(1, 1_000_000).Select(i => i / 100.0)
            from noise in Gen.Choose(1, 100_000).Select(i => i / 100.0).ArrayOf(length)
            select (method, noise.Select((e, t) => level + e + (t % method.M)).ToArray());

        PropertyCases.Check(Prop.ForAll(cases.ToArbitrary(), c =>
        {
            var objective = new HoltWintersObjective(c.Series, c.Method.M, c.Method.Multiplicative ? Seasonality.Multiplicative : Seasonality.Additive);
            return objective.TrySumOfSquaredErrors(c.Method.Weights[0], c.Method.Weights[1], c.Method.Weights[2], c.Method.Phi, out _, out _)
                && Agrees(c.Method, c.Series);
        }));
    }

    [Fact]
    public void TrySumOfSquaredErrors_ReusedAcrossTrials_DependsOnlyOnTheWeights()
    {
        // One objective serves every trial of a fit: a trial after others gives what a fresh objective gives.
        double[] series = Enumerable.Range(0, 50).Select(t => 20.0 + (t % 7) + (0.3 * t) + ((t * 37 % 11) / 3.0)).ToArray();
        var reused = new HoltWintersObjective(series, 7, Seasonality.Multiplicative);
        Assert.True(reused.TrySumOfSquaredErrors(0.9, 0.5, 0.7, 0.8, out _, out _));
        Assert.True(reused.TrySumOfSquaredErrors(0.2, 0.1, 0.3, 1.0, out double again, out long againCount));
        Assert.True(new HoltWintersObjective(series, 7, Seasonality.Multiplicative).TrySumOfSquaredErrors(0.2, 0.1, 0.3, 1.0, out double fresh, out long freshCount));
        Assert.True(Bits.Same([again], [fresh]));
        Assert.Equal(freshCount, againCount);
    }

    [Theory]
    [InlineData(false, false)]
    [InlineData(false, true)]
    [InlineData(true, false)]
    [InlineData(true, true)]
    public void Fit_WithAndWithoutTheObjective_SameResultBitForBit(bool multiplicative, bool damped)
    {
        // The whole search (grid, two simplex passes, rounding) gives the same options, SSE and evaluation count whether each
        // trial runs a forecaster or the objective.
        Seasonality seasonality = multiplicative ? Seasonality.Multiplicative : Seasonality.Additive;
        double[] series = Enumerable.Range(0, 120).Select(t => 40.0 + (5 * ((t % 7) - 3)) + (0.1 * t) + ((t * 53 % 17) / 2.0)).ToArray();
        double[] lower = damped ? [MethodFitter.MinLevelWeight, 0, 0, MethodFitter.MinDamping] : [MethodFitter.MinLevelWeight, 0, 0];
        double[] upper = damped ? [1, 1, 1, MethodFitter.MaxDamping] : [1, 1, 1];
        Func<double[], ForecasterOptions> create = p => new HoltWintersOptions(7, seasonality, p[0], p[1], p[2], damped ? p[3] : 1.0);
        double[][] grid = damped ? [[0.1, 0.01, 0.05, 0.9], [0.3, 0.1, 0.2, 0.9]] : [[0.1, 0.01, 0.05], [0.3, 0.1, 0.2]];
        var objective = new HoltWintersObjective(series, 7, seasonality);

        FittedMethod plain = new ParameterSearch(series, lower, upper, create).Fit(grid);
        FittedMethod fast = new ParameterSearch(series, lower, upper, create,
            tryObjective: (double[] p, out double sse, out long count) => objective.TrySumOfSquaredErrors(p[0], p[1], p[2], damped ? p[3] : 1.0, out sse, out count)).Fit(grid);

        Assert.Equal(plain.Method, fast.Method);
        Assert.True(Bits.Same([plain.SumOfSquaredErrors], [fast.SumOfSquaredErrors]));
        Assert.Equal(plain.ErrorCount, fast.ErrorCount);
        Assert.Equal(plain.Evaluations, fast.Evaluations);
    }

    private static bool Agrees((int M, bool Multiplicative, double[] Weights, double Phi) method, double[] series)
    {
        Seasonality seasonality = method.Multiplicative ? Seasonality.Multiplicative : Seasonality.Additive;
        var options = new HoltWintersOptions(method.M, seasonality, method.Weights[0], method.Weights[1], method.Weights[2], method.Phi);
        bool computed = new HoltWintersObjective(series, method.M, seasonality)
            .TrySumOfSquaredErrors(method.Weights[0], method.Weights[1], method.Weights[2], method.Phi, out double sse, out long count);
        try
        {
            (double expected, long expectedCount) = MethodFitter.OneStepSquaredErrors(series, options, 0);
            return !computed || (Bits.Same([sse], [expected]) && count == expectedCount);
        }
        catch (ArgumentOutOfRangeException)
        {
            return !computed;
        }
    }
}
