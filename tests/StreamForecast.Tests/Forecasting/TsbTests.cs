using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

public abstract class TsbContractTests : ForecasterContractTests
{
    protected abstract double ProbabilityWeight { get; }

    protected abstract double SizeWeight { get; }

    protected override ForecasterOptions Options => new TsbOptions(ProbabilityWeight, SizeWeight);

    protected override SeriesDomain Domain => SeriesDomain.Intermittent;

    // Adding a constant turns every zero into demand, so the zero/non-zero pattern (and the method) changes.
    protected override bool IsShiftEquivariant => false;

    protected override double[] OutOfDomainActuals => [-1, -0.01];

    // Warm once the first non-zero demand of the sample has been seen.
    protected override int WarmUpLength => Array.FindIndex(Sample, v => v > 0) + 1;

    // Batch reference, written from Teunter, Syntetos & Babai (2011) and check-values convention 5: before the first
    // demand nothing is known; the first demand in period k (from 1) sets z = y and d = 1/k; after that every period
    // d = (1 − α)d + α·[y > 0], and in demand periods z = (1 − β)z + βy. Forecast d·z.
    protected override double[] BatchForecasts(double[] series)
    {
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            double d = double.NaN, z = double.NaN;
            bool seen = false;
            for (int i = 0; i < k; i++)
            {
                bool demand = series[i] > 0;
                if (!seen)
                {
                    if (demand)
                    {
                        z = series[i];
                        d = 1.0 / (i + 1);
                        seen = true;
                    }

                    continue;
                }

                d = ((1 - ProbabilityWeight) * d) + (ProbabilityWeight * (demand ? 1 : 0));
                if (demand)
                {
                    z = ((1 - SizeWeight) * z) + (SizeWeight * series[i]);
                }
            }

            result[k] = seen ? d * z : double.NaN;
        }

        return result;
    }
}

public sealed class TsbTests : TsbContractTests
{
    protected override double ProbabilityWeight => 0.1;

    protected override double SizeWeight => 0.2;

    [Fact]
    public void Forecast_HandWorkedSeries_MatchesArithmetic()
    {
        // DERIVED by hand from the published method (Teunter, Syntetos & Babai 2011), α = β = 0.5,
        // start rule: the first demand in period k sets z = y, d = 1/k.
        //   t=1,2: 0          → not warm
        //   t=3: 5            → z = 5, d = 1/3                                   → F = 5/3
        //   t=4: 0            → d = 1/3 − 0.5·1/3 = 1/6                          → F = 5/6
        //   t=5: 3            → d = 1/6 + 0.5(1 − 1/6) = 7/12, z = 5 + 0.5(3 − 5) = 4 → F = 7/3
        //   t=6: 0            → d = 7/24                                         → F = 7/6
        //   t=7: 0            → d = 7/48                                         → F = 7/12
        //   t=8: 0            → d = 7/96                                         → F = 7/24
        //   t=9: 4            → d = 7/96 + 0.5(1 − 7/96) = 103/192, z = 4         → F = 103/48
        double[] demand = [0, 0, 5, 0, 3, 0, 0, 0, 4];
        double[] expected = [double.NaN, double.NaN, 5.0 / 3, 5.0 / 6, 7.0 / 3, 7.0 / 6, 7.0 / 12, 7.0 / 24, 103.0 / 48];
        var f = (Tsb)ForecasterOptions.Tsb(0.5, 0.5).CreateForecaster();
        for (int i = 0; i < demand.Length; i++)
        {
            f.Update(demand[i]);
            f.TryForecast(1, out double actual);
            Assert.True(Approx.Close(expected[i], actual, 1e-14), $"t={i + 1}: expected {expected[i]}, got {actual}");
        }

        Assert.Equal(4.0, f.DemandSize);
        Assert.Equal(103.0 / 192, f.DemandProbability, 15);
    }

    [Fact]
    public void Forecast_RunOfZerosAfterDemand_DecaysWhileCrostonStaysFlat()
    {
        // TSB smooths the probability every period, so it decays by (1 − α) per zero period; Croston does not
        // (check-values convention 5; practice.md pitfall 5).
        double[] history = [0, 4, 0, 6, 2, 0, 5];
        var tsb = ForecasterOptions.Tsb(0.1, 0.1).CreateForecaster();
        var croston = ForecasterOptions.Croston(0.1).CreateForecaster();
        foreach (double y in history)
        {
            tsb.Update(y);
            croston.Update(y);
        }

        double previous = tsb.Forecast();
        double flat = croston.Forecast();
        for (int i = 0; i < 60; i++)
        {
            tsb.Update(0);
            croston.Update(0);
            double now = tsb.Forecast();
            Assert.True(now < previous, $"zero {i + 1}: {now} is not below {previous}");
            Approx.Equal(previous * 0.9, now, 1e-14, $"zero {i + 1}");
            Assert.Equal(now, tsb.Forecast(10));
            Assert.Equal(flat, croston.Forecast());
            previous = now;
        }
    }

