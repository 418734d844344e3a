using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Alerts;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Alerts;

/// <summary>
/// The behaviour every drift rule shares. Each rule's test class inherits this suite and supplies options, a
/// deterministic sample that opens, escalates and closes episodes, random inputs, invalid inputs, and a plain batch
/// recomputation of the rule's per-period evidence; the episode logic is checked against <see cref="PlainDriftReference"/>.
/// </summary>
public abstract class DriftRuleContractTests
{
    /// <summary>Options with typical levels and the given debouncing.</summary>
    protected abstract DriftRuleOptions CreateOptions(int warmUpPeriods, int periodsToRaise, int periodsToClear);

    /// <summary>The options most checks use: warm-up 2, raise after 1 period, clear after 2.</summary>
    protected DriftRuleOptions Options => CreateOptions(2, 1, 2);

    /// <summary>A deterministic sequence that raises, escalates and clears episodes in both directions under <see cref="Options"/>.</summary>
    protected abstract DriftInput[] Sample { get; }

    /// <summary>Random valid input sequences.</summary>
    protected abstract Gen<DriftInput[]> RandomInputs { get; }

    /// <summary>Inputs the rule must reject.</summary>
    protected abstract DriftInput[] InvalidInputs { get; }

    /// <summary>
    /// The batch reference for the rule's statistic: each period's evidence for under- and over-forecasting, written
    /// the obvious way from the published definition (no shared code with the rule).
    /// </summary>
    protected abstract (double Under, double Over)[] BatchEvidence(DriftInput[] inputs, DriftRuleOptions options);

    private DriftRule Fed(int count, DriftRuleOptions? options = null)
    {
        var rule = (options ?? Options).CreateRule();
        foreach (DriftInput input in Sample.AsSpan(0, count))
        {
            rule.Evaluate(input);
        }

        return rule;
    }

    private int FirstRaise()
    {
        var rule = Options.CreateRule();
        for (int i = 0; i < Sample.Length; i++)
        {
            if (rule.Evaluate(Sample[i]).Kind == DriftTransitionKind.Raised)
            {
                return i;
            }
        }

        throw new InvalidOperationException("The sample never raises an episode.");
    }

    [Fact]
    public void Evaluate_Sample_MatchesPlainReferenceAndCoversEveryTransition()
    {
        DriftRuleOptions o = Options;
        DriftTransition[] expected = PlainDriftReference.Transitions(BatchEvidence(Sample, o), o);
        var rule = o.CreateRule();
        var seen = new HashSet<(DriftTransitionKind, DriftCloseReason, DriftDirection)>();
        for (int t = 0; t < Sample.Length; t++)
        {
            DriftTransition actual = rule.Evaluate(Sample[t]);
            Assert.True(PlainDriftReference.Same(expected[t], actual), $"period {t + 1}: expected {expected[t]}, got {actual}");
            seen.Add((actual.Kind, actual.Reason, actual.Direction));
        }

        // The sample is meant to exercise the whole state machine in both directions.
        Assert.Contains((DriftTransitionKind.Raised, DriftCloseReason.None, DriftDirection.UnderForecast), seen);
        Assert.Contains((DriftTransitionKind.Raised, DriftCloseReason.None, DriftDirection.OverForecast), seen);
        Assert.Contains((DriftTransitionKind.Escalated, DriftCloseReason.None, DriftDirection.UnderForecast), seen);
        Assert.Contains((DriftTransitionKind.Cleared, DriftCloseReason.SignalReturned, DriftDirection.UnderForecast), seen);
        Assert.Contains((DriftTransitionKind.Cleared, DriftCloseReason.SignalReturned, DriftDirection.OverForecast), seen);
        Assert.Contains((DriftTransitionKind.Cleared, DriftCloseReason.DirectionReversed, DriftDirection.UnderForecast), seen);
    }

