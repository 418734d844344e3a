using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Alerts;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Alerts;

public sealed class TrackingSignalRuleTests : DriftRuleContractTests
{
    /// <summary>
    /// A tracking-signal path (invented for the tests) that, with limit 4, clear 3 and escalation 6, raises
    /// under-forecast, escalates, clears, raises over-forecast, clears, and reverses from under to over.
    /// </summary>
    internal static readonly double[] SignalPath =
    [
        0.5, 1.2, 2.0, 3.1, 4.2, 4.8, 5.5, 6.3, 5.0, 3.5, 2.8, 2.5, 1.0, -0.5, -2.0, -3.5, -4.1, -4.6, -3.0, -2.9,
        -2.0, -1.0, 0.2, 4.5, -4.4, -4.5, -2.0, -1.0, 0.0, 1.0,
    ];

    protected override DriftRuleOptions CreateOptions(int warmUpPeriods, int periodsToRaise, int periodsToClear) =>
        new TrackingSignalRuleOptions(4, 3, 6, warmUpPeriods, periodsToRaise, periodsToClear);

    protected override DriftInput[] Sample => [.. SignalPath.Select(DriftInput.FromTrackingSignal)];

    protected override Gen<DriftInput[]> RandomInputs =>
        Gen.Choose(0, 150).SelectMany(n => Gen.Frequency(
                (6, Gen.Choose(-150, 150).Select(i => (Jump: false, Value: i / 100.0))),
                (1, Gen.Choose(-800, 800).Select(i => (Jump: true, Value: i / 100.0))))
            .ArrayOf(n))
            .Select(steps =>
            {
                // A random walk with occasional jumps, rounded to two decimals so exact limit values occur.
                var inputs = new DriftInput[steps.Length];
                double s = 0;
                for (int i = 0; i < steps.Length; i++)
                {
                    s = steps[i].Jump ? steps[i].Value : Math.Clamp(Math.Round(s + steps[i].Value, 2), -9, 9);
                    inputs[i] = DriftInput.FromTrackingSignal(s);
                }

                return inputs;
            });

    protected override DriftInput[] InvalidInputs =>
    [
        DriftInput.FromTrackingSignal(double.NaN),
        DriftInput.FromTrackingSignal(double.PositiveInfinity),
        DriftInput.FromTrackingSignal(double.NegativeInfinity),
        DriftInput.FromTriggSignal(0.2), // no tracking signal given
    ];

    // Batch reference: the evidence is the signal itself for under-forecasting and its negation for over-forecasting.
    protected override (double Under, double Over)[] BatchEvidence(DriftInput[] inputs, DriftRuleOptions options) =>
        [.. inputs.Select(i => (i.TrackingSignal, -i.TrackingSignal))];

    protected override IEnumerable<(string What, double[] State)> RuleSpecificCorruptions(double[] good)
    {
        double[] bad = (double[])good.Clone();
        bad[10] = bad[9] + 1; // the over-forecast evidence must be −signal
        yield return ("over evidence not the negated signal", bad);
    }

    private static List<(int Period, DriftTransition Transition)> Run(DriftRuleOptions options, IEnumerable<double> signals, int firstPeriod = 1)
    {
        var rule = options.CreateRule();
        var result = new List<(int, DriftTransition)>();
        int period = firstPeriod;
        foreach (double s in signals)
        {
            DriftTransition t = rule.Evaluate(DriftInput.FromTrackingSignal(s));
            if (!t.IsNone)
            {
                result.Add((period, t));
            }

            period++;
        }

        return result;
    }

