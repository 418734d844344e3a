using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Alerts;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Alerts;

/// <summary>
/// The drift rules' exported state: every state a rule reaches on hostile inputs (with acknowledgements, re-baselines and
/// resets mixed in) imports and continues bit-identically; every state edited to something no sequence of calls produces
/// is refused with a message that names the number at fault.
/// </summary>
public sealed class DriftRuleStateTests
{
    /// <summary>What one step does to a rule.</summary>
    public enum StepKind
    {
        /// <summary><see cref="DriftRule.Evaluate"/> with the step's input.</summary>
        Evaluate,

        /// <summary><see cref="DriftRule.Acknowledge"/>.</summary>
        Acknowledge,

        /// <summary><see cref="DriftRule.Rebaseline"/>.</summary>
        Rebaseline,

        /// <summary><see cref="DriftRule.Reset"/>.</summary>
        Reset,
    }

    /// <summary>One step of a run.</summary>
    public readonly record struct Step(StepKind Kind, DriftInput Input);

    // ---- Generators --------------------------------------------------------------------------------------------------

    private static readonly Gen<int> s_warmUp = Gen.Elements(0, 1, 2, 8);
    private static readonly Gen<int> s_debounce = Gen.Elements(1, 1, 2, 3);

    // Clear levels: the default, 0, and one just below the raise level (inside the tolerance band of the raise level).
    private static Gen<double?> ClearLevel(double raise) => Gen.Elements<double?>(null, 0.0, raise * (1 - 1e-7));

    // Escalation: the default, off, equal to the raise level.
    private static Gen<double?> EscalationLevel(double raise) => Gen.Elements<double?>(null, double.PositiveInfinity, raise);

    private static Gen<DriftRuleOptions> TrackingSignalOptions { get; } =
        from limit in Gen.Elements(4.0, 3.0, 1e-3, 1e15)
        from clear in ClearLevel(limit)
        from escalation in EscalationLevel(limit)
        from w in s_warmUp
        from r in s_debounce
        from c in s_debounce
        select (DriftRuleOptions)new TrackingSignalRuleOptions(limit, clear, escalation, w, r, c);

    private static Gen<DriftRuleOptions> TriggOptions { get; } =
        from limit in Gen.Elements(0.51, 0.2, 1.0)
        from clear in ClearLevel(limit)
        from escalation in Gen.Elements<double?>(null, double.PositiveInfinity, limit, 1.0)
        from w in s_warmUp
        from r in s_debounce
        from c in s_debounce
        select (DriftRuleOptions)new TriggSignalRuleOptions(limit, clear, escalation, w, r, c);

    private static Gen<DriftRuleOptions> CusumOptions { get; } =
        from h in Gen.Elements(5.0, 4.0, 0.5)
        from k in Gen.Elements(0.0, 0.5, 1.0)
        from clear in ClearLevel(h)
        from escalation in EscalationLevel(h)
        from reset in Gen.Elements(false, false, true)
        from w in s_warmUp
        from r in s_debounce
        from c in s_debounce
        select (DriftRuleOptions)new CusumRuleOptions(h, k, clear, escalation, reset, w, reset ? 1 : r, c);

    // Signal-like values around the usual levels, so episodes open, escalate, clear and reverse often.
    private static readonly Gen<double> s_aroundLevels = Gen.Elements(
        0.0, 1.0, -1.0, 2.9, -2.9, 3.0, -3.0, 4.0, -4.0, 4.0 * (1 - 1e-7), -4.0 * (1 - 1e-7), 5.0, -5.0, 6.0, -6.0, 9.0, -9.0);

    /// <summary>Tracking signals: hostile values (any finite value is accepted), values around the levels, NaN and infinities.</summary>
    private static Gen<double[]> TrackingSignals { get; } = Gen.OneOf(
        HostileSeries.WithRefused(150),
        Gen.Choose(0, 150).SelectMany(n => Gen.Frequency((6, s_aroundLevels), (1, HostileSeries.RefusedValue), (2, HostileSeries.AcceptedValue)).ArrayOf(n)));

