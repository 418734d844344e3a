using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

/// <summary>Test-side names for the published start rules, kept apart from the library's <see cref="HoltStart"/>.</summary>
public enum HoltReferenceStart
{
    /// <summary>FPP 1st ed.: ℓ₀ = y₁, b₀ = y₂ − y₁, equations from y₁ on.</summary>
    FppFirstTwo,

    /// <summary>NIST: S₁ = y₁, b₁ = (y(d+1) − y₁)/d, equations from y₂ on.</summary>
    NistDifferences,

    /// <summary>NIST: S₁ = y₁, b₁ given, equations from y₂ on.</summary>
    NistGivenTrend,

    /// <summary>ℓ₀, b₀ given, equations from y₁ on.</summary>
    GivenLevelAndTrend,
}

public abstract class HoltContractTests : ForecasterContractTests
{
    protected abstract double LevelWeight { get; }

    protected abstract double TrendWeight { get; }

    protected virtual double Damping => 1.0;

    protected abstract HoltReferenceStart ReferenceStart { get; }

    protected virtual int Differences => 1;

    protected virtual double GivenLevel => 0;

    protected virtual double GivenTrend => 0;

    protected abstract HoltStart Start { get; }

    protected override ForecasterOptions Options => new HoltOptions(LevelWeight, TrendWeight, Damping, Start);

    protected override int WarmUpLength => ReferenceStart switch
    {
        HoltReferenceStart.FppFirstTwo => 2,
        HoltReferenceStart.NistDifferences => Differences + 1,
        HoltReferenceStart.NistGivenTrend => 1,
        _ => 0,
    };

    // Batch reference: for each prefix, set the start values as the source does and run the published equations
    // ℓ(t) = α·y(t) + (1−α)(ℓ(t−1) + φ·b(t−1)), b(t) = β(ℓ(t) − ℓ(t−1)) + (1−β)·φ·b(t−1) over the actuals the source
    // runs them over (NIST §6.4.3.3, FPP 1st ed. §7.2/§7.4); the forecast is ℓ + φ·b.
    protected override double[] BatchForecasts(double[] series)
    {
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            if (k < WarmUpLength)
            {
                result[k] = double.NaN;
                continue;
            }

            double level, trend;
            int first;
            switch (ReferenceStart)
            {
                case HoltReferenceStart.FppFirstTwo:
                    level = series[0];
                    trend = series[1] - series[0];
                    first = 0;
                    break;
                case HoltReferenceStart.NistDifferences:
                    level = series[0];
                    trend = (series[Differences] - series[0]) / Differences;
                    first = 1;
                    break;
                case HoltReferenceStart.NistGivenTrend:
                    level = series[0];
                    trend = GivenTrend;
                    first = 1;
                    break;
                default:
                    level = GivenLevel;
                    trend = GivenTrend;
                    first = 0;
                    break;
            }

            for (int t = first; t < k; t++)
            {
                double previous = level;
                level = (LevelWeight * series[t]) + ((1 - LevelWeight) * (previous + (Damping * trend)));
                trend = (TrendWeight * (level - previous)) + ((1 - TrendWeight) * Damping * trend);
            }

            result[k] = level + (Damping * trend);
        }

        return result;
    }
}

public sealed class HoltTests : HoltContractTests
{
    protected override double LevelWeight => 0.4;

    protected override double TrendWeight => 0.2;

    protected override HoltReferenceStart ReferenceStart => HoltReferenceStart.FppFirstTwo;

    protected override HoltStart Start => HoltStart.FirstTwoActuals;

    private static Holt Fed(HoltOptions options, double[] series, int count)
    {
        var f = new Holt(options);
        foreach (double y in series.AsSpan(0, count))
        {
            f.Update(y);
        }

        return f;
    }

    [Fact]
    public void Level_NistDoubleSmoothingExample_MatchesPublishedLevels()
    {
        // NIST/SEMATECH e-Handbook §6.4.3.3–6.4.3.4 (check-values D1, READ): α = 0.3623, γ = 1.0, S₁ = y₁,
        // b₁ = mean of the first three differences = 0.8; S₁..S₁₀ printed to 1 decimal.
        double[] published = [6.4, 6.6, 7.2, 8.1, 9.8, 11.5, 14.5, 16.7, 19.9, 22.8];
        var options = new HoltOptions(0.3623, 1.0, start: HoltStart.FirstActualAndTrend(0.8));
        for (int t = 1; t <= published.Length; t++)
        {
            Assert.Equal(published[t - 1], Math.Round(Fed(options, ReferenceData.NistTrend, t).Level, 1), 10);
        }
    }

