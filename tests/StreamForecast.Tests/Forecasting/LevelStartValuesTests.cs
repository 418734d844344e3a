using StreamForecast.Forecasting;

namespace StreamForecast.Tests.Forecasting;

/// <summary><see cref="ExponentialSmoothing.StartValues"/> for every start rule, and a given start ℓ₀ run by hand on a tiny series.</summary>
public sealed class LevelStartValuesTests
{
    [Fact]
    public void Update_GivenStartOnATinySeries_MatchesHandComputation()
    {
        // Hand computation (α = 0.25, ℓ₀ = 10; every number is exact in binary):
        //   forecast for period 1 = ℓ₀ = 10
        //   y₁ = 12: ℓ₁ = 0.25·12 + 0.75·10     = 10.5
        //   y₂ = 8:  ℓ₂ = 0.25·8  + 0.75·10.5   = 9.875
        //   y₃ = 11: ℓ₃ = 0.25·11 + 0.75·9.875  = 10.15625, the forecast for every horizon
        var f = new ExponentialSmoothing(new ExponentialSmoothingOptions(0.25, LevelStart.Given(10)));
        Assert.Equal(10.0, f.Forecast());

        f.Update(12);
        Assert.Equal(10.5, f.Level);
        f.Update(8);
        Assert.Equal(9.875, f.Level);
        f.Update(11);

        Assert.Equal(10.15625, f.Forecast());
        Assert.Equal(10.15625, f.Forecast(3));
        Assert.Equal(new LevelStartValues(LevelStartKind.Given, 0, 10), f.StartValues);
    }

    [Fact]
    public void StartValues_FirstActual_IsTheFirstActualAfterIt()
    {
        var f = new ExponentialSmoothing(new ExponentialSmoothingOptions(0.3));
        Assert.Null(f.StartValues);

        f.Update(7);
        f.Update(9);

        Assert.Equal(new LevelStartValues(LevelStartKind.FirstActual, 1, 7), f.StartValues);
    }

    [Fact]
    public void StartValues_MeanOfFirst_IsTheMeanOfTheFirstActuals()
    {
        var f = new ExponentialSmoothing(new ExponentialSmoothingOptions(0.3, LevelStart.MeanOfFirst(3)));
        f.Update(2);
        f.Update(4);
        Assert.Null(f.StartValues);

        f.Update(9);

        Assert.Equal(new LevelStartValues(LevelStartKind.MeanOfFirst, 3, 5), f.StartValues);
    }

    [Fact]
    public void StartValues_AfterImportOfAComputedStart_AreUnknownAndTheStateRoundTrips()
    {
        var options = new ExponentialSmoothingOptions(0.3);
        var f = new ExponentialSmoothing(options);
        f.Update(7);
        f.Update(9);
        double[] state = f.ExportState();
        var g = (ExponentialSmoothing)options.CreateForecaster();

        g.ImportState(state);

        Assert.Null(g.StartValues);
        Assert.Equal(state, g.ExportState());
    }

    [Fact]
    public void StartValues_AfterImportAndResetOfAGivenStart_StayTheGivenLevel()
    {
        var options = new ExponentialSmoothingOptions(0.25, LevelStart.Given(10));
        var f = new ExponentialSmoothing(options);
        f.Update(12);
        var g = (ExponentialSmoothing)options.CreateForecaster();
        g.ImportState(f.ExportState());
        f.Reset();

        Assert.Equal(new LevelStartValues(LevelStartKind.Given, 0, 10), g.StartValues);
        Assert.Equal(new LevelStartValues(LevelStartKind.Given, 0, 10), f.StartValues);
    }
}
