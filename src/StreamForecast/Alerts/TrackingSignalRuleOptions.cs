namespace StreamForecast.Alerts;

/// <summary>
/// Options for a two-sided limit on the tracking signal RSFE/MAD (running sum of forecast errors over the mean absolute
/// deviation): an episode is raised when the signal reaches +limit (under-forecast) or −limit (over-forecast).
/// </summary>
/// <remarks>
/// <para>±4 is the limit most textbooks give (±3 is also seen) — common practice. A fixed limit misleads for some
/// methods: with RSFE counted from the start, SES with α = 0.1 sits beyond ±4 about 30 % of the time on stable demand
/// (simulation, see the library's notes on calibrating limits), so calibrate the limit per method to a target run
/// length rather than trusting the textbook number.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record TrackingSignalRuleOptions : DriftRuleOptions
{
    /// <summary>The default limit: 4 (common practice).</summary>
    public const double DefaultLimit = 4;

    /// <summary>Creates tracking-signal rule options.</summary>
    /// <param name="limit">The two-sided limit on |RSFE/MAD|, finite and above 0. Default 4.</param>
    /// <param name="clearLevel">
    /// The |signal| at or below which an open episode counts towards clearing, 0 ≤ clear &lt; limit. Default (null):
    /// 0.75·limit, which is 3 for the default limit (library default).
    /// </param>
    /// <param name="escalationLevel">
    /// The |signal| at which an episode becomes Critical, at least the limit, or +∞ to never escalate. Default (null):
    /// 1.5·limit, which is 6 for the default limit (library default).
    /// </param>
    /// <param name="warmUpPeriods">Periods evaluated before any alert, 0 to 1,000,000. Default 8.</param>
    /// <param name="periodsToRaise">Consecutive periods at or beyond the limit (or the escalation level) to raise (or escalate), 1 to 10,000. Default 1.</param>
    /// <param name="periodsToClear">Consecutive periods at or below the clear level to clear, 1 to 10,000. Default 2.</param>
    /// <exception cref="ArgumentOutOfRangeException">A level or count is out of range, or the levels are out of order.</exception>
    public TrackingSignalRuleOptions(
        double limit = DefaultLimit,
        double? clearLevel = null,
        double? escalationLevel = null,
        int warmUpPeriods = DefaultWarmUpPeriods,
        int periodsToRaise = DefaultPeriodsToRaise,
        int periodsToClear = DefaultPeriodsToClear)
        : base(nameof(limit), limit, clearLevel ?? (0.75 * limit), escalationLevel ?? (1.5 * limit), double.MaxValue,
            warmUpPeriods, periodsToRaise, periodsToClear)
    {
    }

    /// <summary>The two-sided limit on |RSFE/MAD| (the same as <see cref="DriftRuleOptions.RaiseLevel"/>).</summary>
    public double Limit => RaiseLevel;

    /// <inheritdoc/>
    public override DriftRuleKind Kind => DriftRuleKind.TrackingSignal;

    /// <inheritdoc/>
    public override string RuleName => LimitRuleName("TrackingSignal");

    private protected override DriftRuleOptions WithLevels(double raise, double clear, double escalation) =>
        new TrackingSignalRuleOptions(raise, clear, escalation, WarmUpPeriods, PeriodsToRaise, PeriodsToClear);

    /// <inheritdoc/>
    public override DriftRule CreateRule() => new SignalLimitRule(this, LimitedSignal.TrackingSignal);
}
