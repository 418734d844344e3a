using System.Diagnostics;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using MathNet.Numerics.Distributions;
using StreamForecast.Alerts;

namespace StreamForecast.Tests.Alerts;

/// <summary>Shared pieces of the CUSUM test classes (plain batch CUSUM, samples, generators).</summary>
public abstract class CusumContractTests : DriftRuleContractTests
{
    private const double Sigma = 2.0;

    protected abstract bool ResetAfterAlarm { get; }

    protected override DriftRuleOptions CreateOptions(int warmUpPeriods, int periodsToRaise, int periodsToClear) =>
        new CusumRuleOptions(decisionInterval: 5, referenceValue: 0.5, resetAfterAlarm: ResetAfterAlarm, warmUpPeriods: warmUpPeriods,
            periodsToRaise: ResetAfterAlarm ? 1 : periodsToRaise, periodsToClear: periodsToClear);

    /// <summary>
    /// Standardized errors (invented for the tests): quiet; a +1.5σ shift with one +11σ error (raise, escalate); a
    /// −0.6σ stretch that brings C⁺ back down (clear); a −1.5σ shift (raise over-forecast); quiet (clear); a +2σ shift
    /// broken by one −8σ error (direction reversal) and a short −1σ stretch; then +0.5σ (clear).
    /// </summary>
    internal static double[] SampleZ
    {
        get
        {
            var z = new List<double>();
            for (int i = 0; i < 12; i++)
            {
                z.Add(i % 2 == 0 ? 0.3 : -0.3);
            }

            z.AddRange(Enumerable.Repeat(1.5, 6));
            z.Add(11);
            z.AddRange(Enumerable.Repeat(1.5, 2));
            z.AddRange(Enumerable.Repeat(-0.6, 20));
            z.AddRange(Enumerable.Repeat(-1.5, 6));
            for (int i = 0; i < 16; i++)
            {
                z.Add(i % 2 == 0 ? 0.4 : -0.2);
            }

            z.AddRange(Enumerable.Repeat(2.0, 4));
            z.Add(-8);
            z.AddRange(Enumerable.Repeat(-1.0, 3));
            z.AddRange(Enumerable.Repeat(0.5, 14));
            return [.. z];
        }
    }

    protected override DriftInput[] Sample => [.. SampleZ.Select(z => DriftInput.FromError(z * Sigma, Sigma))];

    protected override Gen<DriftInput[]> RandomInputs =>
        Gen.Choose(0, 150).SelectMany(n => Gen.Zip(Gen.Choose(0, 12), Gen.Choose(-150, 150)).ArrayOf(n))
            .SelectMany(steps => Gen.Elements(0.5, 1.0, 2.5).Select(sigma =>
            {
                // Standardized errors around a mean that shifts now and then, with rare large jumps.
                var inputs = new DriftInput[steps.Length];
                double mean = 0;
                for (int i = 0; i < steps.Length; i++)
                {
                    (int mode, int noise) = steps[i];
                    mean = mode switch { 9 => 0, 10 => 1.5, 11 => -1.5, _ => mean };
                    double z = mode == 12 ? noise / 15.0 : mean + (noise / 100.0);
                    inputs[i] = DriftInput.FromError(z * sigma, sigma);
                }

                return inputs;
            }));

    protected override DriftInput[] InvalidInputs =>
    [
        DriftInput.FromError(double.NaN, 1),
        DriftInput.FromError(double.PositiveInfinity, 1),
        DriftInput.FromError(double.NegativeInfinity, 1),
        DriftInput.FromError(1, 0),
        DriftInput.FromError(1, -1),
        DriftInput.FromError(1, double.NaN),
        DriftInput.FromError(1, double.PositiveInfinity),
        DriftInput.FromError(1e300, 1e-300), // e/σ overflows
        DriftInput.FromTrackingSignal(3),    // no error or σ given
    ];