    [Property(MaxTest = 300)]
    public Property Evaluate_RandomInputsAndDebouncing_MatchesPlainReferenceEveryPeriod() =>
        Prop.ForAll(
            RandomInputs.ToArbitrary(),
            Gen.Choose(0, 4).SelectMany(w => Gen.Choose(1, 3).SelectMany(r => Gen.Choose(1, 3).Select(c => (w, r, c)))).ToArbitrary(),
            (inputs, debounce) =>
            {
                (int warmUp, int toRaise, int toClear) = debounce;
                DriftRuleOptions o = CreateOptions(warmUp, toRaise, toClear);
                DriftTransition[] expected = PlainDriftReference.Transitions(BatchEvidence(inputs, o), o);
                var rule = o.CreateRule();
                for (int t = 0; t < inputs.Length; t++)
                {
                    DriftTransition actual = rule.Evaluate(inputs[t]);
                    if (!PlainDriftReference.Same(expected[t], actual, 1e-9))
                    {
                        return false.Label($"{o.RuleName} warm-up {warmUp}, raise {toRaise}, clear {toClear}, period {t + 1}: expected {expected[t]}, got {actual}");
                    }
                }

                return true.ToProperty();
            });

    [Property(MaxTest = 100)]
    public Property ExportState_RandomSplit_RestoredRunEqualsUninterruptedRun() =>
        Prop.ForAll(RandomInputs.ToArbitrary(), Gen.Choose(0, 1000).ToArbitrary(), (inputs, cut) =>
        {
            int split = cut % (inputs.Length + 1);
            var whole = Options.CreateRule();
            var first = Options.CreateRule();
            for (int i = 0; i < split; i++)
            {
                whole.Evaluate(inputs[i]);
                first.Evaluate(inputs[i]);
            }

            var second = Options.CreateRule();
            second.ImportState(first.ExportState());
            for (int i = split; i < inputs.Length; i++)
            {
                if (whole.Evaluate(inputs[i]) != second.Evaluate(inputs[i]))
                {
                    return false.Label($"split at {split}, period {i + 1}");
                }
            }

            return whole.ExportState().AsSpan().SequenceEqual(second.ExportState()).Label($"split at {split}");
        });

    [Fact]
    public void ExportState_ImportMidEpisode_ContinuesIdenticallyIncludingEpisodeNumbering()
    {
        bool splitWhileOpen = false;
        for (int split = 0; split <= Sample.Length; split++)
        {
            var original = Fed(split);
            var copy = Options.CreateRule();
            copy.ImportState(original.ExportState());
            splitWhileOpen |= original.IsOpen && original.EpisodeId > 1;
            Assert.Equal(original.IsOpen, copy.IsOpen);
            Assert.Equal(original.EpisodeId, copy.EpisodeId);
            Assert.Equal(original.LastEpisodeId, copy.LastEpisodeId);
            Assert.Equal(original.Direction, copy.Direction);
            Assert.Equal(original.Severity, copy.Severity);
            Assert.Equal(original.PeriodsObserved, copy.PeriodsObserved);
            Assert.Equal(original.IsWarm, copy.IsWarm);
            foreach (DriftInput input in Sample.AsSpan(split))
            {
                Assert.Equal(original.Evaluate(input), copy.Evaluate(input));
            }

            Assert.Equal(original.ExportState(), copy.ExportState());
        }

        Assert.True(splitWhileOpen, "the sample should be split at least once while a second or later episode is open");
    }

    [Fact]
    public void Evaluate_InvalidInput_ThrowsAndLeavesStateUnchanged()
    {
        foreach (int fed in new[] { 0, 1, FirstRaise() + 1, Sample.Length })
        {
            var rule = Fed(fed);
            double[] before = rule.ExportState();
            foreach (DriftInput bad in InvalidInputs)
            {
                var ex = Assert.Throws<ArgumentOutOfRangeException>(() => rule.Evaluate(bad));
                Assert.Contains("is not allowed", ex.Message, StringComparison.Ordinal);
                Assert.Equal(before, rule.ExportState());
            }
        }
    }