    [Fact]
    public void Evaluate_NistSmoothingErrorsAtLimitFour_RaisesOverForecastAtPeriodFive()
    {
        // NIST e-Handbook §6.4.3.1 (check-values S1, READ): SES with α = 0.1 and the first forecast equal to the first
        // actual. Check-values TS4 (DERIVED): every error is negative for t = 2..6 and TS = −1, −2, −3, −4, −5 exactly in
        // theory, so with limits ±4 (common practice) and no warm-up the rule raises an over-forecast episode at t = 5.
        // This loop happens to land exactly on −4.0 in IEEE doubles; the −3.9999999 landing that check-values warns about
        // is tested directly in Evaluate_SignalAtLimitWithinTolerance_RaisesInclusively.
        const double alpha = 0.1;
        double[] y = ReferenceData.NistSmoothing;
        double forecast = y[0];
        double rsfe = 0, sumAbs = 0;
        var signals = new List<double>();
        for (int i = 1; i < y.Length; i++)
        {
            double e = y[i] - forecast;
            rsfe += e;
            sumAbs += Math.Abs(e);
            signals.Add(rsfe / (sumAbs / i));
            forecast += alpha * e;
        }

        for (int t = 2; t <= 6; t++)
        {
            Assert.Equal(-(t - 1), signals[t - 2], 1e-9);
        }

        // TS4 at t = 12 (DERIVED): RSFE 4.987545, MAD 3.818755. check-values prints TS 1.306055, but its own
        // RSFE/MAD is 4.987545 / 3.818755 = 1.306065 (a transposed digit in the table), so the ratio is asserted.
        Assert.Equal(4.987545, rsfe, 5e-6);
        Assert.Equal(3.818755, sumAbs / 11, 5e-6);
        Assert.Equal(4.987545 / 3.818755, signals[^1], 2e-6);

        var transitions = Run(new TrackingSignalRuleOptions(limit: 4, warmUpPeriods: 0), signals, firstPeriod: 2);
        (int period, DriftTransition raised) = transitions[0];
        Assert.Equal(5, period);
        Assert.Equal(DriftTransitionKind.Raised, raised.Kind);
        Assert.Equal(DriftDirection.OverForecast, raised.Direction);
        Assert.Equal(DriftSeverity.Warning, raised.Severity);
        Assert.Equal(1, raised.EpisodeId);
        Assert.Equal(4, raised.PeriodsObserved);
        Assert.Equal(-4.0, raised.Signal, 1e-9);
        Assert.Equal(-4.0, raised.Level);

        // DERIVED from the same loop: TS = −5 at t = 6, −4.35 at t = 7, then −1.44 and −0.29 at t = 8 and 9, at or below
        // the default clear level 3 for the two periods the default needs, so the episode clears at t = 9.
        Assert.Equal(2, transitions.Count);
        Assert.Equal(9, transitions[1].Period);
        Assert.Equal(DriftTransitionKind.Cleared, transitions[1].Transition.Kind);
        Assert.Equal(DriftCloseReason.SignalReturned, transitions[1].Transition.Reason);
        Assert.Equal(1, transitions[1].Transition.EpisodeId);
        Assert.Equal(-3.0, transitions[1].Transition.Level);
    }

    [Theory]
    [InlineData(-4.0, true)]
    [InlineData(-3.9999999, true)]  // the floating-point landing check-values TS4 warns about
    [InlineData(-3.999996, true)]   // 1 part in a million short: still reaches the limit
    [InlineData(-3.99999, false)]   // 2.5 parts in a million short: does not
    [InlineData(-4.0000001, true)]
    [InlineData(3.9999999, true)]
    [InlineData(3.99999, false)]
    public void Evaluate_SignalAtLimitWithinTolerance_RaisesInclusively(double signal, bool raises)
    {
        // check-values convention 6: a limit check needs a documented inclusive rule; ours is x ≥ L·(1 − 10⁻⁶).
        var rule = new TrackingSignalRuleOptions(limit: 4, warmUpPeriods: 0).CreateRule();
        DriftTransition t = rule.Evaluate(DriftInput.FromTrackingSignal(signal));
        Assert.Equal(raises ? DriftTransitionKind.Raised : DriftTransitionKind.None, t.Kind);
        if (raises)
        {
            Assert.Equal(signal < 0 ? DriftDirection.OverForecast : DriftDirection.UnderForecast, t.Direction);
            Assert.Equal(signal, t.Signal);
        }
    }

    [Fact]
    public void Evaluate_SignalAtClearAndEscalationLevelsWithinTolerance_CountsAsReached()
    {
        // The same inclusive rule at the other levels: 6·(1 − 10⁻⁷) escalates; 3·(1 + 10⁻⁷) is at the clear level.
        var rule = new TrackingSignalRuleOptions(limit: 4, clearLevel: 3, escalationLevel: 6, warmUpPeriods: 0, periodsToClear: 1).CreateRule();
        Assert.Equal(DriftTransitionKind.Raised, rule.Evaluate(DriftInput.FromTrackingSignal(4.5)).Kind);
        Assert.Equal(DriftTransitionKind.Escalated, rule.Evaluate(DriftInput.FromTrackingSignal(6 * (1 - 1e-7))).Kind);
        Assert.Equal(DriftTransitionKind.Cleared, rule.Evaluate(DriftInput.FromTrackingSignal(3 * (1 + 1e-7))).Kind);
    }