    /// <summary>Trigg signals: values in [−1, 1] and at its tolerated edge, zero and constant runs, values beyond ±1, NaN.</summary>
    private static Gen<double[]> TriggSignals { get; } =
        Gen.Choose(0, 150).SelectMany(n => Gen.Frequency(
            (3, Gen.Choose(-1000, 1000).Select(i => i / 1000.0)),
            (2, Gen.Elements(0.0, -0.0, 1.0, -1.0, 0.51, -0.51, 0.41, -0.41, 0.2, -0.2, 1 + 1e-6, -(1 + 1e-6))),
            (1, Gen.Elements(1 + 2e-6, -(1 + 2e-6), 2.0, -1e15, double.NaN, double.PositiveInfinity))).ArrayOf(n))
        .SelectMany(values => Gen.Frequency((4, Gen.Constant(values)), (1, Gen.Constant(values.Select(v => values.Length > 0 ? values[0] : v).ToArray()))));

    /// <summary>Errors and σ for the CUSUM: hostile errors over ordinary and extreme σ (a tiny σ overflows and is refused), σ = 0 or NaN.</summary>
    private static Gen<DriftInput[]> CusumInputs { get; } =
        from errors in Gen.OneOf(HostileSeries.WithRefused(150), Gen.Choose(0, 150).SelectMany(n => Gen.Choose(-800, 800).Select(i => i / 100.0).ArrayOf(n)))
        from sigmas in Gen.Frequency(
            (8, Gen.Constant(1.0)),
            (2, Gen.Elements(0.5, 1e-3, 1e15, 3.7)),
            (1, Gen.Elements(1e-300, double.Epsilon, 0.0, -1.0, double.NaN))).ArrayOf(errors.Length)
        select errors.Select((e, i) => DriftInput.FromError(e, sigmas[i])).ToArray();

    /// <summary>Inputs as an engine would produce them: an error tracker fed a hostile series with naive forecasts.</summary>
    private static Gen<DriftInput[]> FromTracker { get; } = HostileSeries.Accepted(150).Select(actuals =>
    {
        var tracker = ErrorTrackerOptions.Default.CreateTracker();
        var inputs = new List<DriftInput>();
        for (int i = 1; i < actuals.Length; i++)
        {
            try
            {
                tracker.Record(actuals[i], actuals[i - 1]);
            }
            catch (ArgumentOutOfRangeException)
            {
                continue; // refused (a percentage error that overflows): the engine would feed the rules nothing
            }

            inputs.Add(new DriftInput(tracker.LastError, tracker.Sigma, tracker.TrackingSignal, tracker.TriggSignal));
        }

        return inputs.ToArray();
    });

    /// <summary>Steps: mostly evaluations of <paramref name="inputs"/>, with about one command in forty.</summary>
    private static Gen<Step[]> Steps(Gen<DriftInput[]> inputs) =>
        inputs.SelectMany(list => Gen.Frequency(
                (40, Gen.Constant(StepKind.Evaluate)), (1, Gen.Constant(StepKind.Acknowledge)), (1, Gen.Constant(StepKind.Rebaseline)))
            .ArrayOf(list.Length)
            .SelectMany(kinds => Gen.Frequency((30, Gen.Constant(false)), (1, Gen.Constant(true))).ArrayOf(list.Length).Select(resets =>
                list.Select((input, i) => new Step(resets[i] ? StepKind.Reset : kinds[i], input)).ToArray())));

    // ---- Properties (one family per rule) ------------------------------------------------------------------------------

    [Fact]
    public void ExportState_TrackingSignalRuleOnHostileInputs_EveryStateImportsAndContinuesBitIdentically() =>
        PropertyCases.Check(RoundTrip(
            TrackingSignalOptions,
            Steps(Gen.OneOf(TrackingSignals.Select(s => s.Select(DriftInput.FromTrackingSignal).ToArray()), FromTracker)),
            input => !double.IsFinite(input.TrackingSignal)));

    [Fact]
    public void ExportState_TriggSignalRuleOnHostileInputs_EveryStateImportsAndContinuesBitIdentically() =>
        PropertyCases.Check(RoundTrip(
            TriggOptions,
            Steps(Gen.OneOf(TriggSignals.Select(s => s.Select(DriftInput.FromTriggSignal).ToArray()), FromTracker)),
            input => !(Math.Abs(input.TriggSignal) <= 1 + DriftRuleOptions.LevelTolerance)));

    [Fact]
    public void ExportState_CusumRuleOnHostileInputs_EveryStateImportsAndContinuesBitIdentically() =>
        PropertyCases.Check(RoundTrip(
            CusumOptions,
            Steps(Gen.OneOf(CusumInputs, FromTracker.Select(list => list.Where(i => i.Sigma > 0).ToArray()))),
            input => !double.IsFinite(input.Error) || !(input.Sigma > 0) || !double.IsFinite(input.Sigma)));

