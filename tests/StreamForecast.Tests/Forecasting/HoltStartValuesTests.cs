using StreamForecast.Forecasting;

namespace StreamForecast.Tests.Forecasting;

/// <summary><see cref="Holt.StartValues"/> for every start rule, and a given start (ℓ₀, b₀) run by hand on a tiny series.</summary>
public sealed class HoltStartValuesTests
{
    [Fact]
    public void Update_GivenStartOnATinySeries_MatchesHandComputation()
    {
        // Hand computation (α = β = 0.5, φ = 1, ℓ₀ = 10, b₀ = 2; every number is exact in binary):
        //   forecast for period 1 = ℓ₀ + b₀ = 12
        //   y₁ = 13: ℓ₁ = 0.5·13 + 0.5·(10 + 2)          = 12.5,     b₁ = 0.5·(12.5 − 10) + 0.5·2          = 2.25
        //   y₂ = 15: ℓ₂ = 0.5·15 + 0.5·(12.5 + 2.25)      = 14.875,   b₂ = 0.5·(14.875 − 12.5) + 0.5·2.25   = 2.3125
        //   y₃ = 14: ℓ₃ = 0.5·14 + 0.5·(14.875 + 2.3125)  = 15.59375, b₃ = 0.5·(15.59375 − 14.875) + 0.5·2.3125 = 1.515625
        //   forecasts: h = 1: 17.109375, h = 2: 18.625
        var f = new Holt(new HoltOptions(0.5, 0.5, start: HoltStart.Given(10, 2)));
        Assert.Equal(12.0, f.Forecast());

        f.Update(13);
        Assert.Equal((12.5, 2.25), (f.Level, f.Trend));
        f.Update(15);
        Assert.Equal((14.875, 2.3125), (f.Level, f.Trend));
        f.Update(14);

        Assert.Equal((15.59375, 1.515625), (f.Level, f.Trend));
        Assert.Equal(17.109375, f.Forecast());
        Assert.Equal(18.625, f.Forecast(2));
        Assert.Equal(new HoltStartValues(HoltStartKind.Given, 0, 10, 2), f.StartValues);
    }

    [Fact]
    public void Update_GivenDampedStartOnATinySeries_MatchesHandComputation()
    {
        // Hand computation (α = β = 0.5, φ = 0.5, ℓ₀ = 10, b₀ = 4):
        //   forecast for period 1 = ℓ₀ + φ·b₀ = 12
        //   y₁ = 16: ℓ₁ = 0.5·16 + 0.5·(10 + 0.5·4) = 14, b₁ = 0.5·(14 − 10) + 0.5·0.5·4 = 3
        //   forecasts: h = 1: 14 + 0.5·3 = 15.5; h = 2: 14 + (0.5 + 0.25)·3 = 16.25
        var f = new Holt(new HoltOptions(0.5, 0.5, 0.5, HoltStart.Given(10, 4)));
        Assert.Equal(12.0, f.Forecast());

        f.Update(16);

        Assert.Equal((14.0, 3.0), (f.Level, f.Trend));
        Assert.Equal(15.5, f.Forecast());
        Assert.Equal(16.25, f.Forecast(2));
    }

    [Fact]
    public void StartValues_FirstTwoActuals_AreFirstActualAndFirstDifferenceBeforeTheData()
    {
        var f = new Holt(new HoltOptions(0.5, 0.5));
        f.Update(3);
        Assert.Null(f.StartValues);

        f.Update(5);

        // FPP 1st ed.: ℓ₀ = y₁ = 3, b₀ = y₂ − y₁ = 2, before the first actual.
        Assert.Equal(new HoltStartValues(HoltStartKind.FirstTwoActuals, 0, 3, 2), f.StartValues);
    }

    [Fact]
    public void StartValues_MeanOfFirstDifferences_AreFirstActualAndMeanDifferenceAfterIt()
    {
        var f = new Holt(new HoltOptions(0.5, 0.5, start: HoltStart.MeanOfFirstDifferences(3)));
        foreach (double y in new[] { 1.0, 2, 4 })
        {
            f.Update(y);
            Assert.Null(f.StartValues);
        }

        f.Update(7);

        // NIST: S₁ = y₁ = 1, b₁ = (y₄ − y₁)/3 = 2, the state after the first actual.
        Assert.Equal(new HoltStartValues(HoltStartKind.MeanOfFirstDifferences, 1, 1, 2), f.StartValues);
    }

    [Fact]
    public void StartValues_FirstActualAndTrend_AreFirstActualAndGivenTrend()
    {
        var f = new Holt(new HoltOptions(0.3623, 1.0, start: HoltStart.FirstActualAndTrend(0.8)));
        Assert.Null(f.StartValues);

        f.Update(6.4);

        Assert.Equal(new HoltStartValues(HoltStartKind.FirstActualAndTrend, 1, 6.4, 0.8), f.StartValues);
    }

    [Fact]
    public void StartValues_AfterImportOfAComputedStart_AreUnknownAndTheStateRoundTrips()
    {
        var options = new HoltOptions(0.5, 0.5);
        var f = new Holt(options);
        foreach (double y in new[] { 3.0, 5, 4, 6 })
        {
            f.Update(y);
        }

        double[] state = f.ExportState();
        var g = (Holt)options.CreateForecaster();
        g.ImportState(state);

        Assert.NotNull(f.StartValues);
        Assert.Null(g.StartValues);
        Assert.Equal(state, g.ExportState());
    }

    [Fact]
    public void StartValues_AfterImportAndResetOfAGivenStart_StayTheGivenValues()
    {
        var options = new HoltOptions(0.5, 0.5, start: HoltStart.Given(10, 2));
        var f = new Holt(options);
        f.Update(13);
        var g = (Holt)options.CreateForecaster();
        g.ImportState(f.ExportState());
        f.Reset();

        Assert.Equal(new HoltStartValues(HoltStartKind.Given, 0, 10, 2), g.StartValues);
        Assert.Equal(new HoltStartValues(HoltStartKind.Given, 0, 10, 2), f.StartValues);
        Assert.Equal(f.ExportState(), options.CreateForecaster().ExportState());
    }
}