    [Fact]
    public void Update_FirstDemand_StartsLikeCroston()
    {
        // Start rule (documented convention): first demand 8 in period 4 → z = 8, d = 1/4, F = 2, the same as
        // Croston's first forecast 8/4.
        var f = (Tsb)new TsbOptions().CreateForecaster();
        foreach (double y in new double[] { 0, 0, 0 })
        {
            f.Update(y);
            Assert.False(f.IsWarm);
        }

        f.Update(8);
        Assert.Equal(8.0, f.DemandSize);
        Assert.Equal(0.25, f.DemandProbability);
        Assert.Equal(2.0, f.Forecast());

        var first = new TsbOptions().CreateForecaster();
        first.Update(6);
        Assert.Equal(6.0, first.Forecast());
    }

    [Fact]
    public void Update_NegativeDemand_ThrowsSayingWhatIsAllowed()
    {
        var f = new TsbOptions().CreateForecaster();
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => f.Update(-0.5));
        Assert.Contains("zero or more", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0, f.Count);
    }

    [Fact]
    public void HorizonVarianceRatio_AnyHorizon_IsOne()
    {
        // Flat forecast under a stationary intermittent model: no growth of error with horizon (documented assumption).
        var f = new TsbOptions().CreateForecaster();
        f.Update(5);
        for (int h = 1; h <= 24; h++)
        {
            Assert.Equal(1.0, f.HorizonVarianceRatio(h));
        }
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-0.1)]
    [InlineData(1.0000001)]
    [InlineData(double.NaN)]
    [InlineData(double.NegativeInfinity)]
    public void Constructor_WeightOutsideZeroToOne_Throws(double weight)
    {
        var probability = Assert.Throws<ArgumentOutOfRangeException>(() => new TsbOptions(weight, 0.1));
        Assert.Equal("probabilityWeight", probability.ParamName);
        Assert.Contains("greater than 0 and at most 1", probability.Message, StringComparison.Ordinal);
        var size = Assert.Throws<ArgumentOutOfRangeException>(() => new TsbOptions(0.1, weight));
        Assert.Equal("sizeWeight", size.ParamName);
        Assert.Throws<ArgumentOutOfRangeException>(() => ForecasterOptions.Tsb(weight));
    }

    [Fact]
    public void Factories_Shorthand_EqualsConstructedOptions()
    {
        Assert.Equal(new TsbOptions(), ForecasterOptions.Tsb());
        Assert.Equal(new TsbOptions(0.3, 0.05), ForecasterOptions.Tsb(0.3, 0.05));
        Assert.Equal(TsbOptions.DefaultWeight, ForecasterOptions.Tsb().ProbabilityWeight);
        Assert.Equal(TsbOptions.DefaultWeight, ForecasterOptions.Tsb().SizeWeight);
        Assert.Equal("TSB(0.3, 0.05)", ForecasterOptions.Tsb(0.3, 0.05).MethodName);
        Assert.IsType<Tsb>(ForecasterOptions.Tsb().CreateForecaster());
    }

    [Fact]
    public void ImportState_ImpossibleValues_AreRejected()
    {
        var f = new TsbOptions().CreateForecaster();
        foreach (double y in new double[] { 0, 3, 0, 0, 5 })
        {
            f.Update(y);
        }

        double[] good = f.ExportState(); // count, z, d, started
        var target = new TsbOptions().CreateForecaster();
        double[] probabilityAboveOne = (double[])good.Clone();
        probabilityAboveOne[2] = 1.5;
        double[] negativeSize = (double[])good.Clone();
        negativeSize[1] = -1;
        double[] halfStarted = (double[])good.Clone();
        halfStarted[3] = 0.5;
        double[] sizeWithoutDemand = [2, 4, 0, 0];
        double[] startedWithoutPeriods = [0, 4, 1, 1];
        foreach (double[] bad in new[] { probabilityAboveOne, negativeSize, halfStarted, sizeWithoutDemand, startedWithoutPeriods })
        {
            Assert.Throws<ArgumentException>(() => target.ImportState(bad));
            Assert.Equal(0, target.Count);
        }

        target.ImportState(good);
        Assert.Equal(f.Forecast(), target.Forecast());
    }
}

public sealed class TsbUnitWeightsTests : TsbContractTests
{
    protected override double ProbabilityWeight => 1.0;

    protected override double SizeWeight => 1.0;

    [Fact]
    public void Forecast_WeightOneAfterZero_IsZero()
    {
        // α = 1: d is 1 after a demand period and 0 after a zero period (DERIVED), so F = last demand or 0.
        var f = Options.CreateForecaster();
        f.Update(0);
        f.Update(6);
        Assert.Equal(3.0, f.Forecast()); // start: d = 1/2
        f.Update(9);
        Assert.Equal(9.0, f.Forecast());
        f.Update(0);
        Assert.Equal(0.0, f.Forecast());
        Assert.True(f.IsWarm);
    }
}