    /// <summary>
    /// The shared property: at every step export → import → export is the identity (so the importer accepts every state
    /// the rule reaches); a refused input changes nothing (and <paramref name="mustRefuse"/> inputs are refused); a copy
    /// imported at a random step then gives the same transitions and states as the original.
    /// </summary>
    private static Property RoundTrip(Gen<DriftRuleOptions> options, Gen<Step[]> steps, Func<DriftInput, bool> mustRefuse) =>
        Prop.ForAll(options.ToArbitrary(), steps.ToArbitrary(), Gen.Choose(0, 1000).ToArbitrary(), (o, run, cut) =>
        {
            int split = cut % (run.Length + 1);
            DriftRule rule = o.CreateRule();
            DriftRule probe = o.CreateRule();
            DriftRule? copy = null;
            for (int i = 0; i <= run.Length; i++)
            {
                double[] state = rule.ExportState();
                try
                {
                    probe.ImportState(state);
                }
                catch (ArgumentException ex)
                {
                    return false.Label($"{o.RuleName}: after step {i} the rule refused its own state {Show(state)}: {ex.Message}");
                }

                if (!Bits.Same(state, probe.ExportState()))
                {
                    return false.Label($"{o.RuleName}: after step {i} export → import → export changed the state");
                }

                if (i == split)
                {
                    copy = o.CreateRule();
                    copy.ImportState(state);
                }

                if (i == run.Length)
                {
                    break;
                }

                Step step = run[i];
                (bool accepted, DriftTransition transition) = Apply(rule, step);
                if (!accepted && !Bits.Same(state, rule.ExportState()))
                {
                    return false.Label($"{o.RuleName}: step {i + 1} ({step}) was refused but changed the state");
                }

                if (accepted && step.Kind == StepKind.Evaluate && mustRefuse(step.Input))
                {
                    return false.Label($"{o.RuleName}: step {i + 1} ({step}) is outside the rule's domain but was accepted");
                }

                if (copy is not null && i >= split)
                {
                    (bool copyAccepted, DriftTransition copyTransition) = Apply(copy, step);
                    if (copyAccepted != accepted || copyTransition != transition || !Bits.Same(rule.ExportState(), copy.ExportState()))
                    {
                        return false.Label($"{o.RuleName}: imported after {split} steps, it diverged at step {i + 1} ({step}): {transition} vs {copyTransition}");
                    }
                }
            }

            return true.ToProperty();
        });

    private static (bool Accepted, DriftTransition Transition) Apply(DriftRule rule, Step step)
    {
        switch (step.Kind)
        {
            case StepKind.Acknowledge:
                return (true, rule.Acknowledge());
            case StepKind.Rebaseline:
                return (true, rule.Rebaseline());
            case StepKind.Reset:
                rule.Reset();
                return (true, default);
            default:
                try
                {
                    return (true, rule.Evaluate(step.Input));
                }
                catch (ArgumentOutOfRangeException)
                {
                    return (false, default);
                }
        }
    }

    private static string Show(double[] state) => "[" + string.Join(", ", state.Select(v => v.ToString("R", System.Globalization.CultureInfo.InvariantCulture))) + "]";

    // ---- Unreachable edits, field by field -----------------------------------------------------------------------------

    /// <summary>One edit of one exported number, why no sequence of calls can produce it, and text the refusal must contain.</summary>
    internal readonly record struct Edit(int Index, double Value, string Why, string[] Names);

    /// <summary>A reachable state built by evaluating <paramref name="inputs"/>, with edits that make it unreachable.</summary>
    private sealed record Base(string Name, DriftRuleOptions Options, DriftInput[] Inputs, Func<double[], IEnumerable<Edit>> Edits);

    private const string Periods = "period count", Episode = "last episode id", Direction = "direction", Severity = "severity",
        UnderRun = "under-forecast run", OverRun = "over-forecast run", Clear = "clear count", Reversal = "reversal marker";

    private static Edit E(int index, double value, string why, params string[] names) => new(index, value, why, names);