    [Fact]
    public void ImportState_MalformedState_ThrowsAndLeavesStateUnchanged()
    {
        var rule = Fed(FirstRaise() + 1);
        Assert.True(rule.IsOpen);
        double[] before = rule.ExportState();
        double[] good = (double[])before.Clone();

        var corruptions = new List<(string What, double[] State)>
        {
            ("one number short", good[..^1]),
            ("one number too many", [.. good, 0.0]),
        };

        void Corrupt(string what, int index, double value)
        {
            double[] bad = (double[])good.Clone();
            bad[index] = value;
            corruptions.Add((what, bad));
        }

        Corrupt("NaN period count", 0, double.NaN);
        Corrupt("infinite last number", good.Length - 1, double.PositiveInfinity);
        Corrupt("negative period count", 0, -1);
        Corrupt("fractional period count", 0, 2.5);
        Corrupt("period count inside the warm-up while open", 0, 0);
        Corrupt("negative episode id", 1, -1);
        Corrupt("no episode id while open", 1, 0);
        Corrupt("direction out of range", 2, 2);
        Corrupt("no severity while open", 3, 0);
        Corrupt("severity out of range", 3, 3);
        Corrupt("run longer than PeriodsToRaise", 4, Options.PeriodsToRaise + 1);
        Corrupt("run contradicting the evidence", 4, good[4] > 0 ? 0 : 1);
        Corrupt("clear count reaching PeriodsToClear", 8, Options.PeriodsToClear);
        corruptions.AddRange(RuleSpecificCorruptions(good));

        foreach ((string what, double[] bad) in corruptions)
        {
            var ex = Assert.Throws<ArgumentException>(() => rule.ImportState(bad));
            Assert.Contains("Nothing was imported", ex.Message, StringComparison.Ordinal);
            Assert.True(before.AsSpan().SequenceEqual(rule.ExportState()), what);
        }

        double[] closed = (double[])good.Clone();
        closed[2] = 0; // no episode, but a severity left over
        Assert.Throws<ArgumentException>(() => rule.ImportState(closed));
        Assert.Equal(before, rule.ExportState());
    }

    /// <summary>Extra malformed states for the rule's own numbers, derived from a good state.</summary>
    protected virtual IEnumerable<(string What, double[] State)> RuleSpecificCorruptions(double[] good) => [];

    [Fact]
    public void Reset_AfterEpisodes_BehavesLikeNew()
    {
        var rule = Fed(Sample.Length);
        Assert.True(rule.LastEpisodeId > 0);
        rule.Reset();
        var fresh = Options.CreateRule();
        Assert.Equal(fresh.ExportState(), rule.ExportState());
        Assert.False(rule.IsOpen);
        Assert.Equal(0, rule.LastEpisodeId);
        Assert.Equal(0, rule.PeriodsObserved);
        foreach (DriftInput input in Sample)
        {
            Assert.Equal(fresh.Evaluate(input), rule.Evaluate(input));
        }
    }

    [Fact]
    public void Acknowledge_OpenEpisode_ClearsOnceRestartsWarmUpAndContinuesNumbering()
    {
        int raisedAt = FirstRaise();
        var rule = Fed(raisedAt + 1);
        long episode = rule.EpisodeId;
        DriftDirection direction = rule.Direction;
        DriftSeverity severity = rule.Severity;

        DriftTransition closed = rule.Acknowledge();
        Assert.Equal(DriftTransitionKind.Cleared, closed.Kind);
        Assert.Equal(DriftCloseReason.Acknowledged, closed.Reason);
        Assert.Equal(episode, closed.EpisodeId);
        Assert.Equal(direction, closed.Direction);
        Assert.Equal(severity, closed.Severity);
        Assert.Equal(raisedAt + 1, closed.PeriodsObserved);
        Assert.Equal(Math.Sign(closed.Signal), direction == DriftDirection.UnderForecast ? 1 : -1);
        Assert.False(rule.IsOpen);
        Assert.False(rule.IsWarm);
        Assert.Equal(0, rule.PeriodsObserved);
        Assert.Equal(episode, rule.LastEpisodeId);

        // A second acknowledge has nothing to close and changes nothing.
        double[] afterFirst = rule.ExportState();
        Assert.True(rule.Acknowledge().IsNone);
        Assert.Equal(afterFirst, rule.ExportState());

        // The acknowledged rule is in the same state as a new one, except that numbering continues.
        var fresh = Options.CreateRule();
        foreach (DriftInput input in Sample.AsSpan(raisedAt + 1))
        {
            DriftTransition expected = fresh.Evaluate(input);
            DriftTransition actual = rule.Evaluate(input);
            Assert.Equal(expected with { EpisodeId = expected.EpisodeId == 0 ? 0 : expected.EpisodeId + episode }, actual);
            if (actual.Kind == DriftTransitionKind.Raised)
            {
                Assert.True(actual.PeriodsObserved >= Options.WarmUpPeriods);
            }
        }
    }

