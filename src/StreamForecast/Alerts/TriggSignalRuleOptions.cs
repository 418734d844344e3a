namespace StreamForecast.Alerts;

/// <summary>
/// Options for a limit on |Trigg's smoothed signal| T = E/M, where E and M are exponentially smoothed errors and
/// absolute errors with the same constant β: an episode is raised when T reaches +limit (under-forecast) or −limit
/// (over-forecast).
/// </summary>
/// <remarks>
/// <para>The default limit 0.51 is the one commonly quoted for β = 0.1 (Trigg 1964, Operational Research Quarterly
/// 15(3)). The right limit depends on the tracker's β, which this rule does not see: for β = 0.2 a limit of about 0.74
/// corresponds (simulation). On one-step errors of a smoothing forecast (rather than independent errors) a limit fires
/// far less often than its nominal rate, so calibrate it per method.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record TriggSignalRuleOptions : DriftRuleOptions
{
    /// <summary>The default limit: 0.51, for β = 0.1 (Trigg 1964).</summary>
    public const double DefaultLimit = 0.51;

    /// <summary>Creates Trigg-signal rule options.</summary>
    /// <param name="limit">The limit on |T|, above 0 and at most 1. Default 0.51.</param>
    /// <param name="clearLevel">
    /// The |T| at or below which an open episode counts towards clearing, 0 ≤ clear &lt; limit. Default (null):
    /// 0.8·limit, about 0.41 for the default limit (library default).
    /// </param>
    /// <param name="escalationLevel">
    /// The |T| at which an episode becomes Critical, between the limit and 1, or +∞ to never escalate. Default (null):
    /// (1 + limit)/2, about 0.755 for the default limit (library default; |T| cannot exceed 1).
    /// </param>
    /// <param name="warmUpPeriods"><inheritdoc cref="TrackingSignalRuleOptions(double, double?, double?, int, int, int)" path="/param[@name='warmUpPeriods']/node()"/></param>
    /// <param name="periodsToRaise"><inheritdoc cref="TrackingSignalRuleOptions(double, double?, double?, int, int, int)" path="/param[@name='periodsToRaise']/node()"/></param>
    /// <param name="periodsToClear"><inheritdoc cref="TrackingSignalRuleOptions(double, double?, double?, int, int, int)" path="/param[@name='periodsToClear']/node()"/></param>
    /// <exception cref="ArgumentOutOfRangeException"><inheritdoc cref="TrackingSignalRuleOptions(double, double?, double?, int, int, int)" path="/exception/node()"/></exception>
    public TriggSignalRuleOptions(
        double limit = DefaultLimit,
        double? clearLevel = null,
        double? escalationLevel = null,
        int warmUpPeriods = DefaultWarmUpPeriods,
        int periodsToRaise = DefaultPeriodsToRaise,
        int periodsToClear = DefaultPeriodsToClear)
        : base(nameof(limit), limit, clearLevel ?? (0.8 * limit), escalationLevel ?? ((1 + limit) / 2), 1.0,
            warmUpPeriods, periodsToRaise, periodsToClear)
    {
    }

    /// <summary>The limit on |T| (the same as <see cref="DriftRuleOptions.RaiseLevel"/>).</summary>
    public double Limit => RaiseLevel;

    /// <inheritdoc/>
    public override DriftRuleKind Kind => DriftRuleKind.TriggSignal;

    /// <inheritdoc/>
    public override string RuleName => LimitRuleName("TriggSignal");

    /// <inheritdoc/>
    public override double MaxRaiseLevel => 1.0;

    private protected override double EscalationCeiling => 1.0;

    private protected override DriftRuleOptions WithLevels(double raise, double clear, double escalation) =>
        new TriggSignalRuleOptions(raise, clear, escalation, WarmUpPeriods, PeriodsToRaise, PeriodsToClear);

    /// <inheritdoc/>
    public override DriftRule CreateRule() => new SignalLimitRule(this, LimitedSignal.TriggSignal);
}