    /// <summary>Edits every state admits as unreachable: malformed numbers and counts beyond their caps.</summary>
    internal static IEnumerable<Edit> Malformed(double[] g, DriftRuleOptions o)
    {
        int last = g.Length - 1;
        yield return E(0, -1, "a negative period count", Periods);
        yield return E(0, 2.5, "a fractional period count", Periods);
        yield return E(1, -1, "a negative episode id", Episode);
        yield return E(1, 0.5, "a fractional episode id", Episode);
        yield return E(2, 2, "a direction other than −1, 0, 1", Direction);
        yield return E(2, 0.5, "a fractional direction", Direction);
        yield return E(3, 3, "a severity other than 0, 1, 2", Severity);
        yield return E(3, 0.5, "a fractional severity", Severity);
        for (int i = 4; i <= 7; i++)
        {
            yield return E(i, o.PeriodsToRaise + 1, "a run beyond PeriodsToRaise", "run (number " + (i + 1));
            yield return E(i, -1, "a negative run", "run (number " + (i + 1));
        }

        yield return E(8, o.PeriodsToClear, "a clear count reaching PeriodsToClear", Clear);
        yield return E(8, -1, "a negative clear count", Clear);
        yield return E(last, 2, "a reversal marker other than −1, 0, 1", Reversal);
        yield return E(last, 0.5, "a fractional reversal marker", Reversal);
    }

    private static IEnumerable<Base> Bases()
    {
        var ts = new TrackingSignalRuleOptions(limit: 4, clearLevel: 3, escalationLevel: 6, warmUpPeriods: 2, periodsToRaise: 1, periodsToClear: 2);
        DriftInput[] Ts(params double[] s) => s.Select(DriftInput.FromTrackingSignal).ToArray();

        // Open Warning episode raised at the third period on a signal of 5.
        yield return new Base("TS open Warning", ts, Ts(1, 2, 5), g =>
        [
            .. Malformed(g, ts),
            E(0, 1, "an open episode inside the warm-up", Periods),
            E(1, 0, "an open episode without an id", Episode),
            E(2, 0, "no direction but a severity", Direction, Severity),
            E(2, -1, "an over-forecast episode whose side is at the clear level with no clear count", Direction, Clear),
            E(3, 0, "an open episode without a severity", Severity),
            E(4, 0, "no under run although the signal is beyond the limit", UnderRun),
            E(5, 1, "an over run although the over evidence is −5", OverRun),
            E(6, 1, "an escalation run although the signal is below the escalation level", UnderRun),
            E(8, 1, "a clear count although the signal is above the clear level", Clear),
            E(9, 4.5, "an under evidence that is not the negated over evidence", "number 10"),
            E(9, 0, "no under evidence although the under run is 1", UnderRun),
            E(10, -4.5, "an over evidence that is not the negated under evidence", "number 11"),
            E(11, 1, "a reversal marker while an episode is open", Reversal),
        ]);

        // Open Critical episode counting towards clearing: raised at 7, then a period at 2.
        yield return new Base("TS open Critical, clearing", ts, Ts(1, 2, 7, 2), g =>
        [
            .. Malformed(g, ts),
            E(0, 2, "too few periods for the warm-up plus the clear count", Periods),
            E(8, 0, "no clear count although the signal is at the clear level", Clear),
        ]);

        // Closed by a reversal: an under episode, then a signal of −5.
        yield return new Base("TS reversed", ts, Ts(1, 2, 5, -5), g =>
        [
            .. Malformed(g, ts),
            E(11, 0, "no reversal marker although the over run meets the raise rule after the warm-up", Reversal),
            E(11, 1, "a reversal towards the side whose run is 0", Reversal),
            E(1, 0, "a reversal without any episode before", Reversal, Episode),
            E(0, 2, "a reversal inside the first warm period", Reversal, Periods),
            E(8, 1, "a clear count without an open episode", Clear),
        ]);

        // Closed by the signal returning: 5 (raise), 2, 2 (cleared).
        yield return new Base("TS cleared", ts, Ts(1, 2, 5, 2, 2), g =>
        [
            .. Malformed(g, ts),
            E(2, 1, "a direction without a severity", Severity),
            E(3, 1, "a severity without an episode", Severity),
            E(6, 1, "an escalation run above the raise run", "escalation run (number 7)"),
            E(11, -1, "a reversal marker after a clear", Reversal),
        ]);

        // Inside the warm-up with the runs at their cap: allowed (raising waits), but not an episode.
        var warm = new TrackingSignalRuleOptions(limit: 4, clearLevel: 3, escalationLevel: 6, warmUpPeriods: 8);
        yield return new Base("TS warm-up", warm, Ts(5, 7), g =>
        [
            .. Malformed(g, warm),
            E(2, 1, "an episode inside the warm-up", Severity),
        ]);

        // Escalation off: an open episode cannot be Critical.
        var noEscalation = new TrackingSignalRuleOptions(limit: 4, escalationLevel: double.PositiveInfinity, warmUpPeriods: 0);
        yield return new Base("TS no escalation", noEscalation, Ts(5), g =>
        [
            E(3, 2, "Critical with escalation off", Severity),
            E(6, 1, "an escalation run with escalation off", UnderRun),
        ]);

        // Escalation level equal to the raise level: every episode opens Critical, and the runs move together.
        var sameLevels = new TrackingSignalRuleOptions(limit: 4, escalationLevel: 4, warmUpPeriods: 0, periodsToRaise: 2);
        yield return new Base("TS equal levels", sameLevels, Ts(5, 5, 5), g =>
        [
            E(3, 1, "Warning although the levels are equal", Severity),
            E(6, 1, "an escalation run other than the raise run although the levels are equal", "escalation run (number 7)"),
        ]);

        var trigg = new TriggSignalRuleOptions(limit: 0.51, warmUpPeriods: 0);
        yield return new Base("Trigg open", trigg, [DriftInput.FromTriggSignal(0.6)], g =>
        [
            .. Malformed(g, trigg),
            E(9, 1.5, "a Trigg signal beyond 1", "number 10"),
            E(10, -0.5, "an over evidence that is not the negated signal", "number 11"),
        ]);

        var cusum = new CusumRuleOptions(decisionInterval: 5, referenceValue: 0.5, warmUpPeriods: 0);
        DriftInput[] Errors(params double[] z) => z.Select(v => DriftInput.FromError(v, 1)).ToArray();
        yield return new Base("CUSUM rise then fall", cusum, Errors(3, 3, -2), g =>
        [
            .. Malformed(g, cusum),
            E(11, g[11] + 1, "C⁺ differs from the last under evidence", "C⁺"),
            E(12, -1, "a negative C⁻", "C⁻"),
            E(9, -1, "a negative sum as evidence", "last evidence"),
        ]);

        yield return new Base("CUSUM first period", cusum, Errors(2), g =>
        [
            E(10, 1, "an over evidence other than C⁻ after one period", "last evidence"),
        ]);

        var reset = new CusumRuleOptions(decisionInterval: 5, referenceValue: 0.5, resetAfterAlarm: true, warmUpPeriods: 0);
        yield return new Base("CUSUM reset after alarm", reset, Errors(3, 4), g =>
        [
            .. Malformed(g, reset),
            E(11, g[9], "sums kept after an alarm although they restart", "C⁺"),
        ]);
    }

