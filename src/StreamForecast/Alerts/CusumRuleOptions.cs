using StreamForecast.Internal;

namespace StreamForecast.Alerts;

/// <summary>
/// Options for a two-sided tabular CUSUM on standardized forecast errors z = e/σ, with reference value k and decision
/// interval h (both in units of σ).
/// </summary>
/// <remarks>
/// <para><b>Definition</b> (the tabular CUSUM of statistical process control, as in Montgomery, Introduction to Statistical
/// Quality Control — from memory): C⁺(t) = max(0, z(t) − k + C⁺(t−1)) and C⁻(t) = max(0, −z(t) − k + C⁻(t−1)), both
/// starting at 0 and both non-negative. C⁺ gathers positive errors (actuals above forecasts, under-forecast evidence), C⁻
/// negative ones (over-forecast evidence). The textbook alarm is a sum exceeding h; here a sum alarms when it reaches h
/// under the inclusive rule with a 10⁻⁶ relative tolerance (see <see cref="DriftRuleOptions"/>), which differs from
/// "exceeds" only on a set of probability zero.</para>
/// <para><b>Defaults.</b> k = 0.5 (tuned to detect a 1σ shift) and h = 5; h = 4 is the other usual choice. For
/// independent N(0, 1) errors the two-sided average run length is about 465 periods between false alarms with h = 5
/// (about 10.4 periods to detect a 1σ shift), and about 168 with h = 4 (about 8.4 to detect 1σ) — Montgomery, from
/// memory; a simulation agrees. The clear level defaults to h/2 and the escalation level to 2h (library defaults).</para>
/// <para><b>σ.</b> The caller supplies σ each period. Estimate it from an in-control stretch (for example frozen after the
/// warm-up, or 1.25·MAD from a tracker with a long memory); a σ that absorbs the shift it should detect makes the CUSUM
/// slow.</para>
/// <para><b>Reset after an alarm.</b> By default (<see cref="ResetAfterAlarm"/> false) the sums keep running through an
/// episode, so the episode clears once its sum has come back down to the clear level (under no bias a sum falls by
/// about k per period, so a long episode takes a while to clear; <see cref="DriftRule.Acknowledge"/> restarts the sums
/// at once). With <see cref="ResetAfterAlarm"/> true, both sums restart at 0 after every period in which either sum
/// reaches h, as a control chart is restarted after an out-of-control signal; the open episode then clears after
/// <see cref="DriftRuleOptions.PeriodsToClear"/> quiet periods unless the sum reaches h again, so choose
/// <see cref="DriftRuleOptions.PeriodsToClear"/> longer than the detection time (about 10 periods for a 1σ shift at h = 5) or
/// a persistent bias raises a chain of short episodes. Because the sums restart, the reset mode needs
/// <see cref="DriftRuleOptions.PeriodsToRaise"/> = 1.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record CusumRuleOptions : DriftRuleOptions
{
    /// <summary>The default decision interval h: 5 (Montgomery, from memory).</summary>
    public const double DefaultDecisionInterval = 5;

    /// <summary>The default reference value k: 0.5, half the 1σ shift to detect (Montgomery, from memory).</summary>
    public const double DefaultReferenceValue = 0.5;

    /// <summary>Creates CUSUM rule options.</summary>
    /// <param name="decisionInterval">The decision interval h in units of σ, finite and above 0. Default 5.</param>
    /// <param name="referenceValue">The reference value k in units of σ, finite and at least 0. Default 0.5.</param>
    /// <param name="clearLevel">
    /// The sum at or below which an open episode's side counts towards clearing, 0 ≤ clear &lt; h. Default (null): h/2.
    /// </param>
    /// <param name="escalationLevel">
    /// The sum at which an episode becomes Critical, at least h, or +∞ to never escalate. Default (null): 2h.
    /// </param>
    /// <param name="resetAfterAlarm">
    /// Whether both sums restart at 0 after a period in which either reaches h. Default false (see the remarks).
    /// </param>
    /// <param name="warmUpPeriods">Periods evaluated before any alert, 0 to 1,000,000. Default 8.</param>
    /// <param name="periodsToRaise">
    /// Consecutive periods at or beyond h (or the escalation level) to raise (or escalate), 1 to 10,000; must be 1 with
    /// <paramref name="resetAfterAlarm"/>. Default 1.
    /// </param>
    /// <param name="periodsToClear">Consecutive periods at or below the clear level to clear, 1 to 10,000. Default 2.</param>
    /// <exception cref="ArgumentOutOfRangeException">A level or count is out of range, or the levels are out of order.</exception>
    /// <exception cref="ArgumentException"><paramref name="resetAfterAlarm"/> is set with <paramref name="periodsToRaise"/> above 1.</exception>
    public CusumRuleOptions(
        double decisionInterval = DefaultDecisionInterval,
        double referenceValue = DefaultReferenceValue,
        double? clearLevel = null,
        double? escalationLevel = null,
        bool resetAfterAlarm = false,
        int warmUpPeriods = DefaultWarmUpPeriods,
        int periodsToRaise = DefaultPeriodsToRaise,
        int periodsToClear = DefaultPeriodsToClear)
        : base(nameof(decisionInterval), decisionInterval, clearLevel ?? (decisionInterval / 2), escalationLevel ?? (2 * decisionInterval),
            double.MaxValue, warmUpPeriods, periodsToRaise, periodsToClear)
    {
        if (!(referenceValue >= 0) || !double.IsFinite(referenceValue))
        {
            ThrowHelper.ThrowOutOfRange(nameof(referenceValue), referenceValue, "the reference value k must be a finite number ≥ 0 (in units of σ)");
        }

        if (resetAfterAlarm && periodsToRaise != 1)
        {
            ThrowHelper.ThrowArgument(nameof(resetAfterAlarm),
                "Resetting the sums after an alarm means they cannot stay beyond h for consecutive periods; use periodsToRaise = 1 with resetAfterAlarm.");
        }

        ReferenceValue = referenceValue;
        ResetAfterAlarm = resetAfterAlarm;
    }

    /// <summary>The decision interval h in units of σ (the same as <see cref="DriftRuleOptions.RaiseLevel"/>).</summary>
    public double DecisionInterval => RaiseLevel;

    /// <summary>The reference value k in units of σ.</summary>
    public double ReferenceValue { get; }

    /// <summary>Whether both sums restart at 0 after a period in which either reaches h.</summary>
    public bool ResetAfterAlarm { get; }

    /// <inheritdoc/>
    public override DriftRuleKind Kind => DriftRuleKind.Cusum;

    /// <inheritdoc/>
    public override string RuleName =>
        $"CUSUM(k={Format(ReferenceValue)}, h={Format(RaiseLevel)}; clear {Format(ClearLevel)}; critical {Format(EscalationLevel)}{(ResetAfterAlarm ? "; reset" : "")})";

    private protected override DriftRuleOptions WithLevels(double raise, double clear, double escalation) =>
        new CusumRuleOptions(raise, ReferenceValue, clear, escalation, ResetAfterAlarm, WarmUpPeriods, PeriodsToRaise, PeriodsToClear);

    /// <inheritdoc/>
    public override DriftRule CreateRule() => new CusumRule(this);
}
