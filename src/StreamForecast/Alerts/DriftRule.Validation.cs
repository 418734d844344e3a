using StreamForecast.Internal;
using System.Globalization;

namespace StreamForecast.Alerts;

// The import check of DriftRule: the state machine's invariants after any sequence of Evaluate, Acknowledge, Rebaseline
// and Reset calls, and nothing stricter. Every number is compared exactly: the header holds counts, flags and the last
// evidence as the rule computed it, so no rounding enters (the rule-specific checks say so where it does).
public abstract partial class DriftRule
{

    private static readonly string[] s_runNames =
    [
        "the under-forecast run (number 5)",
        "the over-forecast run (number 6)",
        "the under-forecast escalation run (number 7)",
        "the over-forecast escalation run (number 8)",
    ];

    /// <summary>The last period's evidence for under-forecasting: the tracking signal, Trigg's signal or C⁺ (0 before the first period).</summary>
    /// <remarks>For the engine's restore check, which compares it with the error tracker's signal.</remarks>
    internal double LastUnderEvidence => _lastUnder;

    /// <summary>Returns why <paramref name="state"/> cannot be imported, naming the number at fault, or null if it can.</summary>
    private string? Validate(ReadOnlySpan<double> state)
    {
        if (state.Length != StateLength)
        {
            return Invariant($"it has {state.Length} numbers, expected {StateLength}");
        }

        for (int i = 0; i < state.Length; i++)
        {
            if (!double.IsFinite(state[i]))
            {
                return Invariant($"number {i + 1} is not finite");
            }
        }

        DriftRuleOptions o = _settings;
        int reversalIndex = HeaderLength + CoreStateLength;

        // The counts, flags and the reversal marker are integers written as doubles, so a zero among them is +0, never −0.
        for (int i = 0; i < state.Length; i++)
        {
            if ((i <= 8 || i == reversalIndex) && BitConverter.DoubleToInt64Bits(state[i]) == unchecked((long)0x8000_0000_0000_0000))
            {
                return Invariant($"number {i + 1} is −0; the rule writes its counts, direction, severity and reversal marker as whole numbers (+0 when zero)");
            }
        }
        if (!WholeNumbers.IsCount(state[0]))
        {
            return "the period count (number 1) must be a whole number from 0 to 2^53";
        }

        if (!WholeNumbers.IsCount(state[1]))
        {
            return "the last episode id (number 2) must be a whole number from 0 to 2^53";
        }

        long periods = (long)state[0];
        double direction = state[2];
        double severity = state[3];
        if (direction is not (-1 or 0 or 1))
        {
            return "the direction (number 3) must be −1 (over-forecast), 0 (no episode) or 1 (under-forecast)";
        }

        if (direction == 0 ? severity != 0 : severity is not (1 or 2))
        {
            return "the severity (number 4) must be 0 without an open episode (direction, number 3, is 0) and 1 or 2 with one";
        }

        // Critical needs the escalation level reached; with the levels equal, the raise itself reaches it, so an episode
        // is Critical from its first period and severity never steps down.
        if (severity == 2 && double.IsPositiveInfinity(o.EscalationThreshold))
        {
            return "the severity (number 4) cannot be Critical: escalation is off for this rule";
        }

        if (severity == 1 && o.EscalationThreshold <= o.RaiseThreshold)
        {
            return "the severity (number 4) cannot be Warning: the escalation level equals the raise level, so every episode opens Critical";
        }

        // Consecutive-period counts: capped at PeriodsToRaise, never more than the periods evaluated.
        int cap = o.PeriodsToRaise;
        for (int i = 4; i <= 7; i++)
        {
            if (!WholeNumbers.IsWhole(state[i], Math.Min(cap, periods)))
            {
                return s_runNames[i - 4] + " must be a whole number from 0 to min(PeriodsToRaise, the period count (number 1))";
            }
        }

        double underRun = state[4], overRun = state[5], underEscalationRun = state[6], overEscalationRun = state[7];

        // The escalation level is at or above the raise level, so a period that reaches it also reaches the raise level:
        // an escalation run never exceeds the raise run on its side, and equals it when the levels are equal.
        bool sameLevels = o.EscalationThreshold == o.RaiseThreshold;
        if (underEscalationRun > underRun || (sameLevels && underEscalationRun != underRun))
        {
            return "the under-forecast escalation run (number 7) cannot exceed the under-forecast run (number 5)" + (sameLevels ? " or differ from it" : "");
        }

        if (overEscalationRun > overRun || (sameLevels && overEscalationRun != overRun))
        {
            return "the over-forecast escalation run (number 8) cannot exceed the over-forecast run (number 6)" + (sameLevels ? " or differ from it" : "");
        }

        double clearRun = state[8];
        if (!WholeNumbers.IsWhole(clearRun, direction == 0 ? 0 : o.PeriodsToClear - 1))
        {
            return "the clear count (number 9) must be 0 without an open episode and below PeriodsToClear with one";
        }

        double lastUnder = state[9];
        double lastOver = state[10];
        if (periods == 0 && (lastUnder != 0 || lastOver != 0))
        {
            return "the last evidence (numbers 10 and 11) must be zero before any period (the period count, number 1, is 0)";
        }

        // A run is above zero exactly when the last period's evidence reached its level.
        bool underBeyond = periods > 0 && lastUnder >= o.RaiseThreshold;
        bool overBeyond = periods > 0 && lastOver >= o.RaiseThreshold;
        if ((underRun > 0) != underBeyond || (underEscalationRun > 0) != (periods > 0 && lastUnder >= o.EscalationThreshold))
        {
            return "the under-forecast runs (numbers 5 and 7) contradict the last under-forecast evidence (number 10)";
        }

        if ((overRun > 0) != overBeyond || (overEscalationRun > 0) != (periods > 0 && lastOver >= o.EscalationThreshold))
        {
            return "the over-forecast runs (numbers 6 and 8) contradict the last over-forecast evidence (number 11)";
        }

        double reversedTo = state[reversalIndex];
        if (reversedTo is not (-1 or 0 or 1) || (reversedTo != 0 && direction != 0))
        {
            return Invariant($"the reversal marker (number {reversalIndex + 1}) must be −1, 0 or 1, and 0 while an episode is open (direction, number 3)");
        }

        int warm = Math.Max(1, o.WarmUpPeriods);
        if (direction != 0)
        {
            string? problem = ValidateOpen(o, state, direction, periods, warm);
            if (problem is not null)
            {
                return problem;
            }
        }
        else if (reversedTo != 0)
        {
            // The marker is set by a reversal and cleared by the next period (which raises or finds neither side beyond
            // the level), so the state is the one the reversal left: the side reversed to met the raise rule, the closed
            // episode's side had fallen below the raise level, after an episode that opened in the warm period before.
            double toRun = reversedTo > 0 ? underRun : overRun;
            double fromRun = reversedTo > 0 ? overRun : underRun;
            if (toRun < cap || fromRun != 0 || periods < warm + 1 || state[1] < 1)
            {
                return Invariant($"the reversal marker (number {reversalIndex + 1}) is set, but the runs (numbers 5 and 6), the period count (number 1) or the last episode id (number 2) are not those a reversal leaves");
            }
        }
        else if (periods >= o.WarmUpPeriods && (underRun >= cap || overRun >= cap)
            && !(periods >= warm + 1 && state[1] >= 1 && (InClearBand(o, lastUnder) || InClearBand(o, lastOver))))
        {
            // Warm, no episode and no reversal: the last period found neither side meeting the raise rule (else it would
            // have raised), or it cleared an episode. A cleared episode's side is at or below the clear level, and the
            // other side cannot meet the raise rule while this side is below the raise level (it would have reversed);
            // so a run that meets the raise rule is possible only when the cleared side's evidence is both at or below
            // the clear level and at the raise level, which happens only when the two levels lie within the tolerance
            // band of each other.
            return Invariant($"no episode is open (direction, number 3, is 0) and no reversal is marked (reversal marker, number {reversalIndex + 1}, is 0), although the runs (numbers 5 and 6) meet the raise rule after the warm-up");
        }

        return ValidateCore(state.Slice(HeaderLength, CoreStateLength), lastUnder, lastOver, periods);
    }

