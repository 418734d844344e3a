using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

/// <summary>
/// Check values for Holt-Winters with two seasonal cycles, derived by hand from the published equations (Taylor 2003,
/// J. Operational Research Society 54:799–805, as recalled from memory in ../shared/reference/practice.md; the paper was
/// not at hand), and the reduction to ordinary Holt-Winters.
/// </summary>
public sealed class TwoSeasonHoltWintersCheckTests
{
    // Invented series, m1 = 2, m2 = 4; weights α = 1/2, β = 1/4, δ = 1/2, ω = 1/4, λ = 1/2.
    private static readonly double[] s_tiny = [10, 14, 8, 16, 12, 15, 9, 18, 11, 16, 10, 19];

    private static TwoSeasonHoltWinters Fed(TwoSeasonHoltWintersOptions options, ReadOnlySpan<double> series)
    {
        var f = new TwoSeasonHoltWinters(options);
        foreach (double y in series)
        {
            f.Update(y);
        }

        return f;
    }

    private static TwoSeasonHoltWintersOptions Tiny(Seasonality seasonality, double? trend, double adjustment) =>
        new(2, 4, seasonality, 0.5, trend, 0.5, 0.25, adjustment);

    // Derived by hand from the published equations (additive form), in exact fractions; every value below is dyadic, so
    // the double arithmetic is exact.
    // Start (our rule, see TwoSeasonHoltWintersOptions): A1 = (10+14+8+16)/4 = 12, A2 = (12+15+9+18)/4 = 13.5;
    // level 12, trend (13.5 − 12)/4 = 0.375. Combined c_j = ((y_j − A1) + (y_{4+j} − A2))/2 = −1.75, 1.75, −4.25, 4.25.
    // d0 = (c0 + c2)/2 = −3, d1 = (c1 + c3)/2 = 3; w_j = c_j − d_{j mod 2} = 1.25, −1.25, −1.25, 1.25.
    // t=5 (y=12, d0, w0): F = 12 + 0.375 − 3 + 1.25 = 10.625, e = 1.375;
    //   ℓ = ½(12 + 3 − 1.25) + ½(12.375) = 6.875 + 6.1875 = 13.0625; b = ¼(1.0625) + ¾(0.375) = 0.546875;
    //   d0 = ½(12 − 13.0625 − 1.25) + ½(−3) = −2.65625; w0 = ¼(12 − 13.0625 + 3) + ¾(1.25) = 1.421875.
    // t=6 (y=15, d1, w1): F = 13.609375 + 3 − 1.25 = 15.359375, e = −0.359375; ℓ = 13.4296875, b = 0.501953125,
    //   d1 = 2.91015625, w1 = −1.294921875.
    // t=7 (y=9): F = 10.025390625; ℓ = 13.4189453125, b = 0.373779296875, d0 = −2.91259765625, w2 = −1.378173828125.
    // t=8 (y=18): F = 17.952880859375, e = 0.047119140625; ℓ = 13.8162841796875, b = 0.379669189453125 (warm here).
    // t=9 (y=11): F = 12.7052307128906…, e = −1.70523071289…; ℓ = 13.3433380126953…, b = 0.166515350341797…
    // t=10 (y=16): F = 15.1368675231934…; t=11 (y=10): F = 9.4987473487854…; t=12 (y=19): F = 19.1971253752708…,
    //   e = −0.197125375270842…; ℓ = 14.7049536406994…, b = 0.312422819435596…, d1 = 3.0884378105402…, w3 = 1.23124922066927…
    // Forecasts from t=12 (h=1 uses d0, w0 = 1.20872116088867…; h=5 wraps to the same positions): unadjusted
    // 13.0125054493546, 17.2312067747116, 11.1131126806140 (h=1..3), 14.2621967270970 (h=5); with λ = ½, plus ½ʰ·e:
    // 12.9139427617192, 17.1819254308939, 11.0884720087051, 14.2560365591198.
    [Fact]
    public void Forecast_AdditiveTinySeries_MatchesHandDerivedValues()
    {
        double[] oneStepAfterWarm = [12.7052307128906, 15.1368675231934, 9.4987473487854, 19.1971253752708, 13.0125054493546];
        var plain = new TwoSeasonHoltWinters(Tiny(Seasonality.Additive, 0.25, 0));
        var adjusted = new TwoSeasonHoltWinters(Tiny(Seasonality.Additive, 0.25, 0.5));
        for (int t = 0; t < s_tiny.Length; t++)
        {
            plain.Update(s_tiny[t]);
            adjusted.Update(s_tiny[t]);
            if (t + 1 >= 8)
            {
                Assert.Equal(oneStepAfterWarm[t + 1 - 8], plain.Forecast(), 1e-12);
            }
        }

        Assert.Equal(17.2312067747116, plain.Forecast(2), 1e-12);
        Assert.Equal(11.1131126806140, plain.Forecast(3), 1e-12);
        Assert.Equal(14.2621967270970, plain.Forecast(5), 1e-12);
        Assert.Equal(12.9139427617192, adjusted.Forecast(1), 1e-12);
        Assert.Equal(17.1819254308939, adjusted.Forecast(2), 1e-12);
        Assert.Equal(11.0884720087051, adjusted.Forecast(3), 1e-12);
        Assert.Equal(14.2560365591198, adjusted.Forecast(5), 1e-12);

        // After t=8 with λ = ½: 12.7052307128906 + ½·0.047119140625 = 12.7287902832031 (hand-derived above).
        Assert.Equal(12.7287902832031, Fed(Tiny(Seasonality.Additive, 0.25, 0.5), s_tiny.AsSpan(0, 8)).Forecast(), 1e-12);
    }

