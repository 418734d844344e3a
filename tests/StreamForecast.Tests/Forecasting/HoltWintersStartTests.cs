using System.Globalization;
using FsCheck;
using FsCheck.Fluent;
using MathNet.Numerics;
using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

/// <summary>
/// The contract suite on the classical-decomposition start. The batch reference is written out plainly: the centred moving
/// average by direct sums, the detrended values averaged and normalised, and the straight line through the centred averages
/// from MathNet.Numerics' <c>Fit.Line</c> (an outside least-squares reference), evaluated at period m.
/// </summary>
public abstract class HoltWintersDecompositionContractTests : HoltWintersContractTests
{
    protected override HoltWintersStart Start => HoltWintersStart.ClassicalDecomposition;

    protected override (int Period, double Level, double Trend, double[] Indices) BatchStart(double[] series)
    {
        int m = SeasonLength, length = StartSeasons * SeasonLength, half = m / 2;
        var xs = new List<double>();
        var cma = new List<double>();
        var detrended = new List<double>[m];
        for (int i = 0; i < m; i++)
        {
            detrended[i] = [];
        }

        for (int t = half; t < length - half; t++)
        {
            double sum = 0;
            if (m % 2 == 0)
            {
                sum = (0.5 * series[t - half]) + (0.5 * series[t + half]);
                for (int j = t - half + 1; j <= t + half - 1; j++)
                {
                    sum += series[j];
                }
            }
            else
            {
                for (int j = t - half; j <= t + half; j++)
                {
                    sum += series[j];
                }
            }

            double centred = sum / m;
            xs.Add(t + 1);
            cma.Add(centred);
            detrended[t % m].Add(Multiplicative ? series[t] / centred : series[t] - centred);
        }

        var s = new double[m];
        for (int i = 0; i < m; i++)
        {
            s[i] = detrended[i].Average();
        }

        double mean = s.Average();
        for (int i = 0; i < m; i++)
        {
            s[i] = Multiplicative ? s[i] / mean : s[i] - mean;
        }

        (double intercept, double slope) = Fit.Line(xs.ToArray(), cma.ToArray());
        return (m, intercept + (slope * m), slope, s);
    }
}

public sealed class HoltWintersDecompositionAdditiveTests : HoltWintersDecompositionContractTests
{
    // Even m (2×m centred average) and three start seasons.
    protected override int SeasonLength => 4;

    protected override int StartSeasons => 3;

    protected override bool Multiplicative => false;

    protected override double LevelWeight => 0.4;

    protected override double TrendWeight => 0.1;

    protected override double SeasonalWeight => 0.3;
}

public sealed class HoltWintersDecompositionMultiplicativeTests : HoltWintersDecompositionContractTests
{
    // Odd m (plain m-term centred average); weights as the season-means multiplicative suite, whose comment explains them.
    protected override int SeasonLength => 5;

    protected override bool Multiplicative => true;

    protected override double LevelWeight => 0.6;

    protected override double TrendWeight => 0.05;

    protected override double SeasonalWeight => 0.2;

    protected override double Damping => 0.5;

    protected override SeriesDomain Domain => SeriesDomain.Positive;

    protected override bool IsShiftEquivariant => false;

    protected override double[] OutOfDomainActuals => [-1, -0.01];
}

public sealed class HoltWintersGivenStartContractTests : HoltWintersContractTests
{
    // A given state is neither shifted nor scaled with the data. The weights and strong damping let 30 constant actuals
    // forget the given state to 1e-12 (the contract's constant-input check; chosen by a one-off simulation of the equations:
    // the largest forecast error after 30 constant actuals is below 1e-13, after 20 about 2e-10).
    protected override int SeasonLength => 2;

    protected override bool Multiplicative => false;

    protected override double LevelWeight => 0.1;

    protected override double TrendWeight => 0.1;

    protected override double SeasonalWeight => 0.95;

    protected override double Damping => 0.1;

    protected override HoltWintersStart Start => HoltWintersStart.Given(5, 0.5, [-1, 1]);

    protected override bool IsShiftEquivariant => false;

    protected override bool IsScaleEquivariant => false;

    protected override (int Period, double Level, double Trend, double[] Indices) BatchStart(double[] series) => (0, 5, 0.5, [-1, 1]);

}

