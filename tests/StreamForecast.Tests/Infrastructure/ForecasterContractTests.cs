using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Forecasting;

namespace StreamForecast.Tests.Infrastructure;

/// <summary>
/// The behaviour every forecaster shares. Each method's test class inherits this suite, supplies its options,
/// its warm-up length and a plain batch recomputation of its forecasts, and gets every check below.
/// </summary>
public abstract class ForecasterContractTests
{
    /// <summary>Typical options for the method under test.</summary>
    protected abstract ForecasterOptions Options { get; }

    /// <summary>How many actuals of <see cref="Sample"/> the method needs before it is warm.</summary>
    protected abstract int WarmUpLength { get; }

    /// <summary>
    /// The batch reference: the one-step forecast after each prefix of <paramref name="series"/>, written the obvious
    /// way from the published definition (no shared code with the operator). Element k is the forecast made after
    /// the first k actuals (k = 0 … length), NaN where the method makes none yet.
    /// </summary>
    protected abstract double[] BatchForecasts(double[] series);

    /// <summary>The domain random series are drawn from.</summary>
    protected virtual SeriesDomain Domain => SeriesDomain.Real;

    /// <summary>Relative tolerance for incremental-versus-batch comparisons (scaled by the series' magnitude).</summary>
    protected virtual double BatchTolerance => 1e-9;

    /// <summary>Whether forecast(a + y) = a + forecast(y).</summary>
    protected virtual bool IsShiftEquivariant => true;

    /// <summary>Whether forecast(b·y) = b·forecast(y) for b &gt; 0.</summary>
    protected virtual bool IsScaleEquivariant => true;

    /// <summary>Finite actuals outside the method's domain, which must be rejected.</summary>
    protected virtual double[] OutOfDomainActuals => [];

    /// <summary>
    /// The forecast the method makes after a long run of the constant <paramref name="level"/>: the level itself for
    /// most methods; a method with a deliberate bias correction (such as the Syntetos–Boylan factor) overrides it.
    /// </summary>
    protected virtual double ConstantForecast(double level) => level;

    /// <summary>A deterministic series in the method's domain: level 100, a weekly pattern, a slight trend and noise.</summary>
    protected virtual double[] Sample
    {
        get
        {
            var rng = new Random(20261201);
            var y = new double[80];
            for (int t = 0; t < y.Length; t++)
            {
                double weekly = 10 * Math.Sin(2 * Math.PI * t / 7);
                y[t] = Domain == SeriesDomain.Intermittent
                    ? (rng.NextDouble() < 0.4 ? Math.Round(1 + (rng.NextDouble() * 9), 2) : 0)
                    : Math.Round(100 + (0.3 * t) + weekly + (rng.NextDouble() * 8) - 4, 2);
            }

            return y;
        }
    }

    private Forecaster Fed(int count)
    {
        var f = Options.CreateForecaster();
        foreach (double y in Sample.AsSpan(0, count))
        {
            f.Update(y);
        }

        return f;
    }

    [Fact]
    public void IsWarm_BeforeAndAfterWarmUp_TurnsTrueAtWarmUpLength()
    {
        var f = Options.CreateForecaster();
        for (int i = 0; i < WarmUpLength; i++)
        {
            Assert.False(f.IsWarm);
            Assert.False(f.TryForecast(1, out double cold));
            Assert.True(double.IsNaN(cold));
            Assert.Throws<InvalidOperationException>(() => f.Forecast());
            f.Update(Sample[i]);
        }

        Assert.True(f.IsWarm);
        Assert.True(f.TryForecast(1, out double warm));
        Assert.Equal(f.Forecast(), warm);
        Assert.Equal(WarmUpLength, f.Count);
    }

    [Fact]
    public void Forecast_HorizonBelowOne_Throws()
    {
        var f = Fed(Sample.Length);
        Assert.Throws<ArgumentOutOfRangeException>(() => f.Forecast(0));
        Assert.Throws<ArgumentOutOfRangeException>(() => f.TryForecast(-1, out _));
        Assert.Throws<ArgumentOutOfRangeException>(() => f.HorizonVarianceRatio(0));
    }

    [Fact]
    public void Update_InvalidActual_ThrowsAndLeavesStateUnchanged()
    {
        double[] invalid = [double.NaN, double.PositiveInfinity, double.NegativeInfinity, .. OutOfDomainActuals];
        foreach (int fedCount in new[] { 0, Math.Max(0, WarmUpLength - 1), WarmUpLength, Sample.Length })
        {
            var f = Fed(fedCount);
            double[] before = f.ExportState();
            foreach (double bad in invalid)
            {
                var ex = Assert.Throws<ArgumentOutOfRangeException>(() => f.Update(bad));
                Assert.False(string.IsNullOrWhiteSpace(ex.Message));
                Assert.Equal(before, f.ExportState());
            }
        }
    }

