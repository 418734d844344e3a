using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Selection;

public class MethodSelectorTests
{
    private static readonly ForecasterOptions[] s_candidates = [new NaiveOptions(), new MovingAverageOptions(6), new ExponentialSmoothingOptions(0.3)];

    /// <summary>
    /// A plain, separately written reference of the documented rule: each candidate's forecaster runs on its own, its smoothed
    /// absolute error is kept in a plain array, and the incumbent/challenger rule is applied as the documentation states it.
    /// Returns, per period, the published method index (before the update) and the selected index after it.
    /// </summary>
    internal static (int Published, int Selected)[] Reference(double[] series, MethodSelectorOptions options)
    {
        int k = options.Candidates.Length;
        var forecasters = options.Candidates.Select(c => c.CreateForecaster()).ToArray();
        var recent = new double[k];
        var scored = new long[k];
        int incumbent = -1;
        int challenger = -1;
        int run = 0;
        var result = new (int, int)[series.Length];
        for (int t = 0; t < series.Length; t++)
        {
            int published = incumbent;
            for (int i = 0; i < k; i++)
            {
                if (forecasters[i].IsWarm)
                {
                    double abs = Math.Abs(series[t] - forecasters[i].Forecast());
                    recent[i] = scored[i] == 0 ? abs : (options.ErrorWeight * abs) + ((1 - options.ErrorWeight) * recent[i]);
                    scored[i]++;
                }
            }

            foreach (Forecaster f in forecasters)
            {
                f.Update(series[t]);
            }

            if (incumbent < 0)
            {
                incumbent = Array.FindIndex(forecasters, f => f.IsWarm);
            }
            else
            {
                int best = -1;
                for (int i = 0; i < k; i++)
                {
                    if (scored[i] >= options.MinScoredPeriods && (best < 0 || recent[i] < recent[best]))
                    {
                        best = i;
                    }
                }

                if (best >= 0 && best != incumbent && scored[incumbent] >= options.MinScoredPeriods && recent[best] < (1 - options.Margin) * recent[incumbent])
                {
                    run = best == challenger ? run + 1 : 1;
                    challenger = best;
                    if (run >= options.PeriodsToSwitch)
                    {
                        incumbent = best;
                        challenger = -1;
                        run = 0;
                    }
                }
                else
                {
                    challenger = -1;
                    run = 0;
                }
            }

            result[t] = (published, incumbent);
        }

        return result;
    }

    [Property(MaxTest = 100)]
    public Property Update_RandomSeries_MatchesThePlainReferenceAndPublishesTheSelectedForecast() =>
        Prop.ForAll(SeriesGen.Arbitrary(SeriesDomain.Real, 120), Gen.Choose(1, 4).ToArbitrary(), (series, periods) =>
        {
            var options = new MethodSelectorOptions(s_candidates, errorWeight: 0.2, margin: 0.05, periodsToSwitch: periods, minScoredPeriods: 3);
            (int Published, int Selected)[] expected = Reference(series, options);
            MethodSelector selector = options.CreateSelector();
            var alone = s_candidates.Select(c => c.CreateForecaster()).ToArray();
            for (int t = 0; t < series.Length; t++)
            {
                bool had = selector.TryForecastWithMethod(1, out double forecast, out int method);
                SelectionStep step = selector.Step(series[t]);
                if (step.MethodIndex != expected[t].Published || step.SelectedIndex != expected[t].Selected || selector.SelectedIndex != expected[t].Selected)
                {
                    return false.Label($"period {t}: published {step.MethodIndex} / selected {step.SelectedIndex}, reference {expected[t]}");
                }

                // The published forecast is the producing candidate's own forecast, and the step reports it.
                if (had && (method != step.MethodIndex || !alone[method].IsWarm || alone[method].Forecast() != forecast || step.Forecast != forecast))
                {
                    return false.Label($"period {t}: published forecast {forecast} by {method}");
                }

                foreach (Forecaster f in alone)
                {
                    f.Update(series[t]);
                }
            }

            return true.ToProperty();
        });