    [Fact]
    public void Rebaseline_OpenOrClosed_AlwaysRestartsAndClearsOnlyAnOpenEpisode()
    {
        int raisedAt = FirstRaise();
        var open = Fed(raisedAt + 1);
        DriftTransition closed = open.Rebaseline();
        Assert.Equal(DriftTransitionKind.Cleared, closed.Kind);
        Assert.Equal(DriftCloseReason.Rebaselined, closed.Reason);
        Assert.Equal(1, closed.EpisodeId);
        Assert.Equal(0, open.PeriodsObserved);
        Assert.False(open.IsOpen);

        var quiet = Fed(raisedAt); // one period before the first raise: no episode yet
        Assert.False(quiet.IsOpen);
        Assert.True(quiet.PeriodsObserved > 0);
        Assert.True(quiet.Rebaseline().IsNone);
        Assert.Equal(0, quiet.PeriodsObserved);
        Assert.Equal(Options.CreateRule().ExportState(), quiet.ExportState());
    }

    [Fact]
    public void Evaluate_OpenEpisodeUnchanged_ReturnsNoneUntilItChanges()
    {
        // De-duplication: one Raised per episode, at most one Escalated, one Cleared; nothing in between.
        var rule = Options.CreateRule();
        var perEpisode = new Dictionary<long, List<DriftTransitionKind>>();
        foreach (DriftInput input in Sample)
        {
            DriftTransition t = rule.Evaluate(input);
            if (!t.IsNone)
            {
                if (!perEpisode.TryGetValue(t.EpisodeId, out var list))
                {
                    perEpisode[t.EpisodeId] = list = [];
                }

                list.Add(t.Kind);
            }
        }

        Assert.NotEmpty(perEpisode);
        foreach ((long id, List<DriftTransitionKind> kinds) in perEpisode)
        {
            Assert.Equal(DriftTransitionKind.Raised, kinds[0]);
            Assert.True(kinds.Count(k => k == DriftTransitionKind.Raised) == 1, $"episode {id}: {string.Join(", ", kinds)}");
            Assert.True(kinds.Count(k => k == DriftTransitionKind.Escalated) <= 1, $"episode {id}");
            Assert.True(kinds.Count(k => k == DriftTransitionKind.Cleared) <= 1, $"episode {id}");
        }

        Assert.Equal(Enumerable.Range(1, perEpisode.Count).Select(i => (long)i), perEpisode.Keys.Order());
    }

    [Fact]
    public void Evaluate_SteadyState_DoesNotAllocate()
    {
        var rule = Fed(Sample.Length);
        DriftInput[] inputs = Sample;
        rule.Evaluate(inputs[0]); // JIT the path first
        rule.Rebaseline();
        Allocations.AssertNone(() =>
        {
            long raised = 0;
            for (int i = 0; i < 10_000; i++)
            {
                DriftTransition t = rule.Evaluate(in inputs[i % inputs.Length]);
                raised += t.Kind == DriftTransitionKind.Raised ? 1 : 0;
            }

            Assert.True(raised > 0);
            return raised;
        });
    }

    [Fact]
    public void Options_CreateRule_ReportsItsOptionsAndKind()
    {
        var rule = Options.CreateRule();
        Assert.Equal(Options, rule.Options);
        Assert.Equal(Options.Kind, rule.Kind);
        Assert.NotEqual(DriftRuleKind.None, rule.Kind);
        Assert.False(string.IsNullOrWhiteSpace(rule.Options.RuleName));
        Assert.False(rule.IsOpen);
        Assert.Equal(DriftDirection.None, rule.Direction);
        Assert.Equal(DriftSeverity.None, rule.Severity);
        Assert.Equal(0, rule.EpisodeId);
    }

    [Fact]
    public void Evaluate_DuringWarmUp_SuppressesRaisingButNotTheStatistic()
    {
        // practice.md pitfall 7 (common practice): without warm-up suppression new series alert on noise.
        int raisedAt = FirstRaise();
        int warmUp = raisedAt + 4;
        var rule = CreateOptions(warmUp, 1, 2).CreateRule();
        var noWarmUp = CreateOptions(0, 1, 2).CreateRule();
        for (int i = 0; i < warmUp - 1; i++)
        {
            Assert.False(rule.IsWarm);
            Assert.NotEqual(DriftTransitionKind.Raised, rule.Evaluate(Sample[i]).Kind);
            noWarmUp.Evaluate(Sample[i]);
        }

        Assert.True(noWarmUp.LastEpisodeId > 0);
        Assert.Equal(0, rule.LastEpisodeId);
        double[] withSuppression = rule.ExportState();
        double[] without = noWarmUp.ExportState();
        // The rule-specific statistic (after the 11-number header) ran through the warm-up all the same.
        Assert.Equal(without[11..], withSuppression[11..]);
    }
}