    [Fact]
    public void ImportState_EachNumberEditedToAnUnreachableValue_RefusedNamingTheNumber()
    {
        int edits = 0;
        var covered = new HashSet<(DriftRuleKind, int)>();
        foreach (Base b in Bases())
        {
            DriftRule rule = b.Options.CreateRule();
            foreach (DriftInput input in b.Inputs)
            {
                rule.Evaluate(input);
            }

            double[] good = rule.ExportState();
            var probe = b.Options.CreateRule();
            probe.ImportState(good); // the base itself is reachable
            foreach (Edit edit in b.Edits(good))
            {
                double[] bad = (double[])good.Clone();
                bad[edit.Index] = edit.Value;
                Assert.False(Bits.Same(bad, good), $"{b.Name}: the edit of number {edit.Index + 1} ({edit.Why}) changes nothing");
                var ex = Assert.Throws<ArgumentException>(() => probe.ImportState(bad));
                Assert.True(ex.Message.Contains("Nothing was imported", StringComparison.Ordinal)
                    && edit.Names.Any(n => ex.Message.Contains(n, StringComparison.Ordinal)),
                    $"{b.Name}: number {edit.Index + 1} = {edit.Value} ({edit.Why}): the message should name one of [{string.Join(", ", edit.Names)}]: {ex.Message}");
                Assert.True(Bits.Same(good, probe.ExportState()), $"{b.Name}: a refused import changed the rule");
                covered.Add((b.Options.Kind, edit.Index));
                edits++;
            }
        }

        // Every number of every rule's layout has at least one refused unreachable edit.
        foreach ((DriftRuleKind kind, int length) in new[] { (DriftRuleKind.TrackingSignal, 12), (DriftRuleKind.TriggSignal, 12), (DriftRuleKind.Cusum, 14) })
        {
            for (int i = 0; i < length; i++)
            {
                Assert.True(covered.Contains((kind, i)), $"{kind}: number {i + 1} has no unreachable edit");
            }
        }

        Assert.True(edits > 150, $"only {edits} edits");
    }
}