    // Derived by hand from the published equations (multiplicative form), in exact fractions, then rounded:
    // Start: A1 = 12, A2 = 13.5, level 12, trend 0.375; combined c_j = (y_j/A1 + y_{4+j}/A2)/2 = 31/36, 41/36, 2/3, 4/3;
    // d0 = (31/36 + 2/3)/2 = 55/72, d1 = (41/36 + 4/3)/2 = 89/72; w = c/d = 62/55, 82/89, 48/55, 96/89.
    // t=5 (y=12, d0 = 55/72, w0 = 62/55, so d0·w0 = 31/36): F = 12.375·31/36 = 10.65625, e = 1.34375;
    //   ℓ = ½·12·36/31 + ½·12.375 = 6.96774193548… + 6.1875 = 13.1552419354839; b = ¼(1.1552419354839) + ¾(0.375)
    //   = 0.570060483870968; d0 = ½·12/(13.1552419354839·62/55) + ½·55/72 = 0.78654214559387;
    //   w0 = ¼·12/(13.1552419354839·55/72) + ¾·62/55 = 1.14398746081505.
    // Continued the same way (exact fractions, each step as above): one-step forecasts after t = 8 … 12:
    // 12.5294563660463, 14.9760246172360, 9.17599188641698, 20.2263507190752, 12.9521699694206; e(12) = −1.22635071907521;
    // h = 2, 3, 5 from t=12: 17.2663172620516, 10.4793148437139, 13.9956241633479; with λ = ½: 12.3389946098830 (h=1),
    // 16.9597295822828, 10.3260210038295, 13.9573007033768.
    // Without a trend (b ≡ 0, same weights): one-step forecasts after t = 8 … 12: 12.0388643593149, 14.6289418900517,
    // 8.95385075206726, 19.4378620555106, 12.5329764357904; with λ = ½ after t=12: 12.3140454080351.
    [Fact]
    public void Forecast_MultiplicativeTinySeries_MatchesHandDerivedValues()
    {
        double[] withTrend = [12.5294563660463, 14.9760246172360, 9.17599188641698, 20.2263507190752, 12.9521699694206];
        double[] noTrend = [12.0388643593149, 14.6289418900517, 8.95385075206726, 19.4378620555106, 12.5329764357904];
        var trended = new TwoSeasonHoltWinters(Tiny(Seasonality.Multiplicative, 0.25, 0));
        var level = new TwoSeasonHoltWinters(Tiny(Seasonality.Multiplicative, null, 0));
        for (int t = 0; t < s_tiny.Length; t++)
        {
            trended.Update(s_tiny[t]);
            level.Update(s_tiny[t]);
            if (t + 1 >= 8)
            {
                Assert.Equal(withTrend[t + 1 - 8], trended.Forecast(), 1e-12);
                Assert.Equal(noTrend[t + 1 - 8], level.Forecast(), 1e-12);
            }
        }

        Assert.Equal(17.2663172620516, trended.Forecast(2), 1e-12);
        Assert.Equal(10.4793148437139, trended.Forecast(3), 1e-12);
        Assert.Equal(13.9956241633479, trended.Forecast(5), 1e-12);

        var adjusted = Fed(Tiny(Seasonality.Multiplicative, 0.25, 0.5), s_tiny);
        Assert.Equal(12.3389946098830, adjusted.Forecast(1), 1e-12);
        Assert.Equal(16.9597295822828, adjusted.Forecast(2), 1e-12);
        Assert.Equal(10.3260210038295, adjusted.Forecast(3), 1e-12);
        Assert.Equal(13.9573007033768, adjusted.Forecast(5), 1e-12);
        Assert.Equal(12.3140454080351, Fed(Tiny(Seasonality.Multiplicative, null, 0.5), s_tiny).Forecast(), 1e-12);
    }