public sealed class HoltWintersStartTests
{
    private static readonly Lazy<double[]> s_co2Monthly = new(() => File.ReadLines(Path.Combine(AppContext.BaseDirectory, "Data", "co2-monthly-1959-1997.csv"))
        .Skip(1)
        .Select(line => double.Parse(line.Split(',')[1], CultureInfo.InvariantCulture))
        .ToArray());

    private static HoltWinters Fed(HoltWintersOptions options, ReadOnlySpan<double> series)
    {
        var f = new HoltWinters(options);
        foreach (double y in series)
        {
            f.Update(y);
        }

        return f;
    }

    [Fact]
    public void Update_R1MonthlyCo2WithDecompositionStart_EndsAtPublishedCoefficients()
    {
        // Check value R1 (../shared/reference/check-values.md): the documentation example of the R function HoltWinters on
        // R's co2 data set (monthly Mauna Loa CO2, 1959–1997, Data/co2-monthly-1959-1997.csv), additive, start from a
        // classical decomposition of the first two seasons, with the weights R fitted: α = 0.5126484, β = 0.009430,
        // γ = 0.4728868. R prints a ≈ 364.7616, b ≈ 0.1247, s1 ≈ 0.2215, s12 ≈ −0.5844 (MEMORY; a loose check, so the
        // tolerance is 2e-3 as check-values.md advises "within ~1e-3").
        double[] co2 = s_co2Monthly.Value;
        Assert.Equal(468, co2.Length);
        var options = new HoltWintersOptions(12, Seasonality.Additive, 0.5126484, 0.009430, 0.4728868, start: HoltWintersStart.ClassicalDecomposition);

        HoltWinters f = Fed(options, co2);

        Assert.Equal(364.7616, f.Level, 2e-3);
        Assert.Equal(0.1247, f.Trend, 2e-3);
        Assert.Equal(0.2215, f.SeasonalIndex(1), 2e-3);
        Assert.Equal(-0.5844, f.SeasonalIndex(12), 2e-3);
    }

    [Fact]
    public void StartValues_DecompositionEvenSeason_MatchesHandComputation()
    {
        // Derived by hand: m = 2, y = 4, 8, 6, 10. 2×2 centred averages at periods 2 and 3: (0.5·4 + 8 + 0.5·6)/2 = 6.5 and
        // (0.5·8 + 6 + 0.5·10)/2 = 7.5. Detrended: period 2 (position 2) 8 − 6.5 = 1.5, period 3 (position 1) 6 − 7.5 = −1.5;
        // their mean is 0, so normalising changes nothing. Line through (2, 6.5), (3, 7.5): slope 1, value 6.5 at period m = 2.
        HoltWinters f = Fed(new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.5, 0.5, start: HoltWintersStart.ClassicalDecomposition), [4, 8, 6, 10]);

        HoltWintersStartValues start = f.StartValues!;
        Assert.Equal(HoltWintersStartKind.ClassicalDecomposition, start.Kind);
        Assert.Equal(2, start.Period);
        Assert.Equal(6.5, start.Level, 1e-12);
        Assert.Equal(1.0, start.Trend, 1e-12);
        Assert.Equal(-1.5, start.SeasonalIndices[0], 1e-12);
        Assert.Equal(1.5, start.SeasonalIndices[1], 1e-12);