    /// <summary>Noisy stable demand, then a large jump: MA(8) is better first, the naive forecast right after the jump.</summary>
    private static double[] StableThenJump()
    {
        var rng = new Random(31);
        var y = new double[90];
        for (int t = 0; t < y.Length; t++)
        {
            y[t] = (t < 50 ? 10 : 60) + (4 * (rng.NextDouble() - 0.5));
        }

        return y;
    }

    [Theory]
    [InlineData(1)]
    [InlineData(3)]
    [InlineData(6)]
    public void Update_ChallengerLeadsByTheMargin_SwitchesOnlyAfterTheRequiredConsecutivePeriods(int periodsToSwitch)
    {
        var options = new MethodSelectorOptions([new NaiveOptions(), new MovingAverageOptions(8)], margin: 0.1, periodsToSwitch: periodsToSwitch, minScoredPeriods: 3);
        MethodSelector selector = options.CreateSelector();
        double[] y = StableThenJump();
        int firstLead = -1;
        int switchedAt = -1;
        for (int t = 0; t < y.Length && switchedAt < 0; t++)
        {
            SelectionStep step = selector.Step(y[t]);
            if (selector.ChallengerPeriods == 1 && firstLead < 0)
            {
                firstLead = t;
            }

            if (step.Switched)
            {
                switchedAt = t;
                Assert.Equal(1, step.SelectedIndex);
            }
            else if (firstLead >= 0)
            {
                // Every period of the lead so far is counted, and the incumbent stays until the count is reached.
                Assert.Equal(t - firstLead + 1, selector.ChallengerPeriods);
                Assert.Equal(0, selector.SelectedIndex);
            }
        }

        if (periodsToSwitch == 1)
        {
            firstLead = switchedAt; // the lead and the switch fall in the same period
        }

        Assert.True(switchedAt >= 0, "MA(8) never replaced the naive forecast on stable demand");
        Assert.Equal(firstLead + periodsToSwitch - 1, switchedAt);
        Assert.Equal(1, selector.Switches);
    }

    [Fact]
    public void Update_LevelJump_SwitchesBackToTheFasterMethodAndSaysWhichMethodPublished()
    {
        var options = new MethodSelectorOptions([new NaiveOptions(), new MovingAverageOptions(8)], margin: 0.1, periodsToSwitch: 3, minScoredPeriods: 3);
        MethodSelector selector = options.CreateSelector();
        var publishers = new List<int>();
        foreach (double y in StableThenJump())
        {
            publishers.Add(selector.Step(y).MethodIndex);
        }

        Assert.Equal(2, selector.Switches);
        Assert.Equal(0, selector.SelectedIndex);
        Assert.Same(options.Candidates[0], selector.SelectedMethod);
        Assert.Contains(1, publishers);
        Assert.Equal(-1, publishers[0]);
    }