    [Fact]
    public void Forecast_FirstUpdateAfterStart_MatchesHandDerivedStateStep()
    {
        // The t=5 step of the two comments above, read back through a 5-actual prefix whose warm-up is replaced by an
        // imported state: level 12, trend 0.375, d = (−3, 3), w = (1.25, −1.25, −1.25, 1.25), count 8 (slots t mod 2 and
        // t mod 4 are those of t = 0, as for t = 4). Additive: ℓ = 13.0625, b = 0.546875, F(next) uses d1 = 3, w1 = −1.25.
        var f = new TwoSeasonHoltWinters(Tiny(Seasonality.Additive, 0.25, 0));
        f.ImportState([8, 12, 0.375, 0, -3, 3, 1.25, -1.25, -1.25, 1.25, 0, 0, 0, 0, 0, 0, 0, 0]);
        f.Update(12);
        double[] state = f.ExportState();
        Assert.Equal([9, 13.0625, 0.546875, 1.375, -2.65625, 3, 1.421875, -1.25, -1.25, 1.25], state[..10]);
        Assert.Equal(13.0625 + 0.546875 + 3 - 1.25, f.Forecast());
    }

    [Fact]
    public void HorizonVarianceRatio_AdditiveTwoCycles_MatchesTermByTermSum()
    {
        // Innovations form of the equations (from memory, see TwoSeasonHoltWinters): c_j = α + αβ·j + (1−α)δ·[2 | j]
        // + (1−α)ω·[4 | j]; with α = ½, β = ¼, δ = ½, ω = ¼: αβ = 1/8, g1 = 1/4, g2 = 1/8. For h = 6, j = 1 … 5:
        // c = 5/8, 1, 7/8, 1.375, 9/8; 1 + Σc² = 1 + 0.390625 + 1 + 0.765625 + 1.890625 + 1.265625 = 6.3125.
        var f = Fed(Tiny(Seasonality.Additive, 0.25, 0), s_tiny);
        Assert.Equal(6.3125, f.HorizonVarianceRatio(6), 1e-12);
    }

    // With the long cycle's weight at zero and its indices neutral (1, or 0 additive), the equations are exactly those of
    // ordinary Holt-Winters with season m1 (HoltWintersOptions: Winters' form, no damping). The property warms an ordinary
    // Holt-Winters forecaster, carries its level, trend and indices into the two-cycle state, and feeds both the same
    // random actuals: every forecast (h = 1 … m2 + 1) must agree bit for bit.
    [Fact]
    public void Update_LongCycleSwitchedOff_EqualsOrdinaryHoltWintersBitForBit() =>
        PropertyCases.Check(Prop.ForAll(
            Gen.Elements(Seasonality.Additive, Seasonality.Multiplicative).SelectMany(
                kind => Gen.Choose(2, 6).SelectMany(m1 => Gen.Choose(1, 1000).ArrayOf(3).Select(w => (kind, m1, w)))).ToArbitrary(),
            SeriesGen.Arbitrary(SeriesDomain.Positive, 120),
            (settings, series) => ReducesToHoltWinters(settings.kind, settings.m1, settings.w, series)));