    /// <summary>
    /// Plain batch tabular CUSUM (Montgomery, from memory): C⁺ = max(0, z − k + C⁺), C⁻ = max(0, −z − k + C⁻), z = e/σ;
    /// with the reset option both sums restart at 0 after a period in which either reaches h. Returns the sums before
    /// the reset (the evidence) and after it (what carries to the next period).
    /// </summary>
    internal static (double Upper, double Lower, double UpperAfter, double LowerAfter)[] PlainCusum(DriftInput[] inputs, double k, double h, bool reset)
    {
        var result = new (double, double, double, double)[inputs.Length];
        double upper = 0, lower = 0;
        for (int t = 0; t < inputs.Length; t++)
        {
            double z = inputs[t].Error / inputs[t].Sigma;
            upper = Math.Max(0, z - k + upper);
            lower = Math.Max(0, -z - k + lower);
            double before = upper, beforeLower = lower;
            if (reset && (PlainDriftReference.Reaches(upper, h) || PlainDriftReference.Reaches(lower, h)))
            {
                upper = 0;
                lower = 0;
            }

            result[t] = (before, beforeLower, upper, lower);
        }

        return result;
    }

    protected override (double Under, double Over)[] BatchEvidence(DriftInput[] inputs, DriftRuleOptions options)
    {
        var o = (CusumRuleOptions)options;
        return [.. PlainCusum(inputs, o.ReferenceValue, o.DecisionInterval, o.ResetAfterAlarm).Select(c => (c.Upper, c.Lower))];
    }

    protected override IEnumerable<(string What, double[] State)> RuleSpecificCorruptions(double[] good)
    {
        double[] negative = (double[])good.Clone();
        negative[11] = -0.5;
        yield return ("negative upper sum", negative);
        double[] mismatch = (double[])good.Clone();
        mismatch[12] += 0.25;
        yield return ("lower sum not matching the last evidence", mismatch);
    }

    [Property(MaxTest = 300)]
    public Property Evaluate_RandomStandardizedErrors_SumsAndAlarmPeriodsMatchPlainLoop() =>
        Prop.ForAll(RandomInputs.ToArbitrary(), Gen.Elements(4.0, 5.0).ToArbitrary(), (inputs, h) =>
        {
            // Alarm periods: with no warm-up, one period to raise and one to clear, and a clear level of 0, an episode is
            // raised exactly at a plain-loop alarm (a sum reaching h) that follows a period with the episode's sum back at 0
            // or no episode; both the sums and the raise periods must match the plain loop.
            var o = new CusumRuleOptions(decisionInterval: h, clearLevel: 0, resetAfterAlarm: ResetAfterAlarm, warmUpPeriods: 0, periodsToClear: 1);
            var plain = PlainCusum(inputs, 0.5, h, ResetAfterAlarm);
            var rule = (CusumRule)o.CreateRule();
            int open = 0;
            int reversedTo = 0;
            for (int t = 0; t < inputs.Length; t++)
            {
                DriftTransition actual = rule.Evaluate(inputs[t]);
                var c = plain[t];
                if (Math.Abs(rule.UpperSum - c.UpperAfter) > 1e-12 * Math.Max(1, c.UpperAfter)
                    || Math.Abs(rule.LowerSum - c.LowerAfter) > 1e-12 * Math.Max(1, c.LowerAfter))
                {
                    return false.Label($"period {t + 1}: sums {rule.UpperSum:R}/{rule.LowerSum:R}, plain {c.UpperAfter:R}/{c.LowerAfter:R}");
                }

                bool upAlarm = PlainDriftReference.Reaches(c.Upper, h);
                bool downAlarm = PlainDriftReference.Reaches(c.Lower, h);
                bool expectRaise = open == 0 && (upAlarm || downAlarm);
                if (expectRaise != (actual.Kind == DriftTransitionKind.Raised))
                {
                    return false.Label($"period {t + 1}: plain alarm {upAlarm}/{downAlarm} with open {open}, rule {actual}");
                }

                if (expectRaise)
                {
                    open = upAlarm && downAlarm && reversedTo != 0 ? reversedTo : upAlarm && (!downAlarm || c.Upper >= c.Lower) ? 1 : -1;
                    reversedTo = 0;
                }
                else if (open == 0 && !upAlarm && !downAlarm)
                {
                    reversedTo = 0;
                }
                else if (open != 0 && ((open > 0 && downAlarm && !upAlarm) || (open < 0 && upAlarm && !downAlarm)))
                {
                    reversedTo = -open; // reversed: a two-sided tie at the next raise goes the new way
                    open = 0;
                }
                else if (open != 0 && (open > 0 ? c.Upper : c.Lower) == 0)
                {
                    open = 0;
                }
            }

            return true.ToProperty();
        });

