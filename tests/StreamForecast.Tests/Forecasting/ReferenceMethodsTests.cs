using StreamForecast.Forecasting;

namespace StreamForecast.Tests.Forecasting;

/// <summary>The slower copies <see cref="ReferenceMethods.Slower"/> derives, by the rule its documentation states.</summary>
public sealed class ReferenceMethodsTests
{
    [Fact]
    public void Slower_SmoothingMethods_ScalesEveryWeightAndKeepsTheRest()
    {
        var ses = Assert.IsType<ExponentialSmoothingOptions>(ReferenceMethods.Slower(new ExponentialSmoothingOptions(0.8, LevelStart.Given(50))));
        Assert.Equal(0.2, ses.Alpha, 15);
        Assert.Equal(LevelStart.Given(50), ses.Start);

        var holt = Assert.IsType<HoltOptions>(ReferenceMethods.Slower(new HoltOptions(0.9, 0.4, 0.95), 0.5));
        Assert.Equal((0.45, 0.2, 0.95), (holt.LevelWeight, holt.TrendWeight, holt.Damping));

        var hw = Assert.IsType<HoltWintersOptions>(ReferenceMethods.Slower(new HoltWintersOptions(7, Seasonality.Additive, 0.4, 0.2, 0.8, 0.9, 3)));
        Assert.Equal((7, Seasonality.Additive, 0.1, 0.05, 0.2, 0.9, 3), (hw.SeasonLength, hw.Seasonality, hw.LevelWeight, hw.TrendWeight, hw.SeasonalWeight, hw.Damping, hw.StartSeasons));

        var croston = Assert.IsType<CrostonOptions>(ReferenceMethods.Slower(new CrostonOptions(0.2, 0.1, CrostonVariant.SyntetosBoylan)));
        Assert.Equal((0.05, 0.025, CrostonVariant.SyntetosBoylan), (croston.SizeWeight, croston.IntervalWeight, croston.Variant));

        var tsb = Assert.IsType<TsbOptions>(ReferenceMethods.Slower(new TsbOptions(0.2, 0.4)));
        Assert.Equal((0.05, 0.1), (tsb.ProbabilityWeight, tsb.SizeWeight));
    }

    [Theory]
    [InlineData(3, 0.25, 15)] // (3 + 1)/0.25 − 1: the MA whose average age matches SES at α/4 when α = 2/(n + 1) (common practice)
    [InlineData(12, 0.25, 51)]
    [InlineData(7, 0.5, 15)]
    [InlineData(5, 1.0, 5)]
    [InlineData(600_000, 0.25, MovingAverageOptions.MaxLength)]
    public void Slower_MovingAverage_LengthensTheWindowBySameAverageAge(int length, double scale, int expected) =>
        Assert.Equal(expected, Assert.IsType<MovingAverageOptions>(ReferenceMethods.Slower(new MovingAverageOptions(length), scale)).Length);

    [Fact]
    public void Slower_Naive_IsAMovingAverageOfSeven() =>
        Assert.Equal(new MovingAverageOptions(7), ReferenceMethods.Slower(new NaiveOptions()));

    [Fact]
    public void Slower_MethodsWithoutAnObviousSlowerCopy_ThrowNamingTheMethod()
    {
        Assert.Contains("WMA", Assert.Throws<ArgumentException>(() => ReferenceMethods.Slower(new WeightedMovingAverageOptions([3, 2, 1]))).Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentException>(() => ReferenceMethods.Slower(new NaiveOptions(7)));
        Assert.Throws<ArgumentNullException>(() => ReferenceMethods.Slower(null!));
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-0.1)]
    [InlineData(1.5)]
    [InlineData(double.NaN)]
    public void Slower_ScaleOutOfRange_Throws(double scale) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => ReferenceMethods.Slower(new ExponentialSmoothingOptions(0.5), scale));
}