    [Fact]
    public void Forecast_NistDoubleSmoothingExample_MatchesPublishedOneStepForecasts()
    {
        // NIST e-Handbook §6.4.3.4 (check-values D1f, READ): F(t+1) = S(t) + b(t). Full precision F₂..F₁₁ as
        // printed (to 4 decimals), and the 1-decimal column F₅..F₁₀.
        double[] published = [7.2, 6.8406, 7.7561, 9.0804, 11.4174, 13.1913, 17.4414, 18.8687, 23.0509, 25.7719];
        double[] rounded = [9.1, 11.4, 13.2, 17.4, 18.9, 23.1];
        var options = new HoltOptions(0.3623, 1.0, start: HoltStart.FirstActualAndTrend(0.8));
        for (int t = 1; t <= published.Length; t++)
        {
            double forecast = Fed(options, ReferenceData.NistTrend, t).Forecast();
            Assert.True(Math.Abs(published[t - 1] - forecast) <= 5e-5, $"F_{t + 1}: {forecast:R}");
            if (t >= 4 && t <= 9)
            {
                Assert.Equal(rounded[t - 4], Math.Round(forecast, 1), 10);
            }
        }
    }

    [Fact]
    public void Forecast_NistMeanOfThreeDifferences_MatchesPublishedFromPeriodFive()
    {
        // NIST e-Handbook §6.4.3.3 (check-values D1/D1f, READ) computes b₁ = 0.8 from the first three differences.
        // That needs y₄, so a stream is warm after 4 actuals; from then on the levels S₄..S₁₀ and forecasts F₅..F₁₁
        // are NIST's (F₂..F₄ use y₄ before it is observed and cannot be issued in a stream).
        double[] levels = [8.1, 9.8, 11.5, 14.5, 16.7, 19.9, 22.8];
        double[] forecasts = [9.0804, 11.4174, 13.1913, 17.4414, 18.8687, 23.0509, 25.7719];
        var options = new HoltOptions(0.3623, 1.0, start: HoltStart.MeanOfFirstDifferences(3));
        var given = new HoltOptions(0.3623, 1.0, start: HoltStart.FirstActualAndTrend(0.8));
        Assert.False(Fed(options, ReferenceData.NistTrend, 3).IsWarm);
        for (int t = 4; t <= 10; t++)
        {
            var f = Fed(options, ReferenceData.NistTrend, t);
            Assert.Equal(levels[t - 4], Math.Round(f.Level, 1), 10);
            Assert.True(Math.Abs(forecasts[t - 4] - f.Forecast()) <= 5e-5, $"F_{t + 1}: {f.Forecast():R}");
            var g = Fed(given, ReferenceData.NistTrend, t);
            Assert.Equal(g.Level, f.Level, 1e-12);
            Assert.Equal(g.Trend, f.Trend, 1e-12);
        }
    }

    [Fact]
    public void Update_NistDoubleSmoothingEquations_MatchHoltWithTrendWeightGamma()
    {
        // NIST e-Handbook §6.4.3.3: S(t) = α·y(t) + (1−α)(S(t−1) + b(t−1)); b(t) = γ(S(t) − S(t−1)) + (1−γ)·b(t−1).
        // These are Holt's equations (FPP 1st ed. §7.2) with trend weight β* = γ and no damping.
        const double alpha = 0.3, gamma = 0.45;
        double[] y = ReferenceData.NistTrend;
        var f = new Holt(new HoltOptions(alpha, gamma, start: HoltStart.FirstActualAndTrend(0.8)));
        f.Update(y[0]);
        double s = y[0], b = 0.8;
        for (int t = 1; t < y.Length; t++)
        {
            double sNext = (alpha * y[t]) + ((1 - alpha) * (s + b));
            b = (gamma * (sNext - s)) + ((1 - gamma) * b);
            s = sNext;
            f.Update(y[t]);
            Assert.Equal(s, f.Level, 1e-12);
            Assert.Equal(b, f.Trend, 1e-12);
            Assert.Equal(s + (3 * b), f.Forecast(3), 1e-12);
        }
    }