    [Fact]
    public void Acknowledge_OpenEpisode_RestartsBothSumsAtZero()
    {
        var rule = (CusumRule)Options.CreateRule();
        foreach (DriftInput input in Sample)
        {
            rule.Evaluate(input);
            if (rule.IsOpen && rule.UpperSum + rule.LowerSum > 0)
            {
                break;
            }
        }

        Assert.True(rule.IsOpen);
        Assert.Equal(DriftCloseReason.Acknowledged, rule.Acknowledge().Reason);
        Assert.Equal(0.0, rule.UpperSum);
        Assert.Equal(0.0, rule.LowerSum);
    }
}

public sealed class CusumRuleTests : CusumContractTests
{
    protected override bool ResetAfterAlarm => false;

    [Fact]
    public void Evaluate_HandComputedShift_RaisesWhenUpperSumReachesH()
    {
        // Tabular CUSUM definition (Montgomery, from memory), k = 0.5, h = 5: a steady z = 1.5 adds 1 per period to C⁺,
        // so C⁺ = 1, 2, 3, 4, 5 and the alarm comes at the fifth period (C⁺ = h, inclusive); C⁻ stays 0.
        var rule = (CusumRule)new CusumRuleOptions(warmUpPeriods: 0).CreateRule();
        for (int period = 1; period <= 4; period++)
        {
            Assert.True(rule.Evaluate(DriftInput.FromError(3.0, 2.0)).IsNone);
            Assert.Equal(period, rule.UpperSum, 1e-12);
            Assert.Equal(0.0, rule.LowerSum);
        }

        DriftTransition raised = rule.Evaluate(DriftInput.FromError(3.0, 2.0));
        Assert.Equal(DriftTransitionKind.Raised, raised.Kind);
        Assert.Equal(DriftDirection.UnderForecast, raised.Direction);
        Assert.Equal(5.0, raised.Signal, 1e-12);
        Assert.Equal(5.0, raised.Level);

        // The same shift downwards raises an over-forecast episode with the signal reported as −C⁻.
        var down = new CusumRuleOptions(warmUpPeriods: 0).CreateRule();
        DriftTransition last = default;
        for (int period = 1; period <= 5; period++)
        {
            last = down.Evaluate(DriftInput.FromError(-3.0, 2.0));
        }

        Assert.Equal(DriftDirection.OverForecast, last.Direction);
        Assert.Equal(-5.0, last.Signal, 1e-12);
        Assert.Equal(-5.0, last.Level);
    }

