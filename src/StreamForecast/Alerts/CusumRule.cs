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

/// <summary>A two-sided tabular CUSUM on the standardized errors of one series. Create it from <see cref="CusumRuleOptions"/>.</summary>
/// <remarks>
/// <para><b>Input.</b> Reads <see cref="DriftInput.Error"/> e (finite) and <see cref="DriftInput.Sigma"/> σ (finite, above 0),
/// standardizes z = e/σ and updates C⁺ and C⁻ as defined on <see cref="CusumRuleOptions"/>. A period whose z or sums would
/// overflow is rejected. Evidence: C⁺ for under-forecasting and C⁻ for over-forecasting, before any reset after an alarm;
/// transitions report C⁺ or −C⁻ as the signal.</para>
/// <para><b>Cost.</b> O(1), allocation-free. <b>Warm-up</b>: the sums run from the first period; only raising waits. Episodes
/// and snapshots: see <see cref="DriftRule"/>. <see cref="DriftRule.Acknowledge"/>, <see cref="DriftRule.Rebaseline"/> and
/// <see cref="DriftRule.Reset"/> restart both sums at 0.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class CusumRule : DriftRule
{
    private readonly CusumRuleOptions _options;
    private double _upper;
    private double _lower;

    /// <summary>Creates a rule with both sums at 0 and no open episode.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public CusumRule(CusumRuleOptions options)
        : base(options)
    {
        _options = options;
    }

    /// <inheritdoc/>
    public override DriftRuleOptions Options => _options;

    /// <summary>The upper sum C⁺ after the last period (0 after a reset after an alarm); never negative.</summary>
    public double UpperSum => _upper;

    /// <summary>The lower sum C⁻ after the last period (0 after a reset after an alarm); never negative.</summary>
    public double LowerSum => _lower;

    /// <inheritdoc/>
    public override bool CanRead(in DriftInput input) => double.IsFinite(input.Error) && double.IsFinite(input.Sigma) && input.Sigma > 0;

    private protected override void EvaluateCore(in DriftInput input, out double underEvidence, out double overEvidence)
    {
        double e = input.Error;
        double sigma = input.Sigma;
        if (!double.IsFinite(e))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.Error), e, "the error e = actual − forecast must be a finite number");
        }

        if (!(sigma > 0) || !double.IsFinite(sigma))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.Sigma), sigma, "σ must be a finite number above 0");
        }

        double k = _options.ReferenceValue;
        double z = e / sigma;
        double upper = Math.Max(0, z - k + _upper);
        double lower = Math.Max(0, -z - k + _lower);
        if (!double.IsFinite(upper) || !double.IsFinite(lower))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.Error), e, "the standardized error e/σ and the CUSUM sums must stay finite; σ is too small for this error");
        }

        underEvidence = upper;
        overEvidence = lower;
        double threshold = _options.RaiseThreshold;
        if (_options.ResetAfterAlarm && (upper >= threshold || lower >= threshold))
        {
            upper = 0;
            lower = 0;
        }

        _upper = upper;
        _lower = lower;
    }

    private protected override void ResetCore()
    {
        _upper = 0;
        _lower = 0;
    }

    // Layout: C⁺, C⁻.
    private protected override int CoreStateLength => 2;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _upper;
        destination[1] = _lower;
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> core, double lastUnder, double lastOver, long periods)
    {
        // The evidence is the pair of sums C⁺, C⁻ after the last period; the stored sums are the same numbers, or both 0
        // when the reset mode restarted them after an alarm (either sum at h). Exact: the rule copies the numbers.
        double upper = core[0];
        double lower = core[1];
        // Math.Max(0, x) returns +0 for x = −0, so a zero sum is +0.
        if (!(upper >= 0) || !(lower >= 0) || double.IsNegative(upper) || double.IsNegative(lower))
        {
            return "the CUSUM sums C⁺ and C⁻ (numbers 12 and 13) cannot be negative (nor −0)";
        }

        if (!(lastUnder >= 0) || !(lastOver >= 0) || double.IsNegative(lastUnder) || double.IsNegative(lastOver))
        {
            return "the last evidence (numbers 10 and 11) is a pair of CUSUM sums and cannot be negative";
        }

        double threshold = _options.RaiseThreshold;
        bool restarted = _options.ResetAfterAlarm && (lastUnder >= threshold || lastOver >= threshold);
        if (restarted ? upper != 0 || lower != 0 : upper != lastUnder || lower != lastOver)
        {
            return restarted
                ? "the CUSUM sums C⁺ and C⁻ (numbers 12 and 13) must be 0: the last evidence (numbers 10 and 11) reached h and the sums restart after an alarm"
                : "the CUSUM sums C⁺ and C⁻ (numbers 12 and 13) must equal the last evidence (numbers 10 and 11)";
        }

        // From C⁺ = C⁻ = 0 one period makes at most one sum positive: z − k > 0 and −z − k > 0 cannot both hold for
        // k ≥ 0 (and rounding keeps the signs: fl(z − k) > 0 needs z > k ≥ 0, and then fl(−z − k) < 0).
        if (periods == 1 && lastUnder > 0 && lastOver > 0)
        {
            return "after one period (the period count, number 1, is 1) at most one of the CUSUM sums (numbers 10 and 11) can be above zero";
        }

        return null;
    }

    private protected override void ImportCore(ReadOnlySpan<double> core)
    {
        _upper = core[0];
        _lower = core[1];
    }
}