    [Fact]
    public void Update_FppFirstTwoActuals_SmoothsFromTheFirstActual()
    {
        // FPP 1st ed. (check-values convention 4): ℓ₀ = y₁ = 10, b₀ = y₂ − y₁ = 2, then the equations over y₁ and y₂
        // (α = β* = 0.5), worked by hand: ℓ₁ = 0.5·10 + 0.5·12 = 11, b₁ = 0.5·1 + 0.5·2 = 1.5; ℓ₂ = 0.5·12 + 0.5·12.5 =
        // 12.25, b₂ = 0.5·1.25 + 0.5·1.5 = 1.375; forecast 13.625. Then y₃ = 13: ℓ₃ = 13.3125, b₃ = 1.21875.
        var f = new Holt(new HoltOptions(0.5, 0.5));
        f.Update(10);
        Assert.False(f.IsWarm);
        f.Update(12);
        Assert.Equal(12.25, f.Level);
        Assert.Equal(1.375, f.Trend);
        Assert.Equal(13.625, f.Forecast());
        f.Update(13);
        Assert.Equal(13.3125, f.Level);
        Assert.Equal(1.21875, f.Trend);
        Assert.Equal(13.3125 + (4 * 1.21875), f.Forecast(4));

        // The NIST rule with one difference starts at S₁ = y₁, b₁ = y₂ − y₁ and runs the equations from y₂ on, which
        // gives S₂ = y₂, b₂ = y₂ − y₁: a different state from the same two actuals.
        var nist = new Holt(new HoltOptions(0.5, 0.5, start: HoltStart.MeanOfFirstDifferences(1)));
        nist.Update(10);
        nist.Update(12);
        Assert.Equal(12.0, nist.Level);
        Assert.Equal(2.0, nist.Trend);
    }

    [Fact]
    public void Forecast_DampedTrend_AddsDampedSumOfTrend()
    {
        // FPP 1st ed. §7.4 (from memory): F(t+h) = ℓ(t) + (φ + φ² + … + φʰ)·b(t); φ = 1 gives ℓ + h·b.
        foreach (double phi in new[] { 0.8, 0.98, 1.0 })
        {
            var f = Fed(new HoltOptions(0.5, 0.3, phi), ReferenceData.NistTrend, 10);
            double sum = 0, power = 1;
            for (int h = 1; h <= 40; h++)
            {
                power *= phi;
                sum += power;
                Approx.Equal(f.Level + (sum * f.Trend), f.Forecast(h), 1e-12, $"φ={phi} h={h}");
            }
        }
    }

    [Fact]
    public void HorizonVarianceRatio_Undamped_MatchesClosedFormAndSumOfSquares()
    {
        // ETS(A,A,N) class 1 (Hyndman, Koehler, Ord & Snyder 2008, from memory): Var(h)/σ² = 1 + Σ_{j<h} c_j²,
        // c_j = α + β_ETS·j with β_ETS = α·β* (Holt's trend weight β*). Closed form: 1 + (h−1)[α² + α·β_ETS·h +
        // β_ETS²·h(2h−1)/6]. Example: α = 0.5, β* = 0.4 → β_ETS = 0.2; h = 3: c₁ = 0.7, c₂ = 0.9, ratio 2.3.
        var f = Fed(new HoltOptions(0.5, 0.4), ReferenceData.NistTrend, 10);
        Assert.Equal(2.3, f.HorizonVarianceRatio(3), 12);
        const double a = 0.5, b = 0.5 * 0.4;
        double sum = 0;
        for (int h = 2; h <= 60; h++)
        {
            double c = a + (b * (h - 1));
            sum += c * c;
            Approx.Equal(1 + sum, f.HorizonVarianceRatio(h), 1e-12, $"sum h={h}");
            double closed = 1 + ((h - 1) * ((a * a) + (a * b * h) + (b * b * h * ((2.0 * h) - 1) / 6)));
            Approx.Equal(closed, f.HorizonVarianceRatio(h), 1e-12, $"closed h={h}");
        }
    }