    private static Property ReducesToHoltWinters(Seasonality seasonality, int m1, int[] weights, double[] series)
    {
        int m2 = 3 * m1;
        double alpha = weights[0] / 1000.0, beta = (weights[1] - 1) / 999.0, delta = (weights[2] - 1) / 999.0;
        var ordinary = new HoltWinters(new HoltWintersOptions(m1, seasonality, alpha, beta, delta));
        var twoCycles = new TwoSeasonHoltWinters(new TwoSeasonHoltWintersOptions(m1, m2, seasonality, alpha, beta, delta, 0));
        var rng = new Random(series.Length + (31 * m1));
        for (int t = 0; t < 2 * m2; t++)
        {
            ordinary.Update(Math.Round(50 + (rng.NextDouble() * 100), 2));
        }

        // HoltWinters state: count, level, trend, m1 indices, start window (zero once warm).
        double[] hw = ordinary.ExportState();
        var carried = new double[twoCycles.StateLength];
        carried[0] = hw[0];
        carried[1] = hw[1];
        carried[2] = hw[2];
        hw.AsSpan(3, m1).CopyTo(carried.AsSpan(4, m1));
        carried.AsSpan(4 + m1, m2).Fill(seasonality == Seasonality.Multiplicative ? 1.0 : 0.0);
        twoCycles.ImportState(carried);
        foreach (double y in series)
        {
            ordinary.Update(y);
            twoCycles.Update(y);
            for (int h = 1; h <= m2 + 1; h++)
            {
                double expected = ordinary.Forecast(h), actual = twoCycles.Forecast(h);
                if (BitConverter.DoubleToInt64Bits(expected) != BitConverter.DoubleToInt64Bits(actual))
                {
                    return false.Label($"after {twoCycles.Count} actuals, h={h}: ordinary {expected:R}, two cycles {actual:R}");
                }
            }
        }

        return true.ToProperty();
    }

    [Fact]
    public void Constructor_OutOfRangeParameters_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(1, 4, Seasonality.Additive, 0.5, null, 0.1, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(4, 4, Seasonality.Additive, 0.5, null, 0.1, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(24, 100_001, Seasonality.Additive, 0.5, null, 0.1, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, (Seasonality)7, 0.5, null, 0.1, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, Seasonality.Additive, 0, null, 0.1, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, Seasonality.Additive, 0.5, 1.5, 0.1, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, Seasonality.Additive, 0.5, null, double.NaN, 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, Seasonality.Additive, 0.5, null, 0.1, -0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, Seasonality.Additive, 0.5, null, 0.1, 0.1, 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TwoSeasonHoltWintersOptions(2, 4, Seasonality.Additive, 0.5, null, 0.1, 0.1, -1));
    }

    [Fact]
    public void MethodName_WithAndWithoutTrendAndAdjustment_NamesEveryParameter()
    {
        Assert.Equal("TwoSeasonHoltWinters(multiplicative, m 24 and 168, 0.1, no trend, 0.2, 0.3)",
            ForecasterOptions.TwoSeasonHoltWinters(24, 168, Seasonality.Multiplicative, 0.1, null, 0.2, 0.3).MethodName);
        Assert.Equal("TwoSeasonHoltWinters(additive, m 2 and 4, 0.5, 0.25, 0.5, 0.25, error adjustment 0.5)",
            Tiny(Seasonality.Additive, 0.25, 0.5).MethodName);
    }

    [Fact]
    public void ImportState_TrendWithoutTrendComponent_Throws()
    {
        var f = Fed(Tiny(Seasonality.Additive, null, 0), s_tiny);
        double[] state = f.ExportState();
        state[2] = 1;
        Assert.Throws<ArgumentException>(() => f.ImportState(state));
        double[] mul = Fed(Tiny(Seasonality.Multiplicative, null, 0), s_tiny).ExportState();
        mul[5] = 0;
        Assert.Throws<ArgumentException>(() => new TwoSeasonHoltWinters(Tiny(Seasonality.Multiplicative, null, 0)).ImportState(mul));
    }
}