    [Fact]
    public void Evaluate_SignalFlappingAtLimit_RaisesOnceAndClearsOnce()
    {
        // practice.md pitfall 7 (common practice): without hysteresis an alert flaps. A signal hovering around 4 crosses
        // the limit five times; with clear level 3 and two quiet periods to clear there is one episode.
        double[] signals = [3.9, 4.1, 3.7, 4.3, 3.5, 4.0, 3.2, 4.4, 3.1, 2.9, 3.5, 2.5, 2.0, 1.5];
        var transitions = Run(new TrackingSignalRuleOptions(limit: 4, clearLevel: 3, warmUpPeriods: 0, periodsToClear: 2), signals);
        Assert.Equal(2, transitions.Count);
        Assert.Equal((2, DriftTransitionKind.Raised), (transitions[0].Period, transitions[0].Transition.Kind));
        Assert.Equal((13, DriftTransitionKind.Cleared), (transitions[1].Period, transitions[1].Transition.Kind));
        Assert.Equal(1, transitions[1].Transition.EpisodeId);

        // Without hysteresis (clear just under the limit, one period to clear) the same path flaps.
        var flapping = Run(new TrackingSignalRuleOptions(limit: 4, clearLevel: 3.99, warmUpPeriods: 0, periodsToClear: 1), signals);
        Assert.True(flapping.Count(t => t.Transition.Kind == DriftTransitionKind.Raised) >= 4);
    }

    [Fact]
    public void Evaluate_SignalBeyondLimitFromTheStart_RaisesWhenWarmUpIsServed()
    {
        var rule = new TrackingSignalRuleOptions(warmUpPeriods: 8).CreateRule();
        for (int period = 1; period < 8; period++)
        {
            Assert.False(rule.IsWarm);
            Assert.True(rule.Evaluate(DriftInput.FromTrackingSignal(-5)).IsNone, $"period {period}");
        }

        DriftTransition raised = rule.Evaluate(DriftInput.FromTrackingSignal(-5));
        Assert.True(rule.IsWarm);
        Assert.Equal(DriftTransitionKind.Raised, raised.Kind);
        Assert.Equal(8, raised.PeriodsObserved);
        Assert.Equal(DriftDirection.OverForecast, raised.Direction);
    }

    [Fact]
    public void Evaluate_PeriodsToRaiseThree_NeedsThreeConsecutivePeriodsOnOneSide()
    {
        double[] signals = [4.5, 4.5, 3.9, 4.5, -4.5, 4.5, 4.5, 4.5];
        var transitions = Run(new TrackingSignalRuleOptions(warmUpPeriods: 0, periodsToRaise: 3), signals);
        Assert.Single(transitions);
        Assert.Equal(8, transitions[0].Period);
        Assert.Equal(DriftDirection.UnderForecast, transitions[0].Transition.Direction);
    }

    [Fact]
    public void Evaluate_SignalPassingEscalationLevel_EscalatesOnceAndNeverStepsDown()
    {
        double[] signals = [4.5, 5.0, 7.0, 8.0, 5.0, 4.2, 2.0, 2.0];
        var transitions = Run(new TrackingSignalRuleOptions(warmUpPeriods: 0), signals);
        Assert.Equal(3, transitions.Count);
        Assert.Equal((1, DriftTransitionKind.Raised, DriftSeverity.Warning), (transitions[0].Period, transitions[0].Transition.Kind, transitions[0].Transition.Severity));
        Assert.Equal((3, DriftTransitionKind.Escalated, DriftSeverity.Critical), (transitions[1].Period, transitions[1].Transition.Kind, transitions[1].Transition.Severity));
        Assert.Equal(7.0, transitions[1].Transition.Signal);
        Assert.Equal(6.0, transitions[1].Transition.Level);
        Assert.Equal((8, DriftTransitionKind.Cleared, DriftSeverity.Critical), (transitions[2].Period, transitions[2].Transition.Kind, transitions[2].Transition.Severity));

        // A first period already beyond the escalation level raises a Critical episode directly.
        var direct = Run(new TrackingSignalRuleOptions(warmUpPeriods: 0), [-6.5, -7.0]);
        Assert.Single(direct);
        Assert.Equal((DriftTransitionKind.Raised, DriftSeverity.Critical), (direct[0].Transition.Kind, direct[0].Transition.Severity));

        // +∞ switches escalation off.
        var never = Run(new TrackingSignalRuleOptions(escalationLevel: double.PositiveInfinity, warmUpPeriods: 0), [5.0, 50.0, 500.0]);
        Assert.Single(never);
        Assert.Equal(DriftSeverity.Warning, never[0].Transition.Severity);
    }

