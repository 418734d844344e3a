using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

public abstract class CrostonContractTests : ForecasterContractTests
{
    protected abstract double SizeWeight { get; }

    protected virtual double IntervalWeight => SizeWeight;

    protected virtual CrostonVariant Variant => CrostonVariant.Classic;

    protected override ForecasterOptions Options => new CrostonOptions(SizeWeight, IntervalWeight, Variant);

    protected override SeriesDomain Domain => SeriesDomain.Intermittent;

    // Adding a constant turns every zero into demand, so the zero/non-zero pattern (and the method) changes.
    protected override bool IsShiftEquivariant => false;

    protected override double[] OutOfDomainActuals => [-1, -0.01];

    // Warm once the first non-zero demand of the sample has been seen.
    protected override int WarmUpLength => Array.FindIndex(Sample, v => v > 0) + 1;

    // Constant positive demand keeps z = level and p = 1; SBA multiplies by (1 − α_interval/2)
    // (Syntetos & Boylan 2005; the factor's α is the interval weight, see CrostonOptions remarks).
    protected override double ConstantForecast(double level) =>
        Variant == CrostonVariant.SyntetosBoylan ? level * (1 - (IntervalWeight / 2)) : level;

    // Batch reference, written from Croston (1972) and check-values convention 5: walk the prefix, and at every
    // demand compute the interval q since the previous demand (since the start for the first), then
    // z = αy + (1 − α)z, p = α_p·q + (1 − α_p)p; the first demand sets z = y, p = q. Forecast z/p, times
    // (1 − α_p/2) for SBA.
    protected override double[] BatchForecasts(double[] series)
    {
        double factor = Variant == CrostonVariant.SyntetosBoylan ? 1 - (IntervalWeight / 2) : 1;
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            double z = double.NaN, p = double.NaN;
            int previousDemand = -1; // a virtual demand just before the series starts
            bool seen = false;
            for (int i = 0; i < k; i++)
            {
                if (series[i] == 0)
                {
                    continue;
                }

                int q = i - previousDemand;
                if (!seen)
                {
                    z = series[i];
                    p = q;
                    seen = true;
                }
                else
                {
                    z = (SizeWeight * series[i]) + ((1 - SizeWeight) * z);
                    p = (IntervalWeight * q) + ((1 - IntervalWeight) * p);
                }

                previousDemand = i;
            }

            result[k] = seen ? factor * z / p : double.NaN;
        }

        return result;
    }

    protected static double[] Run(CrostonOptions options, double[] series)
    {
        var f = options.CreateForecaster();
        var forecasts = new double[series.Length];
        for (int i = 0; i < series.Length; i++)
        {
            f.Update(series[i]);
            f.TryForecast(1, out forecasts[i]);
        }

        return forecasts;
    }
}

public sealed class CrostonTests : CrostonContractTests
{
    protected override double SizeWeight => 0.1;

    [Fact]
    public void Forecast_HandWorkedSeries_MatchesArithmetic()
    {
        // DERIVED by hand from the published method (Croston 1972; check-values convention 5), α = α_p = 0.5,
        // start rule: the first demand sets z = y and p = periods since the start.
        //   t=1: 0            → not warm
        //   t=2: 0            → not warm
        //   t=3: 5, q=3       → z = 5,                   p = 3                   → F = 5/3
        //   t=4: 0            → unchanged                                      → F = 5/3
        //   t=5: 3, q=2       → z = 5 + 0.5(3 − 5) = 4,  p = 3 + 0.5(2 − 3) = 2.5 → F = 1.6
        //   t=6..8: 0         → unchanged                                      → F = 1.6
        //   t=9: 4, q=4       → z = 4 + 0.5(4 − 4) = 4,  p = 2.5 + 0.5(4 − 2.5) = 3.25 → F = 4/3.25
        double[] demand = [0, 0, 5, 0, 3, 0, 0, 0, 4];
        double[] expected = [double.NaN, double.NaN, 5.0 / 3, 5.0 / 3, 1.6, 1.6, 1.6, 1.6, 4 / 3.25];
        double[] actual = Run(new CrostonOptions(0.5), demand);
        for (int i = 0; i < demand.Length; i++)
        {
            Assert.True(Approx.Close(expected[i], actual[i], 1e-14), $"t={i + 1}: expected {expected[i]}, got {actual[i]}");
        }

        var f = (Croston)new CrostonOptions(0.5).CreateForecaster();
        foreach (double y in demand)
        {
            f.Update(y);
        }

        Assert.Equal(4.0, f.DemandSize);
        Assert.Equal(3.25, f.DemandInterval);
    }