    [Fact]
    public void HorizonVarianceRatio_Damped_MatchesSumOfSquares()
    {
        // ETS(A,Ad,N) class 1 (from memory): c_j = α(1 + β*·φ(1−φʲ)/(1−φ)), summed plainly here.
        foreach (double phi in new[] { 0.5, 0.9, 0.98 })
        {
            const double a = 0.4, beta = 0.3;
            var f = Fed(new HoltOptions(a, beta, phi), ReferenceData.NistTrend, 10);
            double sum = 0;
            for (int h = 2; h <= 2000; h++)
            {
                int j = h - 1;
                double c = a * (1 + (beta * phi * (1 - Math.Pow(phi, j)) / (1 - phi)));
                sum += c * c;
                Approx.Equal(1 + sum, f.HorizonVarianceRatio(h), 1e-10, $"φ={phi} h={h}");
            }

            // Far horizons stop early once φʲ no longer matters, and stay finite.
            double far = f.HorizonVarianceRatio(int.MaxValue);
            double limit = a * (1 + (beta * phi / (1 - phi)));
            Approx.Equal(1 + sum + ((int.MaxValue - 2000.0) * limit * limit), far, 1e-9, $"φ={phi} far");
        }
    }

    [Theory]
    [InlineData(0.0, 0.5, 1.0)]
    [InlineData(1.5, 0.5, 1.0)]
    [InlineData(double.NaN, 0.5, 1.0)]
    [InlineData(0.5, -0.1, 1.0)]
    [InlineData(0.5, 1.1, 1.0)]
    [InlineData(0.5, double.NaN, 1.0)]
    [InlineData(0.5, 0.5, 0.0)]
    [InlineData(0.5, 0.5, 1.2)]
    [InlineData(0.5, 0.5, double.NaN)]
    public void Constructor_ParameterOutOfRange_Throws(double levelWeight, double trendWeight, double damping)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new HoltOptions(levelWeight, trendWeight, damping));
        Assert.Contains("must be", ex.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentOutOfRangeException>(() => ForecasterOptions.Holt(levelWeight, trendWeight, damping));
    }

    [Fact]
    public void Constructor_BoundaryWeights_AreAccepted()
    {
        Assert.Equal(0.0, new HoltOptions(1.0, 0.0).TrendWeight);
        Assert.Equal(1.0, new HoltOptions(1.0, 1.0, 1.0).Damping);
    }

    [Fact]
    public void HoltStart_InvalidArguments_Throw()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltStart.MeanOfFirstDifferences(0));
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltStart.MeanOfFirstDifferences(HoltStart.MaxDifferences + 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltStart.FirstActualAndTrend(double.NaN));
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltStart.Given(double.PositiveInfinity, 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltStart.Given(0, double.NaN));
    }

    [Fact]
    public void HoltStart_Factories_DescribeTheirRule()
    {
        Assert.Equal(HoltStart.FirstTwoActuals, default);
        Assert.Equal(2, HoltStart.FirstTwoActuals.WarmUpLength);
        Assert.Equal(4, HoltStart.MeanOfFirstDifferences(3).WarmUpLength);
        Assert.Equal(3, HoltStart.MeanOfFirstDifferences(3).Differences);
        Assert.Equal(1, HoltStart.FirstActualAndTrend(0.8).WarmUpLength);
        Assert.Equal(0.8, HoltStart.FirstActualAndTrend(0.8).Trend);
        Assert.Null(HoltStart.FirstActualAndTrend(0.8).Level);
        Assert.Equal(0, HoltStart.Given(5, 1).WarmUpLength);
        Assert.Equal(5.0, HoltStart.Given(5, 1).Level);
        Assert.NotEqual(HoltStart.Given(5, 1), HoltStart.Given(5, 2));
    }

    [Fact]
    public void LevelAndTrend_BeforeWarm_Throw()
    {
        var f = new Holt(new HoltOptions(0.5, 0.5));
        f.Update(1);
        Assert.Throws<InvalidOperationException>(() => f.Level);
        Assert.Throws<InvalidOperationException>(() => f.Trend);
    }

    [Fact]
    public void IsWarm_GivenStart_IsTrueBeforeAnyActual()
    {
        var f = new Holt(new HoltOptions(0.5, 0.5, start: HoltStart.Given(10, 2)));
        Assert.True(f.IsWarm);
        Assert.Equal(12.0, f.Forecast());
        Assert.Equal(16.0, f.Forecast(3));
    }

    [Fact]
    public void Update_ActualThatWouldOverflow_ThrowsAndLeavesStateUnchanged()
    {
        // Repeating the largest double drives level + trend past it within a few updates.
        var f = new Holt(new HoltOptions(0.5, 0.5));
        f.Update(0);
        f.Update(1);
        double[] before = f.ExportState();
        var ex = Record.Exception(() =>
        {
            for (int i = 0; i < 10; i++)
            {
                before = f.ExportState();
                f.Update(double.MaxValue);
            }
        });
        Assert.IsType<ArgumentOutOfRangeException>(ex);
        Assert.Equal(before, f.ExportState());
    }

    [Fact]
    public void ImportState_WarmStateWithWarmUpParts_IsRejected()
    {
        var f = Fed(new HoltOptions(0.5, 0.5), ReferenceData.NistTrend, 5);
        double[] state = f.ExportState();
        state[5] = 1; // the kept first actual must be zero once warm
        Assert.Throws<ArgumentException>(() => new HoltOptions(0.5, 0.5).CreateForecaster().ImportState(state));
    }

    [Fact]
    public void ImportState_GivenStartWithOtherValuesBeforeAnyActual_IsRejected()
    {
        var options = new HoltOptions(0.5, 0.5, start: HoltStart.Given(10, 2));
        double[] state = options.CreateForecaster().ExportState();
        state[2] = 3;
        var f = options.CreateForecaster();
        Assert.Throws<ArgumentException>(() => f.ImportState(state));
        Assert.Equal(12.0, f.Forecast());
    }

    [Fact]
    public void Holt_Factory_EqualsConstructor()
    {
        var options = ForecasterOptions.Holt(0.3623, 1.0, start: HoltStart.FirstActualAndTrend(0.8));
        Assert.Equal(new HoltOptions(0.3623, 1.0, 1.0, HoltStart.FirstActualAndTrend(0.8)), options);
        Assert.Equal("Holt(0.3623, 1, first actual, trend 0.8)", options.MethodName);
        Assert.Equal("Holt(0.5, 0.1, damping 0.9)", ForecasterOptions.Holt(0.5, 0.1, 0.9).MethodName);
        Assert.IsType<Holt>(options.CreateForecaster());
    }
}