    [Fact]
    public void Reset_AfterUpdates_BehavesLikeNew()
    {
        var f = Fed(Sample.Length);
        f.Reset();
        var fresh = Options.CreateForecaster();
        Assert.Equal(fresh.ExportState(), f.ExportState());
        Assert.Equal(WarmUpLength == 0, f.IsWarm); // a method with given start values is warm before any actual
        Assert.Equal(0, f.Count);
        foreach (double y in Sample)
        {
            f.Update(y);
            fresh.Update(y);
        }

        Assert.Equal(fresh.Forecast(), f.Forecast());
    }

    [Fact]
    public void ExportState_ImportIntoNewForecaster_ContinuesBitIdentically()
    {
        foreach (int split in new[] { 0, 1, WarmUpLength, Sample.Length / 2 })
        {
            var original = Fed(split);
            var copy = Options.CreateForecaster();
            copy.ImportState(original.ExportState());
            Assert.Equal(original.Count, copy.Count);
            Assert.Equal(original.IsWarm, copy.IsWarm);
            foreach (double y in Sample.AsSpan(split))
            {
                original.Update(y);
                copy.Update(y);
                Assert.Equal(original.TryForecast(1, out double a), copy.TryForecast(1, out double b));
                Assert.Equal(a, b);
            }

            Assert.Equal(original.ExportState(), copy.ExportState());
        }
    }

    [Fact]
    public void ImportState_MalformedState_ThrowsAndLeavesStateUnchanged()
    {
        var f = Fed(Sample.Length / 2);
        double[] before = f.ExportState();
        double[] good = Fed(Sample.Length).ExportState();

        Assert.Throws<ArgumentException>(() => f.ImportState(good.AsSpan(0, good.Length - 1)));
        Assert.Throws<ArgumentException>(() => f.ImportState([.. good, 0.0]));
        foreach (int i in new[] { 0, good.Length - 1 })
        {
            double[] bad = (double[])good.Clone();
            bad[i] = double.NaN;
            Assert.Throws<ArgumentException>(() => f.ImportState(bad));
        }

        double[] negativeCount = (double[])good.Clone();
        negativeCount[0] = -1;
        Assert.Throws<ArgumentException>(() => f.ImportState(negativeCount));
        double[] fractionalCount = (double[])good.Clone();
        fractionalCount[0] = 2.5;
        Assert.Throws<ArgumentException>(() => f.ImportState(fractionalCount));

        Assert.Equal(before, f.ExportState());
    }

    [Fact]
    public void Forecast_ConstantInput_IsThatConstant()
    {
        const double level = 42.5;
        var f = Options.CreateForecaster();
        for (int i = 0; i < Math.Max(3 * WarmUpLength, 30); i++)
        {
            f.Update(level);
        }

        for (int h = 1; h <= 10; h++)
        {
            Approx.Equal(ConstantForecast(level), f.Forecast(h), 1e-12, $"h={h}");
        }
    }

    [Fact]
    public void Forecast_ShiftedAndScaledInput_ShiftsAndScalesForecast()
    {
        double[] y = Sample;
        var plain = Options.CreateForecaster();
        var shifted = Options.CreateForecaster();
        var scaled = Options.CreateForecaster();
        const double a = 37.25, b = 3.5;
        foreach (double v in y)
        {
            plain.Update(v);
            if (IsShiftEquivariant)
            {
                shifted.Update(v + a);
            }

            if (IsScaleEquivariant)
            {
                scaled.Update(v * b);
            }
        }

        for (int h = 1; h <= 8; h++)
        {
            double f = plain.Forecast(h);
            if (IsShiftEquivariant)
            {
                Approx.Equal(f + a, shifted.Forecast(h), 1e-9, $"shift h={h}");
            }

            if (IsScaleEquivariant)
            {
                Approx.Equal(f * b, scaled.Forecast(h), 1e-9, $"scale h={h}");
            }
        }
    }

    [Fact]
    public void HorizonVarianceRatio_AnyHorizon_IsOneAtFirstStepAndNeverShrinks()
    {
        var f = Fed(Sample.Length);
        Assert.Equal(1.0, f.HorizonVarianceRatio(1));
        double previous = 1.0;
        for (int h = 2; h <= 30; h++)
        {
            double r = f.HorizonVarianceRatio(h);
            Assert.True(double.IsFinite(r) && r >= previous - 1e-12, $"h={h}: {r} after {previous}");
            previous = r;
        }
    }

    [Fact]
    public void Update_WarmForecaster_DoesNotAllocate()
    {
        var f = Fed(Sample.Length);
        double[] y = Sample;
        Allocations.AssertNone(() =>
        {
            double sink = 0;
            for (int i = 0; i < 10_000; i++)
            {
                f.Update(y[i % y.Length]);
                sink += f.Forecast();
            }

            return double.IsFinite(sink) ? sink : 0;
        });
    }

    [Fact]
    public void Options_CreateForecaster_ReportsItsOptions()
    {
        var f = Options.CreateForecaster();
        Assert.Equal(Options, f.Options);
        Assert.False(string.IsNullOrWhiteSpace(f.Options.MethodName));
    }