    /// <summary>The checks of a state with an open episode.</summary>
    private static string? ValidateOpen(DriftRuleOptions o, ReadOnlySpan<double> state, double direction, long periods, int warm)
    {
        double clearRun = state[8];
        if (state[1] < 1)
        {
            return "an open episode (direction, number 3) needs a last episode id (number 2) of 1 or more";
        }

        // The episode opened in a period at or after the warm-up (and after the first), with a clear count of 0; each
        // later period adds at most one to the clear count.
        if (periods < warm + clearRun)
        {
            return "the period count (number 1) is too small for an open episode (direction, number 3): it opens only after the warm-up, and each period after adds at most one to the clear count (number 9)";
        }

        // Each period after the raise that finds the episode's own evidence at or below the clear level adds one to the
        // clear count, any other resets it; the raise period itself starts it at 0 (and its evidence met the raise rule,
        // which can be at or below the clear level only when the two levels lie within the tolerance band of each other).
        int cap = o.PeriodsToRaise;
        double own = direction > 0 ? state[9] : state[10];
        double ownRun = direction > 0 ? state[4] : state[5];
        bool atClearLevel = own <= o.ClearThreshold;
        if (clearRun > 0 ? !atClearLevel : atClearLevel && !(own >= o.RaiseThreshold && ownRun >= cap))
        {
            return "the clear count (number 9) contradicts the last evidence (number 10 or 11) of the open episode's side (direction, number 3)";
        }

        double ownEscalationRun = direction > 0 ? state[6] : state[7];
        if (state[3] == 1 && ownEscalationRun >= cap)
        {
            return "a Warning episode (severity, number 4) cannot have met the escalation rule (escalation run, number 7 or 8)";
        }

        // While the episode's own evidence is below the raise level, the other side meeting the raise rule reverses it.
        double oppositeRun = direction > 0 ? state[5] : state[4];
        if (oppositeRun >= cap && own < o.RaiseThreshold)
        {
            return "the open episode (direction, number 3) would have reversed: the other side's run (number 5 or 6) meets the raise rule while its own evidence (number 10 or 11) is below the raise level";
        }

        return null;
    }

    /// <summary>Whether evidence is both at the raise level and at or below the clear level (possible only for levels within the tolerance).</summary>
    private static bool InClearBand(DriftRuleOptions o, double evidence) => evidence >= o.RaiseThreshold && evidence <= o.ClearThreshold;


    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