    [Fact]
    public void Update_FirstDemand_SetsSizeAndIntervalSinceStart()
    {
        // Start rule (this library's documented convention): a demand in period 1 gives p = 1;
        // after three zeros a demand of 8 in period 4 gives z = 8, p = 4, F = 2.
        var first = (Croston)new CrostonOptions().CreateForecaster();
        first.Update(7);
        Assert.True(first.IsWarm);
        Assert.Equal(7.0, first.DemandSize);
        Assert.Equal(1.0, first.DemandInterval);
        Assert.Equal(7.0, first.Forecast());

        var later = (Croston)new CrostonOptions().CreateForecaster();
        foreach (double y in new double[] { 0, 0, 0 })
        {
            later.Update(y);
            Assert.False(later.IsWarm);
        }

        later.Update(8);
        Assert.Equal(8.0, later.DemandSize);
        Assert.Equal(4.0, later.DemandInterval);
        Assert.Equal(2.0, later.Forecast());
    }

    [Fact]
    public void Forecast_RunOfZeros_StaysFlatForEveryHorizon()
    {
        // Croston updates only in demand periods (check-values convention 5): zeros leave the forecast unchanged.
        var f = new CrostonOptions(0.2).CreateForecaster();
        foreach (double y in new double[] { 0, 4, 0, 6, 2 })
        {
            f.Update(y);
        }

        double level = f.Forecast();
        for (int i = 0; i < 50; i++)
        {
            f.Update(0);
            Assert.Equal(level, f.Forecast());
            Assert.Equal(level, f.Forecast(12));
        }
    }

    [Fact]
    public void Update_NegativeDemand_ThrowsSayingWhatIsAllowed()
    {
        var f = new CrostonOptions().CreateForecaster();
        f.Update(3);
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => f.Update(-2));
        Assert.Contains("zero or more", ex.Message, StringComparison.Ordinal);
        Assert.Equal(1, f.Count);
    }

    [Fact]
    public void HorizonVarianceRatio_AnyHorizon_IsOne()
    {
        // Flat forecast under a stationary intermittent model: no growth of error with horizon (documented assumption).
        var f = new CrostonOptions().CreateForecaster();
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
    [InlineData(double.PositiveInfinity)]
    public void Constructor_WeightOutsideZeroToOne_Throws(double weight)
    {
        var size = Assert.Throws<ArgumentOutOfRangeException>(() => new CrostonOptions(weight));
        Assert.Equal("sizeWeight", size.ParamName);
        Assert.Contains("greater than 0 and at most 1", size.Message, StringComparison.Ordinal);
        var interval = Assert.Throws<ArgumentOutOfRangeException>(() => new CrostonOptions(0.1, weight));
        Assert.Equal("intervalWeight", interval.ParamName);
        Assert.Throws<ArgumentOutOfRangeException>(() => ForecasterOptions.SyntetosBoylan(weight));
    }

    [Fact]
    public void Constructor_UndefinedVariant_Throws()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new CrostonOptions(0.1, null, (CrostonVariant)7));
        Assert.Equal("variant", ex.ParamName);
    }

    [Fact]
    public void Constructor_NoIntervalWeight_UsesSizeWeight()
    {
        var options = new CrostonOptions(0.3);
        Assert.Equal(0.3, options.IntervalWeight);
        Assert.Equal(new CrostonOptions(0.3, 0.3), options);
        Assert.Equal(1.0, options.BiasFactor);
        Assert.Equal("Croston(0.3)", options.MethodName);
        Assert.Equal("Croston(0.3, 0.05)", new CrostonOptions(0.3, 0.05).MethodName);
        Assert.Equal("SBA(0.3)", new CrostonOptions(0.3, null, CrostonVariant.SyntetosBoylan).MethodName);
        var weightOne = new CrostonOptions(1);
        Assert.Equal(1.0, weightOne.SizeWeight);
    }

    [Fact]
    public void Factories_Shorthands_EqualConstructedOptions()
    {
        Assert.Equal(new CrostonOptions(), ForecasterOptions.Croston());
        Assert.Equal(new CrostonOptions(0.2, 0.05), ForecasterOptions.Croston(0.2, 0.05));
        Assert.Equal(new CrostonOptions(0.2, null, CrostonVariant.SyntetosBoylan), ForecasterOptions.SyntetosBoylan(0.2));
        Assert.Equal(new CrostonOptions(0.2, 0.05, CrostonVariant.SyntetosBoylan), ForecasterOptions.SyntetosBoylan(0.2, 0.05));
        Assert.Equal(CrostonOptions.DefaultWeight, ForecasterOptions.Croston().SizeWeight);
        Assert.IsType<Croston>(ForecasterOptions.Croston().CreateForecaster());
    }

    [Fact]
    public void ImportState_ImpossibleValues_AreRejected()
    {
        var f = new CrostonOptions().CreateForecaster();
        foreach (double y in new double[] { 0, 3, 0, 0, 5 })
        {
            f.Update(y);
        }

        double[] good = f.ExportState(); // count, z, p, periods since demand
        var target = new CrostonOptions().CreateForecaster();
        double[] intervalBelowOne = (double[])good.Clone();
        intervalBelowOne[2] = 0.5;
        double[] negativeSize = (double[])good.Clone();
        negativeSize[1] = -1;
        double[] fractionalSince = (double[])good.Clone();
        fractionalSince[3] = 0.5;
        double[] sizeWithoutDemand = [2, 4, 0, 2];
        double[] sinceNotCount = [2, 0, 0, 1];
        foreach (double[] bad in new[] { intervalBelowOne, negativeSize, fractionalSince, sizeWithoutDemand, sinceNotCount })
        {
            Assert.Throws<ArgumentException>(() => target.ImportState(bad));
            Assert.Equal(0, target.Count);
        }

        target.ImportState(good);
        Assert.Equal(f.Forecast(), target.Forecast());
    }
}