public sealed class HoltDampedTests : HoltContractTests
{
    protected override double LevelWeight => 0.5;

    protected override double TrendWeight => 0.3;

    protected override double Damping => 0.85;

    protected override HoltReferenceStart ReferenceStart => HoltReferenceStart.FppFirstTwo;

    protected override HoltStart Start => HoltStart.FirstTwoActuals;
}

public sealed class HoltMeanOfFirstDifferencesTests : HoltContractTests
{
    protected override double LevelWeight => 0.3623;

    protected override double TrendWeight => 0.5;

    protected override int Differences => 3;

    protected override HoltReferenceStart ReferenceStart => HoltReferenceStart.NistDifferences;

    protected override HoltStart Start => HoltStart.MeanOfFirstDifferences(3);
}

public sealed class HoltFirstActualAndTrendTests : HoltContractTests
{
    // Weights that forget the given trend within the 30 actuals of the constant-input check. The given trend is not
    // scaled with the data, so scale equivariance does not hold (shifting keeps it: S₁ = y₁ shifts, b₁ does not).
    protected override double LevelWeight => 0.9;

    protected override double TrendWeight => 0.6;

    protected override double Damping => 0.9;

    protected override double GivenTrend => 0.8;

    protected override HoltReferenceStart ReferenceStart => HoltReferenceStart.NistGivenTrend;

    protected override HoltStart Start => HoltStart.FirstActualAndTrend(0.8);

    protected override bool IsScaleEquivariant => false;
}

public sealed class HoltGivenStartTests : HoltContractTests
{
    // Given ℓ₀ and b₀ are neither shifted nor scaled with the data.
    protected override double LevelWeight => 0.9;

    protected override double TrendWeight => 0.6;

    protected override double Damping => 0.9;

    protected override double GivenLevel => 50;

    protected override double GivenTrend => 2;

    protected override HoltReferenceStart ReferenceStart => HoltReferenceStart.GivenLevelAndTrend;

    protected override HoltStart Start => HoltStart.Given(50, 2);

    protected override bool IsShiftEquivariant => false;

    protected override bool IsScaleEquivariant => false;
}