    [Fact]
    public void Evaluate_DirectionFlipWhileOpen_ClearsThenRaisesNewEpisodeNextPeriod()
    {
        double[] signals = [5.0, -4.5, -4.5, -4.6];
        var transitions = Run(new TrackingSignalRuleOptions(warmUpPeriods: 0, periodsToClear: 3), signals);
        Assert.Equal(3, transitions.Count);
        Assert.Equal((1, DriftTransitionKind.Raised, DriftDirection.UnderForecast, 1L),
            (transitions[0].Period, transitions[0].Transition.Kind, transitions[0].Transition.Direction, transitions[0].Transition.EpisodeId));
        DriftTransition reversed = transitions[1].Transition;
        Assert.Equal((2, DriftTransitionKind.Cleared, DriftCloseReason.DirectionReversed), (transitions[1].Period, reversed.Kind, reversed.Reason));
        Assert.Equal(DriftDirection.UnderForecast, reversed.Direction);
        Assert.Equal(-4.5, reversed.Signal);
        Assert.Equal(-4.0, reversed.Level);
        Assert.Equal((3, DriftTransitionKind.Raised, DriftDirection.OverForecast, 2L),
            (transitions[2].Period, transitions[2].Transition.Kind, transitions[2].Transition.Direction, transitions[2].Transition.EpisodeId));
    }

    [Fact]
    public void Acknowledge_TrackerNotReset_SignalStillBeyondLimitRaisesAgainAfterWarmUp()
    {
        // Documented: the rule cannot reset the caller's RSFE, so a signal that stays red re-raises once warm-up is served.
        var rule = new TrackingSignalRuleOptions(warmUpPeriods: 3).CreateRule();
        for (int i = 0; i < 3; i++)
        {
            rule.Evaluate(DriftInput.FromTrackingSignal(-5));
        }

        Assert.Equal(1, rule.EpisodeId);
        Assert.Equal(DriftCloseReason.Acknowledged, rule.Acknowledge().Reason);
        Assert.True(rule.Evaluate(DriftInput.FromTrackingSignal(-5)).IsNone);
        Assert.True(rule.Evaluate(DriftInput.FromTrackingSignal(-5)).IsNone);
        DriftTransition again = rule.Evaluate(DriftInput.FromTrackingSignal(-5));
        Assert.Equal(DriftTransitionKind.Raised, again.Kind);
        Assert.Equal(2, again.EpisodeId);
    }

    [Fact]
    public void Constructor_Defaults_AreTheDocumentedValues()
    {
        // ±4 is common practice (practice.md); clear 3, escalation 6, warm-up 8, 1 period to raise, 2 to clear are library defaults.
        var o = new TrackingSignalRuleOptions();
        Assert.Equal(4.0, o.Limit);
        Assert.Equal(4.0, o.RaiseLevel);
        Assert.Equal(3.0, o.ClearLevel);
        Assert.Equal(6.0, o.EscalationLevel);
        Assert.Equal(8, o.WarmUpPeriods);
        Assert.Equal(1, o.PeriodsToRaise);
        Assert.Equal(2, o.PeriodsToClear);
        Assert.Equal(DriftRuleKind.TrackingSignal, o.Kind);

        var three = new TrackingSignalRuleOptions(limit: 3); // ±3 is also seen; the derived levels follow the limit
        Assert.Equal(2.25, three.ClearLevel);
        Assert.Equal(4.5, three.EscalationLevel);
        Assert.Equal(new TrackingSignalRuleOptions(3, 2.25, 4.5), three);
    }

    [Fact]
    public void Constructor_InvalidLevelsOrCounts_ThrowsWithWhatIsAllowed()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(limit: 4, clearLevel: 4));
        Assert.Contains("below the raise level", ex.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(limit: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(limit: double.NaN));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(limit: double.PositiveInfinity));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(clearLevel: -0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(escalationLevel: 3.9));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(escalationLevel: double.NaN));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(warmUpPeriods: -1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(periodsToRaise: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(periodsToClear: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TrackingSignalRuleOptions(periodsToClear: DriftRuleOptions.MaxDebouncePeriods + 1));
    }
}