public sealed class CrostonSeparateWeightsTests : CrostonContractTests
{
    protected override double SizeWeight => 0.2;

    protected override double IntervalWeight => 0.05;
}

public sealed class CrostonUnitWeightTests : CrostonContractTests
{
    protected override double SizeWeight => 1.0;

    [Fact]
    public void Forecast_WeightOne_IsLastDemandOverLastInterval()
    {
        // With α = α_p = 1 the smoothed values are the latest ones (DERIVED): after 0,6,0,0,9 the forecast is 9/3.
        var f = Options.CreateForecaster();
        foreach (double y in new double[] { 0, 6, 0, 0, 9 })
        {
            f.Update(y);
        }

        Assert.Equal(3.0, f.Forecast());
    }
}

public sealed class SyntetosBoylanTests : CrostonContractTests
{
    protected override double SizeWeight => 0.1;

    protected override CrostonVariant Variant => CrostonVariant.SyntetosBoylan;

    [Fact]
    public void Forecast_HandWorkedSeries_IsCrostonTimesThreeQuarters()
    {
        // α = 0.5: SBA factor 1 − 0.5/2 = 0.75 (Syntetos & Boylan 2005) applied to the hand-worked Croston forecasts
        // 5/3, 1.6, 4/3.25 (see CrostonTests) gives 1.25, 1.2, 0.923077 (DERIVED).
        double[] demand = [0, 0, 5, 0, 3, 0, 0, 0, 4];
        double[] expected = [double.NaN, double.NaN, 1.25, 1.25, 1.2, 1.2, 1.2, 1.2, 0.75 * 4 / 3.25];
        double[] actual = Run(ForecasterOptions.SyntetosBoylan(0.5), demand);
        for (int i = 0; i < demand.Length; i++)
        {
            Assert.True(Approx.Close(expected[i], actual[i], 1e-14), $"t={i + 1}: expected {expected[i]}, got {actual[i]}");
        }
    }

    [Theory]
    [InlineData(0.05, 0.05)]
    [InlineData(0.2, 0.2)]
    [InlineData(1.0, 1.0)]
    [InlineData(0.3, 0.1)]
    [InlineData(0.1, 0.4)]
    public void Forecast_RandomIntermittentSeries_IsCrostonTimesOneMinusHalfIntervalWeight(double sizeWeight, double intervalWeight)
    {
        // Syntetos & Boylan (2005): SBA = Croston × (1 − α/2), α the interval smoothing weight (CrostonOptions remarks).
        double factor = 1 - (intervalWeight / 2);
        var rng = new Random(11);
        var croston = ForecasterOptions.Croston(sizeWeight, intervalWeight).CreateForecaster();
        var sba = ForecasterOptions.SyntetosBoylan(sizeWeight, intervalWeight).CreateForecaster();
        Assert.Equal(factor, ((CrostonOptions)sba.Options).BiasFactor);
        for (int t = 0; t < 500; t++)
        {
            double y = rng.NextDouble() < 0.3 ? Math.Round(rng.NextDouble() * 20, 1) : 0;
            croston.Update(y);
            sba.Update(y);
            Assert.Equal(croston.TryForecast(1, out double c), sba.TryForecast(1, out double s));
            if (croston.IsWarm)
            {
                Approx.Equal(c * factor, s, 1e-14, $"t={t}");
                Approx.Equal(c * factor, sba.Forecast(7), 1e-14, $"t={t} h=7");
            }
        }
    }
}

public sealed class SyntetosBoylanSeparateWeightsTests : CrostonContractTests
{
    protected override double SizeWeight => 0.3;

    protected override double IntervalWeight => 0.1;

    protected override CrostonVariant Variant => CrostonVariant.SyntetosBoylan;

    [Fact]
    public void Forecast_ConstantDemand_UsesIntervalWeightInFactor()
    {
        // Constant demand 10 every period: z = 10, p = 1; factor 1 − 0.1/2 = 0.95 (interval weight), not 1 − 0.3/2.
        var f = Options.CreateForecaster();
        for (int i = 0; i < 5; i++)
        {
            f.Update(10);
        }

        Assert.Equal(9.5, f.Forecast(), 12);
    }
}