    [Property(MaxTest = 200)]
    public Property Update_RandomSeries_MatchesBatchRecomputationOfEveryPrefix() =>
        Prop.ForAll(SeriesGen.Arbitrary(Domain), series =>
        {
            double[] expected = BatchForecasts(series);
            Assert.Equal(series.Length + 1, expected.Length);
            double scale = 1;
            foreach (double v in series)
            {
                scale = Math.Max(scale, Math.Abs(v));
            }

            var f = Options.CreateForecaster();
            for (int k = 0; k <= series.Length; k++)
            {
                if (k > 0)
                {
                    f.Update(series[k - 1]);
                }

                f.TryForecast(1, out double actual);
                if (!Approx.Close(expected[k], actual, BatchTolerance, scale))
                {
                    return false.Label($"after {k} actuals: batch {expected[k]:R}, incremental {actual:R}");
                }
            }

            return true.ToProperty();
        });

    [Property(MaxTest = 100)]
    public Property ExportState_RandomSplit_RestoredRunEqualsUninterruptedRun() =>
        Prop.ForAll(SeriesGen.Arbitrary(Domain), Gen.Choose(0, 1000).ToArbitrary(), (series, cut) =>
        {
            int split = series.Length == 0 ? 0 : cut % (series.Length + 1);
            var whole = Options.CreateForecaster();
            var first = Options.CreateForecaster();
            for (int i = 0; i < split; i++)
            {
                whole.Update(series[i]);
                first.Update(series[i]);
            }

            var second = Options.CreateForecaster();
            second.ImportState(first.ExportState());
            for (int i = split; i < series.Length; i++)
            {
                whole.Update(series[i]);
                second.Update(series[i]);
            }

            return whole.ExportState().AsSpan().SequenceEqual(second.ExportState()).Label($"split at {split}");
        });

    /// <summary>
    /// Every state the forecaster reaches on hostile input imports back bit-identically and continues identically; a
    /// refused input changes nothing; after every accepted input the next normal value is accepted and forecasts stay
    /// finite. Runs <see cref="PropertyCases.PerFamily"/> sequences from <see cref="HostileSeries"/>.
    /// </summary>
    [Fact]
    public void ExportState_HostileSequences_RoundTripsAndNeverFreezes() =>
        PropertyCases.Check(Prop.ForAll(HostileSeries.ArbitraryWithRefused(120), Gen.Choose(0, 10_000).ToArbitrary(), (series, cut) => HostileRun(series, cut)));

    private Property HostileRun(double[] series, int cut)
    {
        var f = Options.CreateForecaster();
        Forecaster? twin = null;
        int split = series.Length == 0 ? 0 : cut % (series.Length + 1);
        double[] normals = Domain == SeriesDomain.Real ? [10.0, -10.0] : [10.0];
        for (int i = 0; i <= series.Length; i++)
        {
            if (i == split)
            {
                twin = Options.CreateForecaster();
                twin.ImportState(f.ExportState());
            }

            if (i == series.Length)
            {
                break;
            }

            double v = series[i];
            double[] before = f.ExportState();
            bool accepted;
            try
            {
                f.Update(v);
                accepted = true;
            }
            catch (ArgumentOutOfRangeException)
            {
                accepted = false;
            }

            double[] after = f.ExportState();
            if (!accepted)
            {
                if (!before.AsSpan().SequenceEqual(after))
                {
                    return false.Label($"refused {v:R} at {i} changed the state");
                }

                if (Math.Abs(v) <= 1000 && v >= 0 && v != 0 && Domain != SeriesDomain.Real)
                {
                    return false.Label($"a normal value {v:R} was refused at {i}");
                }
            }

            if (twin is not null)
            {
                bool twinAccepted;
                try
                {
                    twin.Update(v);
                    twinAccepted = true;
                }
                catch (ArgumentOutOfRangeException)
                {
                    twinAccepted = false;
                }

                if (twinAccepted != accepted || !twin.ExportState().AsSpan().SequenceEqual(after))
                {
                    return false.Label($"the copy imported at {split} diverged at {i} ({v:R})");
                }
            }

            if (!accepted)
            {
                continue;
            }

            var copy = Options.CreateForecaster();
            try
            {
                copy.ImportState(after);
            }
            catch (ArgumentException ex)
            {
                return false.Label($"the state after {i} ({v:R}) does not import: {ex.Message}");
            }

            if (!copy.ExportState().AsSpan().SequenceEqual(after))
            {
                return false.Label($"export after import differs at {i}");
            }

            if (f.IsWarm && !(double.IsFinite(f.Forecast(1)) && double.IsFinite(f.Forecast(12))))
            {
                return false.Label($"non-finite forecast after {i} ({v:R})");
            }

            foreach (double normal in normals)
            {
                var probe = Options.CreateForecaster();
                probe.ImportState(after);
                try
                {
                    probe.Update(normal);
                }
                catch (ArgumentOutOfRangeException ex)
                {
                    return false.Label($"after {i} ({v:R}) the normal value {normal} is refused: {ex.Message}");
                }

                if (probe.IsWarm && !double.IsFinite(probe.Forecast(1)))
                {
                    return false.Label($"after {i} ({v:R}) the normal value {normal} gives a non-finite forecast");
                }
            }
        }

        return true.ToProperty();
    }
}