    [Fact]
    public void Evaluate_SimulatedNormalErrors_RunLengthsMatchPublishedAverages()
    {
        // Two-sided tabular CUSUM, k = 0.5: average run length about 168 (h = 4) and 465 (h = 5) with no shift, about
        // 8.4 (h = 4) and 10.4 (h = 5) to detect a 1σ shift from the start — Montgomery, from memory; practice.md reports
        // that a simulation agrees. Independent N(0, 1) errors from MathNet.Numerics with a seeded System.Random; the
        // band is ±25 %, several standard errors wide for these run counts (so the check is stable, not tuned).
        var clock = Stopwatch.StartNew();
        (double h, double shift, double published, int runs)[] cases =
        [
            (4, 0, 168, 1000),
            (5, 0, 465, 1000),
            (4, 1, 8.38, 2000),
            (5, 1, 10.4, 2000),
        ];
        foreach ((double h, double shift, double published, int runs) in cases)
        {
            var normal = new Normal(0, 1, new Random(20261201 + (int)(10 * h) + (int)shift));
            var rule = new CusumRuleOptions(decisionInterval: h, warmUpPeriods: 0).CreateRule();
            long total = 0;
            for (int r = 0; r < runs; r++)
            {
                rule.Reset();
                int length = 0;
                DriftTransition t;
                do
                {
                    length++;
                    t = rule.Evaluate(DriftInput.FromError(normal.Sample() + shift, 1.0));
                }
                while (t.Kind != DriftTransitionKind.Raised && length < 100_000);

                total += length;
            }

            double average = (double)total / runs;
            Assert.True(Math.Abs(average - published) <= 0.25 * published, $"h={h}, shift={shift}σ: simulated ARL {average:F2}, published {published}");
        }

        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(2), $"the simulation took {clock.Elapsed.TotalSeconds:F2} s");
    }

    [Fact]
    public void Evaluate_NoResetLongShift_KeepsOneEpisodeUntilSumComesBackDown()
    {
        // Without reset the sum keeps growing through a persistent shift: one episode, no flapping.
        var rule = (CusumRule)new CusumRuleOptions(warmUpPeriods: 0).CreateRule();
        int raised = 0;
        for (int i = 0; i < 200; i++)
        {
            raised += rule.Evaluate(DriftInput.FromError(1.5, 1.0)).Kind == DriftTransitionKind.Raised ? 1 : 0;
        }

        Assert.Equal(1, raised);
        Assert.Equal(200.0, rule.UpperSum, 1e-9);
    }

    [Fact]
    public void Evaluate_RiseThenFallWithBothSumsAboveH_DoesNotFlapBetweenEpisodes()
    {
        // A promotion lifts sales (z = +3 for 10 periods, C⁺ climbs to 25), then a dip follows (z = −3): C⁻ passes h while
        // C⁺ is still far above it. The under-forecast episode stays open until C⁺ falls below h, then reverses once.
        // Hand-computed from C⁺ = max(0, z − k + C⁺), C⁻ = max(0, −z − k + C⁻) with k = 0.5, h = 5 (Montgomery, from memory).
        var rule = new CusumRuleOptions(warmUpPeriods: 0).CreateRule();
        var kinds = new List<(int Period, DriftTransitionKind Kind, DriftDirection Direction)>();
        double[] z = [.. Enumerable.Repeat(3.0, 10), .. Enumerable.Repeat(-3.0, 12), .. Enumerable.Repeat(0.0, 30)];
        for (int t = 0; t < z.Length; t++)
        {
            DriftTransition tr = rule.Evaluate(DriftInput.FromError(z[t], 1.0));
            if (!tr.IsNone)
            {
                kinds.Add((t, tr.Kind, tr.Direction));
            }
        }

        // Raised (under) at t=1 (C⁺ = 5), escalated at t=3 (C⁺ = 10); C⁺ peaks at 25 (t=9) and falls by 3.5 a period;
        // C⁻ reaches 5 at t=11 while C⁺ is still 18; C⁺ first falls below h at t=15 (4 < 5, C⁻ = 15): one reversal, and
        // the over-forecast episode is raised at t=16.
        Assert.Equal(1, kinds.Count(k => k.Kind == DriftTransitionKind.Raised && k.Direction == DriftDirection.UnderForecast));
        Assert.Equal(1, kinds.Count(k => k.Kind == DriftTransitionKind.Raised && k.Direction == DriftDirection.OverForecast));
        Assert.Equal(2, kinds.Count(k => k.Kind == DriftTransitionKind.Raised));
        var reversal = Assert.Single(kinds, k => k.Kind == DriftTransitionKind.Cleared && k.Direction == DriftDirection.UnderForecast);
        Assert.Equal(15, reversal.Period);
        Assert.Contains((16, DriftTransitionKind.Raised, DriftDirection.OverForecast), kinds);
    }

    [Fact]
    public void Evaluate_BothSumsAboveHAfterReversal_RaisesTheReversedDirectionWithoutFlippingBack()
    {
        // After the under-forecast episode is reversed, the two sums stay close and both above h while errors alternate:
        // the next raise follows the reversal (over-forecast) even on a period where C⁺ edges ahead again, and it is not
        // reversed back while C⁻ keeps the lead. (Plain CUSUM arithmetic, k = 0.5, h = 5.)
        var rule = new CusumRuleOptions(warmUpPeriods: 0).CreateRule();
        double[] z = [3, 3, 3, 3, -3, -3, -3, -3, -3, 2.6, -2.4, 2.6, -2.4];
        var transitions = new List<DriftTransition>();
        foreach (double e in z)
        {
            DriftTransition t = rule.Evaluate(DriftInput.FromError(e, 1.0));
            if (!t.IsNone)
            {
                transitions.Add(t);
            }
        }

        var raised = transitions.Where(t => t.Kind == DriftTransitionKind.Raised).Select(t => t.Direction).ToList();
        Assert.Equal([DriftDirection.UnderForecast, DriftDirection.OverForecast], raised);
        Assert.Single(transitions, t => t.Reason == DriftCloseReason.DirectionReversed);
    }

    [Fact]
    public void Constructor_Defaults_AreTheDocumentedValues()
    {
        // k = 0.5 and h = 5 (Montgomery, from memory; practice.md); clear h/2 and escalation 2h are library defaults.
        var o = new CusumRuleOptions();
        Assert.Equal(5.0, o.DecisionInterval);
        Assert.Equal(0.5, o.ReferenceValue);
        Assert.Equal(2.5, o.ClearLevel);
        Assert.Equal(10.0, o.EscalationLevel);
        Assert.False(o.ResetAfterAlarm);
        Assert.Equal(8, o.WarmUpPeriods);
        Assert.Equal(DriftRuleKind.Cusum, o.Kind);
        Assert.Equal(2.0, new CusumRuleOptions(decisionInterval: 4).ClearLevel);
    }

    [Fact]
    public void Constructor_InvalidArguments_ThrowWithWhatIsAllowed()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new CusumRuleOptions(decisionInterval: 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CusumRuleOptions(referenceValue: -0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CusumRuleOptions(referenceValue: double.NaN));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CusumRuleOptions(clearLevel: 5));
        var ex = Assert.Throws<ArgumentException>(() => new CusumRuleOptions(resetAfterAlarm: true, periodsToRaise: 2));
        Assert.Contains("periodsToRaise = 1", ex.Message, StringComparison.Ordinal);
    }
}

public sealed class CusumResetRuleTests : CusumContractTests
{
    protected override bool ResetAfterAlarm => true;

    [Fact]
    public void Evaluate_ResetAfterAlarm_RestartsSumsAndReportsTheAlarmValue()
    {
        var rule = (CusumRule)new CusumRuleOptions(resetAfterAlarm: true, warmUpPeriods: 0, periodsToClear: 20).CreateRule();
        DriftTransition t = default;
        for (int i = 0; i < 5; i++)
        {
            t = rule.Evaluate(DriftInput.FromError(1.5, 1.0));
        }

        Assert.Equal(DriftTransitionKind.Raised, t.Kind);
        Assert.Equal(5.0, t.Signal, 1e-12); // the sum that alarmed, before the restart
        Assert.Equal(0.0, rule.UpperSum);
        Assert.Equal(0.0, rule.LowerSum);

        // A persistent shift alarms again every 5 periods; with a clear count longer than that the episode stays open.
        for (int i = 0; i < 50; i++)
        {
            Assert.True(rule.Evaluate(DriftInput.FromError(1.5, 1.0)).IsNone);
        }

        Assert.Equal(1, rule.EpisodeId);
    }
}
