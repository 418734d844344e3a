using StreamForecast.Alerts;

namespace StreamForecast.Tests.Alerts;

/// <summary>
/// A plain, separately written restatement of the documented episode rules (see the remarks on DriftRule), sharing no
/// code with the library: given each period's evidence for under- and over-forecasting, it replays the whole series and
/// recounts every "consecutive periods" condition by scanning back over the prefix instead of keeping counters.
/// </summary>
public static class PlainDriftReference
{
    /// <summary>The documented inclusive rule: a value reaches a level when x ≥ L·(1 − 10⁻⁶).</summary>
    public static bool Reaches(double x, double level) => x >= level * (1 - 1e-6);

    /// <summary>The documented clear rule: at or below C·(1 + 10⁻⁶).</summary>
    public static bool AtOrBelow(double x, double level) => x <= level * (1 + 1e-6);

    /// <summary>The transition after each period of an uninterrupted run (no acknowledge, rebaseline or reset).</summary>
    public static DriftTransition[] Transitions((double Under, double Over)[] evidence, DriftRuleOptions o)
    {
        var result = new DriftTransition[evidence.Length];
        int direction = 0; // +1 under-forecast, −1 over-forecast
        int reversedTo = 0; // after a reversal, the side a two-sided tie goes to
        var severity = DriftSeverity.None;
        long episode = 0;
        int quiet = 0;
        for (int t = 0; t < evidence.Length; t++)
        {
            long periods = t + 1;
            double Side(int i, int d) => d > 0 ? evidence[i].Under : evidence[i].Over;
            bool Held(int d, double level)
            {
                if (t + 1 < o.PeriodsToRaise)
                {
                    return false;
                }

                for (int i = t; i > t - o.PeriodsToRaise; i--)
                {
                    if (!Reaches(Side(i, d), level))
                    {
                        return false;
                    }
                }

                return true;
            }

            DriftTransition Make(DriftTransitionKind kind, double signal, double level, DriftCloseReason reason) =>
                new(kind, o.Kind, episode, direction > 0 ? DriftDirection.UnderForecast : DriftDirection.OverForecast,
                    severity, signal, level, periods, reason);

            if (direction == 0)
            {
                if (periods < o.WarmUpPeriods)
                {
                    continue;
                }

                bool under = Held(+1, o.RaiseLevel);
                bool over = Held(-1, o.RaiseLevel);
                if (!under && !over)
                {
                    reversedTo = 0;
                    continue;
                }

                direction = under && over && reversedTo != 0 ? reversedTo
                    : under && (!over || evidence[t].Under >= evidence[t].Over) ? +1 : -1;
                reversedTo = 0;
                episode++;
                quiet = 0;
                severity = Held(direction, o.EscalationLevel) ? DriftSeverity.Critical : DriftSeverity.Warning;
                result[t] = Make(DriftTransitionKind.Raised, direction * Side(t, direction), direction * o.RaiseLevel, DriftCloseReason.None);
                continue;
            }

            // A reversal needs the other side to qualify and this side to have fallen below the raise level, so two sides
            // that both stay above the limit cannot flip the episode back and forth.
            if (Held(-direction, o.RaiseLevel) && !Reaches(Side(t, direction), o.RaiseLevel))
            {
                result[t] = Make(DriftTransitionKind.Cleared, -direction * Side(t, -direction), -direction * o.RaiseLevel, DriftCloseReason.DirectionReversed);
                reversedTo = -direction;
                direction = 0;
                severity = DriftSeverity.None;
                continue;
            }

            double own = Side(t, direction);
            if (AtOrBelow(own, o.ClearLevel))
            {
                quiet++;
                if (quiet >= o.PeriodsToClear)
                {
                    result[t] = Make(DriftTransitionKind.Cleared, direction * own, direction * o.ClearLevel, DriftCloseReason.SignalReturned);
                    direction = 0;
                    severity = DriftSeverity.None;
                }

                continue;
            }

            quiet = 0;
            if (severity == DriftSeverity.Warning && Held(direction, o.EscalationLevel))
            {
                severity = DriftSeverity.Critical;
                result[t] = Make(DriftTransitionKind.Escalated, direction * own, direction * o.EscalationLevel, DriftCloseReason.None);
            }
        }

        return result;
    }

    /// <summary>Whether two transitions agree: every field equal, the signal to a relative tolerance.</summary>
    public static bool Same(DriftTransition expected, DriftTransition actual, double tolerance = 1e-12) =>
        expected.Kind == actual.Kind
        && expected.Rule == actual.Rule
        && expected.EpisodeId == actual.EpisodeId
        && expected.Direction == actual.Direction
        && expected.Severity == actual.Severity
        && expected.PeriodsObserved == actual.PeriodsObserved
        && expected.Reason == actual.Reason
        && expected.Level == actual.Level
        && Math.Abs(expected.Signal - actual.Signal) <= tolerance * Math.Max(1, Math.Abs(expected.Signal));
}