        // Then periods 3 and 4 pass through the equations (derived by hand, α = β = γ = 0.5):
        // ℓ3 = 0.5·(6 + 1.5) + 0.5·(6.5 + 1) = 7.5, b3 = 0.5·1 + 0.5·1 = 1, s(pos 1) = 0.5·(6 − 7.5) + 0.5·(−1.5) = −1.5;
        // ℓ4 = 0.5·(10 − 1.5) + 0.5·(7.5 + 1) = 8.5, b4 = 1, s(pos 2) = 0.5·(10 − 8.5) + 0.5·1.5 = 1.5; F5 = 8.5 + 1 − 1.5 = 8.
        Assert.Equal(8.5, f.Level, 1e-12);
        Assert.Equal(1.0, f.Trend, 1e-12);
        Assert.Equal(8.0, f.Forecast(1), 1e-12);
    }

    [Fact]
    public void StartValues_DecompositionEvenSeasonMultiplicative_MatchesHandComputation()
    {
        // Derived by hand, same data: ratios 8/6.5 = 16/13 (position 2) and 6/7.5 = 0.8 (position 1); their mean is 66/65, so
        // the normalised indices are 0.8·65/66 = 52/66 and (16/13)·65/66 = 80/66. Level and trend as the additive case.
        HoltWinters f = Fed(new HoltWintersOptions(2, Seasonality.Multiplicative, 0.5, 0.5, 0.5, start: HoltWintersStart.ClassicalDecomposition), [4, 8, 6, 10]);

        HoltWintersStartValues start = f.StartValues!;
        Assert.Equal(6.5, start.Level, 1e-12);
        Assert.Equal(1.0, start.Trend, 1e-12);
        Assert.Equal(52.0 / 66, start.SeasonalIndices[0], 1e-12);
        Assert.Equal(80.0 / 66, start.SeasonalIndices[1], 1e-12);
    }

    [Fact]
    public void StartValues_DecompositionOddSeason_MatchesHandComputation()
    {
        // Derived by hand: m = 3, y = 3, 6, 9, 6, 9, 12. 3-term centred averages at periods 2 … 5: 6, 7, 8, 9. Detrended:
        // period 2 (position 2) 0, period 3 (position 3) 2, period 4 (position 1) −2, period 5 (position 2) 0; indices −2, 0, 2
        // (mean 0). Line through (2, 6) … (5, 9): slope 1, value 7 at period m = 3.
        HoltWinters f = Fed(new HoltWintersOptions(3, Seasonality.Additive, 0.3, 0.1, 0.2, start: HoltWintersStart.ClassicalDecomposition), [3, 6, 9, 6, 9, 12]);

        HoltWintersStartValues start = f.StartValues!;
        Assert.Equal(3, start.Period);
        Assert.Equal(7.0, start.Level, 1e-12);
        Assert.Equal(1.0, start.Trend, 1e-12);
        Assert.Equal([-2.0, 0.0, 2.0], start.SeasonalIndices.Select(v => Math.Round(v, 12)).ToArray());
    }

    [Fact]
    public void StartValues_SeasonMeans_AreTheNistStartValues()
    {
        // NIST/SEMATECH e-Handbook §6.4.3.5 (check value T0): quarterly data, yearly means 380 and 419, so the start level is
        // A₁ = 380 and the trend (419 − 380)/4 = 9.75 (b MEMORY, reproduces).
        double[] quarterly = [362, 385, 432, 341, 382, 409, 498, 387];
        HoltWinters f = Fed(new HoltWintersOptions(4, Seasonality.Multiplicative, 0.5, 0.1, 0.2), quarterly);

        HoltWintersStartValues start = f.StartValues!;
        Assert.Equal(HoltWintersStartKind.SeasonMeans, start.Kind);
        Assert.Equal(4, start.Period);
        Assert.Equal(380, start.Level, 1e-12);
        Assert.Equal(9.75, start.Trend, 1e-12);
        Assert.Equal(4, start.SeasonalIndices.Length);
    }

    [Fact]
    public void Forecast_GivenAdditiveStart_ReproducesHandComputedFirstSteps()
    {
        // Derived by hand: m = 2, α = β = γ = 0.5, ℓ0 = 10, b0 = 1, indices −2 (period 1), 2 (period 2).
        // F1 = 10 + 1 − 2 = 9. y1 = 10: ℓ1 = 0.5·(10 + 2) + 0.5·11 = 11.5, b1 = 0.5·1.5 + 0.5·1 = 1.25,
        // s(pos 1) = 0.5·(10 − 11.5) + 0.5·(−2) = −1.75; F2 = 11.5 + 1.25 + 2 = 14.75. y2 = 14: ℓ2 = 0.5·12 + 0.5·12.75 = 12.375,
        // b2 = 0.5·0.875 + 0.5·1.25 = 1.0625, s(pos 2) = 0.5·1.625 + 0.5·2 = 1.8125; F3 = 12.375 + 1.0625 − 1.75 = 11.6875.
        var options = new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.5, 0.5, start: HoltWintersStart.Given(10, 1, [-2, 2]));
        var f = new HoltWinters(options);

        Assert.True(f.IsWarm);
        Assert.Equal(0, options.WarmUpLength);
        Assert.Equal(9, f.Forecast(1), 1e-12);
        f.Update(10);
        Assert.Equal(11.5, f.Level, 1e-12);
        Assert.Equal(1.25, f.Trend, 1e-12);
        Assert.Equal(14.75, f.Forecast(1), 1e-12);
        f.Update(14);
        Assert.Equal(12.375, f.Level, 1e-12);
        Assert.Equal(1.0625, f.Trend, 1e-12);
        Assert.Equal(11.6875, f.Forecast(1), 1e-12);
        Assert.Equal(new HoltWintersStartValues(HoltWintersStartKind.Given, 0, 10, 1, [-2, 2]), f.StartValues);
    }

    [Fact]
    public void Forecast_GivenMultiplicativeStart_ReproducesHandComputedFirstSteps()
    {
        // Derived by hand: m = 2, α = β = γ = 0.5, ℓ0 = 10, b0 = 0, indices 0.8, 1.2. F1 = 10·0.8 = 8. y1 = 10:
        // ℓ1 = 0.5·10/0.8 + 0.5·10 = 11.25, b1 = 0.5·1.25 = 0.625, s(pos 1) = 0.5·10/11.25 + 0.5·0.8 = 0.8444…;
        // F2 = (11.25 + 0.625)·1.2 = 14.25.
        var f = new HoltWinters(new HoltWintersOptions(2, Seasonality.Multiplicative, 0.5, 0.5, 0.5, start: HoltWintersStart.Given(10, 0, [0.8, 1.2])));

        Assert.Equal(8, f.Forecast(1), 1e-12);
        f.Update(10);
        Assert.Equal(11.25, f.Level, 1e-12);
        Assert.Equal(0.625, f.Trend, 1e-12);
        Assert.Equal(14.25, f.Forecast(1), 1e-12);
        Assert.Equal((0.5 * 10 / 11.25) + 0.4, f.SeasonalIndex(2), 1e-12);
    }

    [Fact]
    public void StartValues_BeforeWarmAndAfterImport_AreNullForComputedStartsOnly()
    {
        var options = new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.5, 0.5, start: HoltWintersStart.ClassicalDecomposition);
        HoltWinters cold = Fed(options, [4, 8, 6]);
        Assert.Null(cold.StartValues);

        HoltWinters warm = Fed(options, [4, 8, 6, 10, 9]);
        var imported = new HoltWinters(options);
        imported.ImportState(warm.ExportState());
        Assert.NotNull(warm.StartValues);
        Assert.Null(imported.StartValues);
        Assert.Equal(warm.Forecast(1), imported.Forecast(1));

        var given = new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.5, 0.5, start: HoltWintersStart.Given(1, 2, [3, -3]));
        var restored = new HoltWinters(given);
        restored.ImportState(Fed(given, [5, 6, 7]).ExportState());
        Assert.Equal(new HoltWintersStartValues(HoltWintersStartKind.Given, 0, 1, 2, [3, -3]), restored.StartValues);
    }

    [Fact]
    public void Options_DefaultStart_IsSeasonMeansWithUnchangedNameAndStateLength()
    {
        var implicitStart = new HoltWintersOptions(4, Seasonality.Additive, 0.5, 0.1, 0.2);
        var explicitStart = new HoltWintersOptions(4, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.SeasonMeans);

        Assert.Equal(implicitStart, explicitStart);
        Assert.Equal(HoltWintersStartKind.SeasonMeans, implicitStart.Start.Kind);
        Assert.Equal("HoltWinters(additive, m 4, 0.5, 0.1, 0.2)", implicitStart.MethodName);
        Assert.Equal(1 + 2 + 4 + 8, implicitStart.CreateForecaster().StateLength); // count, level, trend, m indices, c·m window
        Assert.Equal(1 + 2 + 4, new HoltWintersOptions(4, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(1, 0, [0, 0, 0, 0])).CreateForecaster().StateLength);
        Assert.Equal("HoltWinters(additive, m 4, 0.5, 0.1, 0.2, classical decomposition)",
            new HoltWintersOptions(4, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.ClassicalDecomposition).MethodName);
    }

    [Fact]
    public void Options_GivenStartEquality_ComparesIndicesByValue()
    {
        var a = new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(1, 0, [1, -1]));
        var b = new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(1, 0, new List<double> { 1, -1 }));
        var c = new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(1, 0, [1, -1.5]));

        Assert.Equal(a, b);
        Assert.Equal(a.GetHashCode(), b.GetHashCode());
        Assert.NotEqual(a, c);
    }

    [Theory]
    [InlineData(double.NaN, 0, 0)]
    [InlineData(1, double.PositiveInfinity, 0)]
    [InlineData(1, 0, double.NaN)]
    [InlineData(1.1e15, 0, 0)]
    [InlineData(1, -1.1e15, 0)]
    [InlineData(1, 0, 1.1e15)]
    public void Given_ValueNotFiniteOrBeyondMaxMagnitude_Throws(double level, double trend, double index) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltWintersStart.Given(level, trend, [index, 0]));

    [Fact]
    public void Given_TooFewIndicesOrNull_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => HoltWintersStart.Given(1, 0, [1]));
        Assert.Throws<ArgumentNullException>(() => HoltWintersStart.Given(1, 0, null!));
    }

    [Fact]
    public void Options_GivenStartNotFittingTheMethod_Throws()
    {
        // Index count ≠ season length.
        Assert.Throws<ArgumentException>(() => new HoltWintersOptions(3, Seasonality.Additive, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(1, 0, [1, -1])));

        // Multiplicative needs a positive level and positive indices.
        Assert.Throws<ArgumentException>(() => new HoltWintersOptions(2, Seasonality.Multiplicative, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(0, 0, [1, 1])));
        Assert.Throws<ArgumentException>(() => new HoltWintersOptions(2, Seasonality.Multiplicative, 0.5, 0.1, 0.2, start: HoltWintersStart.Given(1, 0, [1, 0])));

        // A given start has no start seasons: asking for some is ambiguous and refused.
        Assert.Throws<ArgumentException>(() => new HoltWintersOptions(2, Seasonality.Additive, 0.5, 0.1, 0.2, startSeasons: 3, start: HoltWintersStart.Given(1, 0, [1, -1])));
    }

    [Fact]
    public void Update_DecompositionMultiplicativeRunOfZeros_HoldsTheCentredAverageAtTheFloorAndWarms()
    {
        // Behaviour: a run of zeros makes a centred average zero; it is held at the 1e-30 floor (as the season means are), so
        // the ratio there is 0 instead of a division by zero, the window completes, and the forecaster keeps taking actuals.
        var f = new HoltWinters(new HoltWintersOptions(2, Seasonality.Multiplicative, 0.5, 0.1, 0.2, start: HoltWintersStart.ClassicalDecomposition));
        f.Update(0);
        f.Update(0);
        f.Update(0);
        f.Update(5);
        f.Update(7);

        Assert.True(f.IsWarm);
        Assert.True(double.IsFinite(f.Forecast(1)));
        Assert.All(f.StartValues!.SeasonalIndices, s => Assert.True(s >= HoltWinters.MultiplicativeFloor));
    }

    [Fact]
    public void ExportState_AnyValidGivenStart_RoundTripsBitIdentically()
    {
        // Property: any valid given start (hostile values anywhere in ±MaxMagnitude, the limits included), run over hostile actuals,
        // exports a state that imports into a fresh forecaster and exports again bit for bit, with the same forecasts.
        Gen<double> value = HostileSeries.AcceptedValue;
        Gen<(HoltWintersOptions Options, double[] Series)> cases =
            from m in Gen.Choose(2, 12)
            from multiplicative in Gen.Elements(false, true)
            from level in value
            from trend in value
            from indices in value.ArrayOf(m)
            from weights in Gen.Choose(1, 100).Select(i => i / 100.0).ArrayOf(3)
            from series in HostileSeries.Accepted(60)
            select (Options(m, multiplicative, level, trend, indices, weights), series);

        PropertyCases.Check(Prop.ForAll(cases.ToArbitrary(), c =>
        {
            var f = new HoltWinters(c.Options);
            foreach (double y in c.Series)
            {
                try
                {
                    f.Update(y);
                }
                catch (ArgumentOutOfRangeException)
                {
                    // A refused actual (overflow near the limits) leaves the state unchanged; keep going.
                }
            }

            double[] exported = f.ExportState();
            var restored = new HoltWinters(c.Options);
            restored.ImportState(exported);
            return Bits.Same(exported, restored.ExportState()) && Bits.Same([f.Forecast(1), f.Forecast(7)], [restored.Forecast(1), restored.Forecast(7)]);
        }));
    }

    private static HoltWintersOptions Options(int m, bool multiplicative, double level, double trend, double[] indices, double[] weights)
    {
        if (multiplicative)
        {
            // Multiplicative needs a positive level and indices: fold the generated values into (0, MaxMagnitude].
            level = Math.Max(Math.Abs(level), 1e-300);
            indices = indices.Select(v => Math.Max(Math.Abs(v), 1e-300)).ToArray();
        }

        return new HoltWintersOptions(m, multiplicative ? Seasonality.Multiplicative : Seasonality.Additive,
            weights[0], weights[1], weights[2], start: HoltWintersStart.Given(level, trend, indices));
    }
}