    [Theory]
    [InlineData(0.3, false)]
    [InlineData(0.2, true)]
    public void Update_ChallengerAlwaysBetterButByLessThanTheMargin_NeverSwitches(double margin, bool switches)
    {
        // Demand alternating 0, 10, 0, 10, …: MA(3) always forecasts 10/3 or 20/3, an absolute error of 20/3; MA(4) always
        // forecasts 5, an absolute error of 5 (plain arithmetic). MA(3) is warm first and published; MA(4)'s recent error is
        // lower in every period, by the ratio 0.75. A 30 % margin asks for less than 0.7 × 20/3 ≈ 4.67, so it never switches;
        // a 20 % margin asks for less than 5.33, so it switches once MA(4) has led for 3 periods.
        var options = new MethodSelectorOptions([new MovingAverageOptions(3), new MovingAverageOptions(4)], margin: margin, periodsToSwitch: 3, minScoredPeriods: 2);
        MethodSelector selector = options.CreateSelector();
        int switchedAt = -1;
        for (int t = 0; t < 60; t++)
        {
            if (selector.Step(t % 2 == 0 ? 0 : 10).Switched)
            {
                switchedAt = t;
            }
        }

        Assert.Equal(20.0 / 3, selector.RecentError(0), 1e-9);
        Assert.Equal(5.0, selector.RecentError(1), 1e-9);
        if (switches)
        {
            // MA(4) is first scored in period 5 (t = 4), has 2 scored periods at t = 5, leads at t = 5, 6, 7.
            Assert.Equal(7, switchedAt);
            Assert.Equal(1, selector.SelectedIndex);
            Assert.Equal(1, selector.Switches);
        }
        else
        {
            Assert.Equal(-1, switchedAt);
            Assert.Equal(0, selector.SelectedIndex);
            Assert.Equal(-1, selector.ChallengerIndex);
        }
    }

    [Fact]
    public void Update_RejectedActual_LeavesEveryCandidateAndTheSelectionUnchanged()
    {
        // Croston is last: the naive forecast and SES have already taken the negative actual when Croston rejects it.
        var options = new MethodSelectorOptions([new NaiveOptions(), new ExponentialSmoothingOptions(0.2), new CrostonOptions(0.1)], minScoredPeriods: 1, periodsToSwitch: 1);
        MethodSelector selector = options.CreateSelector();
        foreach (double y in (double[])[3, 0, 4, 2, 0, 5, 1, 0, 3])
        {
            selector.Step(y);
        }

        double[] before = selector.ExportState();
        Assert.Throws<ArgumentOutOfRangeException>(() => selector.Step(-1));
        Assert.Throws<ArgumentOutOfRangeException>(() => selector.Step(double.NaN));
        Assert.Throws<ArgumentOutOfRangeException>(() => selector.Step(double.PositiveInfinity));
        Assert.Equal(before, selector.ExportState());
    }

    [Property(MaxTest = 60)]
    public Property ExportState_RandomSplit_RestoredRunEqualsUninterruptedRun() =>
        Prop.ForAll(SeriesGen.Arbitrary(SeriesDomain.Real, 80), Gen.Choose(0, 1000).ToArbitrary(), (series, cut) =>
        {
            var options = new MethodSelectorOptions(s_candidates, periodsToSwitch: 2, minScoredPeriods: 2);
            int split = series.Length == 0 ? 0 : cut % (series.Length + 1);
            MethodSelector whole = options.CreateSelector();
            MethodSelector first = options.CreateSelector();
            for (int i = 0; i < split; i++)
            {
                whole.Update(series[i]);
                first.Update(series[i]);
            }

            MethodSelector second = options.CreateSelector();
            second.ImportState(first.ExportState());
            for (int i = split; i < series.Length; i++)
            {
                whole.Update(series[i]);
                second.Update(series[i]);
            }

            return whole.ExportState().AsSpan().SequenceEqual(second.ExportState()).Label($"split at {split}");
        });

    [Fact]
    public void ImportState_InvalidStates_ThrowAndChangeNothing()
    {
        var options = new MethodSelectorOptions(s_candidates, minScoredPeriods: 2);
        MethodSelector selector = options.CreateSelector();
        foreach (double y in (double[])[5, 6, 7, 6, 5, 6, 7, 8])
        {
            selector.Step(y);
        }

        double[] good = selector.ExportState();
        MethodSelector target = options.CreateSelector();
        target.Update(1);
        double[] targetBefore = target.ExportState();

        double[] wrongLength = good[..^1];
        double[] badIndex = (double[])good.Clone();
        badIndex[1] = 7;
        double[] negativeError = (double[])good.Clone();
        negativeError[6] = -1;
        double[] badForecasterPart = (double[])good.Clone();
        badForecasterPart[^1] = 1e9; // the last candidate's (SES) warm-up sum must be zero once warm
        double[] nonFinite = (double[])good.Clone();
        nonFinite[0] = double.NaN;
        foreach (double[] bad in new[] { wrongLength, badIndex, negativeError, badForecasterPart, nonFinite })
        {
            Assert.Throws<ArgumentException>(() => target.ImportState(bad));
            Assert.Equal(targetBefore, target.ExportState());
        }

        target.ImportState(good);
        Assert.Equal(good, target.ExportState());
    }

