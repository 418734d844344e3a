using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

public sealed class NaiveTests : ForecasterContractTests
{
    protected override ForecasterOptions Options => new NaiveOptions();

    protected override int WarmUpLength => 1;

    protected override double[] BatchForecasts(double[] series)
    {
        var result = new double[series.Length + 1];
        result[0] = double.NaN;
        for (int k = 1; k <= series.Length; k++)
        {
            result[k] = series[k - 1];
        }

        return result;
    }

    [Fact]
    public void Forecast_NistTrendSeries_IsLastActualForEveryHorizon()
    {
        // check-values NV1 (DERIVED): naive forecast on the NIST §6.4.3.3 series; next forecast 22.4.
        var f = new NaiveOptions().CreateForecaster();
        foreach (double y in ReferenceData.NistTrend)
        {
            f.Update(y);
        }

        Assert.Equal(22.4, f.Forecast());
        Assert.Equal(22.4, f.Forecast(5));
        // Random-walk model: the h-step variance is h times the one-step variance (FPP, from memory).
        Assert.Equal(5.0, f.HorizonVarianceRatio(5));
    }

    [Fact]
    public void Constructor_SeasonLengthOutOfRange_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new NaiveOptions(0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new NaiveOptions(NaiveOptions.MaxSeasonLength + 1));
    }
}

public sealed class SeasonalNaiveForecasterTests : ForecasterContractTests
{
    private const int M = 7;

    protected override ForecasterOptions Options => new NaiveOptions(M);

    protected override int WarmUpLength => M;

    protected override double[] BatchForecasts(double[] series)
    {
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            result[k] = k >= M ? series[k - M] : double.NaN;
        }

        return result;
    }

    [Fact]
    public void Forecast_EveryHorizon_RepeatsTheLastSeason()
    {
        // Seasonal naive: F(T+h) = y(T+h−m·k), k = ⌈h/m⌉ (common practice; FPP §3.1, from memory).
        var f = new NaiveOptions(4).CreateForecaster();
        double[] y = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
        foreach (double v in y)
        {
            f.Update(v);
        }

        // The last season is 7, 8, 9, 10; the next periods repeat it.
        double[] expected = [7, 8, 9, 10, 7, 8, 9, 10, 7];
        for (int h = 1; h <= expected.Length; h++)
        {
            Assert.Equal(expected[h - 1], f.Forecast(h));
        }

        Assert.Equal(1.0, f.HorizonVarianceRatio(4));
        Assert.Equal(2.0, f.HorizonVarianceRatio(5));
        Assert.Equal("SeasonalNaive(4)", f.Options.MethodName);
    }
}