    [Fact]
    public void Forecast_BeforeAnyCandidateIsWarm_ThrowsAndTryForecastSaysNo()
    {
        MethodSelector selector = new MethodSelectorOptions([new MovingAverageOptions(3), new MovingAverageOptions(2)]).CreateSelector();
        selector.Step(4);
        Assert.False(selector.IsWarm);
        Assert.Throws<InvalidOperationException>(() => selector.Forecast());
        Assert.False(selector.TryForecastWithMethod(1, out double forecast, out int method));
        Assert.True(double.IsNaN(forecast));
        Assert.Equal(-1, method);

        // MA(2) warms first although it is listed second: it is published until a challenger beats it.
        selector.Step(6);
        Assert.Equal(1, selector.SelectedIndex);
        Assert.Equal(5, selector.Forecast());
        Assert.Throws<ArgumentOutOfRangeException>(() => selector.Forecast(0));
        Assert.Throws<ArgumentOutOfRangeException>(() => selector.RecentError(2));
    }

    [Fact]
    public void Update_SteadyState_AllocatesNothing()
    {
        MethodSelector selector = new MethodSelectorOptions([new NaiveOptions(), new MovingAverageOptions(12), new ExponentialSmoothingOptions(0.2), new HoltOptions(0.3, 0.1)]).CreateSelector();
        double y = 100;
        for (int i = 0; i < 50; i++)
        {
            selector.Step(y + (i % 7));
        }

        Allocations.AssertNone(() =>
        {
            double sum = 0;
            for (int i = 0; i < 100; i++)
            {
                sum += selector.Step(y + (i % 5)).Error;
                sum += selector.Forecast(3);
            }

            return sum;
        });
    }

    [Fact]
    public void Reset_AfterUpdates_IsLikeNew()
    {
        var options = new MethodSelectorOptions(s_candidates);
        MethodSelector selector = options.CreateSelector();
        foreach (double y in (double[])[1, 2, 3, 4, 5, 6, 7, 8, 9, 10])
        {
            selector.Step(y);
        }

        selector.Reset();
        Assert.Equal(options.CreateSelector().ExportState(), selector.ExportState());
    }

    [Fact]
    public void MethodSelectorOptions_OutOfRange_Throws()
    {
        Assert.Throws<ArgumentException>(() => new MethodSelectorOptions([]));
        Assert.Throws<ArgumentException>(() => new MethodSelectorOptions([new NaiveOptions(), null!]));
        Assert.Throws<ArgumentOutOfRangeException>(() => new MethodSelectorOptions(s_candidates, errorWeight: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new MethodSelectorOptions(s_candidates, margin: 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new MethodSelectorOptions(s_candidates, periodsToSwitch: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new MethodSelectorOptions(s_candidates, minScoredPeriods: 0));
        Assert.Equal(new MethodSelectorOptions(s_candidates), new MethodSelectorOptions(s_candidates.ToList()));
    }
}

/// <summary>The selector's step as one call, for tests: update, then read what the update did.</summary>
internal static class MethodSelectorTestExtensions
{
    public static SelectionStep Step(this MethodSelector selector, double actual)
    {
        selector.Update(actual);
        return selector.LastStep;
    }

    public static bool TryForecastWithMethod(this MethodSelector selector, int horizon, out double forecast, out int method)
    {
        bool warm = selector.TryForecast(horizon, out forecast);
        method = selector.SelectedIndex;
        return warm;
    }
}
