using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Alerts;

/// <summary>
/// An immutable, validated description of a drift-alert rule: the levels it compares its signal with and the
/// debouncing that keeps alerts from flapping. Each rule has its own sealed options record
/// (<see cref="TrackingSignalRuleOptions"/>, <see cref="TriggSignalRuleOptions"/>, <see cref="CusumRuleOptions"/>),
/// validated when it is constructed. Create the per-series state with <see cref="CreateRule"/>.
/// </summary>
/// <remarks>
/// <para><b>Levels.</b> Every rule reduces a period to two numbers, its evidence for
/// under-forecasting and for over-forecasting (for the tracking signal s these are s and −s; for the CUSUM the sums
/// C⁺ and C⁻). An episode is raised when one side's evidence reaches <see cref="RaiseLevel"/>, escalated when it
/// reaches <see cref="EscalationLevel"/>, and cleared when it falls back to <see cref="ClearLevel"/> or below:
/// 0 ≤ <see cref="ClearLevel"/> &lt; <see cref="RaiseLevel"/> ≤ <see cref="EscalationLevel"/>. The gap between the
/// clear and raise levels is the hysteresis that stops an alert flapping at the limit.</para>
/// <para><b>Inclusive limits with a tolerance.</b> A value reaches a level L when it is at or beyond it, or short of
/// it by no more than one part in a million: x ≥ L·(1 − <see cref="LevelTolerance"/>). A value is at or below a clear
/// level C when x ≤ C·(1 + <see cref="LevelTolerance"/>). So a tracking signal that is −4 in exact arithmetic but
/// lands at −3.9999999 in floating point reaches the ±4 limit. Signals move in steps many orders of magnitude larger
/// than this tolerance, so it changes nothing else.</para>
/// <para><b>Debouncing.</b> Alerts are suppressed until the rule has evaluated <see cref="WarmUpPeriods"/> periods;
/// raising (and escalating) needs <see cref="PeriodsToRaise"/> consecutive periods at or beyond the level on the same
/// side; clearing needs <see cref="PeriodsToClear"/> consecutive periods at or below the clear level.</para>
/// <para>Options are immutable and safe to share across threads and series.</para>
/// </remarks>
public abstract record DriftRuleOptions
{
    /// <summary>The relative tolerance of the inclusive level rule (10⁻⁶); see the remarks on <see cref="DriftRuleOptions"/>.</summary>
    public const double LevelTolerance = 1e-6;

    /// <summary>The default <see cref="WarmUpPeriods"/>: 8 (library default).</summary>
    public const int DefaultWarmUpPeriods = 8;

    /// <summary>The default <see cref="PeriodsToRaise"/>: 1.</summary>
    public const int DefaultPeriodsToRaise = 1;

    /// <summary>The default <see cref="PeriodsToClear"/>: 2 (library default).</summary>
    public const int DefaultPeriodsToClear = 2;

    /// <summary>The largest <see cref="WarmUpPeriods"/> accepted.</summary>
    public const int MaxWarmUpPeriods = 1_000_000;

    /// <summary>The largest <see cref="PeriodsToRaise"/> and <see cref="PeriodsToClear"/> accepted.</summary>
    public const int MaxDebouncePeriods = 10_000;

    private protected DriftRuleOptions(
        string raiseLevelName,
        double raiseLevel,
        double clearLevel,
        double escalationLevel,
        double maxLevel,
        int warmUpPeriods,
        int periodsToRaise,
        int periodsToClear)
    {
        if (!(raiseLevel > 0) || raiseLevel > maxLevel || !double.IsFinite(raiseLevel))
        {
            ThrowHelper.ThrowOutOfRange(raiseLevelName, raiseLevel, string.Create(CultureInfo.InvariantCulture,
                $"the raise level must be a finite number above 0 and at most {maxLevel}"));
        }

        if (!(clearLevel >= 0) || !(clearLevel < raiseLevel))
        {
            ThrowHelper.ThrowOutOfRange(nameof(clearLevel), clearLevel, string.Create(CultureInfo.InvariantCulture,
                $"the clear level must be at least 0 and below the raise level {raiseLevel} (the gap is the hysteresis)"));
        }

        if (!(escalationLevel >= raiseLevel) || (escalationLevel > maxLevel && !double.IsPositiveInfinity(escalationLevel)))
        {
            ThrowHelper.ThrowOutOfRange(nameof(escalationLevel), escalationLevel, string.Create(CultureInfo.InvariantCulture,
                $"the escalation level must be between the raise level {raiseLevel} and {maxLevel}, or +∞ to never escalate"));
        }

        if (warmUpPeriods is < 0 or > MaxWarmUpPeriods)
        {
            ThrowHelper.ThrowOutOfRange(nameof(warmUpPeriods), warmUpPeriods, "the warm-up must be between 0 and 1,000,000 periods");
        }

        if (periodsToRaise is < 1 or > MaxDebouncePeriods)
        {
            ThrowHelper.ThrowOutOfRange(nameof(periodsToRaise), periodsToRaise, "raising needs between 1 and 10,000 consecutive periods");
        }

        if (periodsToClear is < 1 or > MaxDebouncePeriods)
        {
            ThrowHelper.ThrowOutOfRange(nameof(periodsToClear), periodsToClear, "clearing needs between 1 and 10,000 consecutive periods");
        }

        RaiseLevel = raiseLevel;
        ClearLevel = clearLevel;
        EscalationLevel = escalationLevel;
        WarmUpPeriods = warmUpPeriods;
        PeriodsToRaise = periodsToRaise;
        PeriodsToClear = periodsToClear;
        RaiseThreshold = raiseLevel * (1 - LevelTolerance);
        EscalationThreshold = escalationLevel * (1 - LevelTolerance);
        ClearThreshold = clearLevel * (1 + LevelTolerance);
    }

    /// <summary>Which rule these options describe.</summary>
    public abstract DriftRuleKind Kind { get; }

    /// <summary>A short label for the rule and its levels, such as <c>TrackingSignal(±4; clear 3; critical 6)</c>, used in reports.</summary>
    public abstract string RuleName { get; }

    /// <summary>
    /// The level at which an episode is raised: the tracking-signal limit, the Trigg limit, or the CUSUM decision
    /// interval h. Greater than 0.
    /// </summary>
    public double RaiseLevel { get; }

    /// <summary>
    /// Whose errors the rule reads in a series (<see cref="WatchedModel.Published"/> by default: the published model's,
    /// as before reference models existed). <see cref="WatchedModel.Reference"/> needs a series with a
    /// <see cref="Streaming.SeriesOptions.ReferenceMethod"/>; <see cref="Streaming.SeriesOptions"/> refuses it otherwise.
    /// Set it with a <c>with</c> expression: <c>new TrackingSignalRuleOptions(4) with { Watches = WatchedModel.Reference }</c>.
    /// A standalone <see cref="DriftRule"/> reads whatever input it is given and only stamps this value on its transitions.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">The value is not a defined <see cref="WatchedModel"/>.</exception>
    public WatchedModel Watches
    {
        get => _watches;
        init
        {
            if (value is not (WatchedModel.Published or WatchedModel.Reference))
            {
                ThrowHelper.ThrowOutOfRange(nameof(Watches), value, "the watched model must be Published or Reference");
            }

            _watches = value;
        }
    }

    private readonly WatchedModel _watches;

    /// <summary>The level at or below which an open episode's evidence counts towards clearing; 0 ≤ clear &lt; raise.</summary>
    public double ClearLevel { get; }

    /// <summary>The level at which an episode becomes <see cref="DriftSeverity.Critical"/>; at least the raise level, or +∞ for never.</summary>
    public double EscalationLevel { get; }

    /// <summary>
    /// The periods a rule must have evaluated (since creation, <see cref="DriftRule.Reset"/>,
    /// <see cref="DriftRule.Acknowledge"/> or <see cref="DriftRule.Rebaseline"/>, counting the current one) before it may
    /// raise an episode; 0 or 1 means no suppression. Default <see cref="DefaultWarmUpPeriods"/>.
    /// </summary>
    public int WarmUpPeriods { get; }

    /// <summary>
    /// The consecutive periods one side's evidence must be at or beyond the raise level (and, to escalate, the
    /// escalation level) before the rule acts. Default <see cref="DefaultPeriodsToRaise"/>.
    /// </summary>
    public int PeriodsToRaise { get; }

    /// <summary>
    /// The consecutive periods an open episode's evidence must be at or below the clear level before the episode
    /// clears. Default <see cref="DefaultPeriodsToClear"/>.
    /// </summary>
    public int PeriodsToClear { get; }

    /// <summary>RaiseLevel·(1 − tolerance): evidence at or above this reaches the raise level.</summary>
    internal double RaiseThreshold { get; }

    /// <summary>EscalationLevel·(1 − tolerance); +∞ when escalation is off.</summary>
    internal double EscalationThreshold { get; }

    /// <summary>ClearLevel·(1 + tolerance): evidence at or below this counts towards clearing.</summary>
    internal double ClearThreshold { get; }

    /// <summary>Creates a new rule for one series, with no open episode and the warm-up not yet served.</summary>
    /// <returns>The rule.</returns>
    /// <remarks>Allocates the rule once; evaluating allocates nothing afterwards.</remarks>
    public abstract DriftRule CreateRule();

    /// <summary>The largest raise level this kind of rule can take (1 for Trigg's signal, which lies in [−1, 1]).</summary>
    public virtual double MaxRaiseLevel => 1e6;

    /// <summary>
    /// The same rule with a new raise level, the clear and escalation levels scaled with it (escalation kept at or above
    /// the new raise level and within <see cref="MaxRaiseLevel"/>); every other setting unchanged. Used to calibrate a
    /// rule's limit without knowing its kind. <see cref="Watches"/> is kept.
    /// </summary>
    /// <param name="raiseLevel">The new raise level, above 0 and at most <see cref="MaxRaiseLevel"/>.</param>
    /// <returns>The rebuilt options.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="raiseLevel"/> is out of range.</exception>
    public DriftRuleOptions WithRaiseLevel(double raiseLevel)
    {
        if (!(raiseLevel > 0 && raiseLevel <= MaxRaiseLevel))
        {
            ThrowHelper.ThrowOutOfRange(nameof(raiseLevel), raiseLevel, string.Create(CultureInfo.InvariantCulture, $"the raise level must be above 0 and at most {MaxRaiseLevel}"));
        }

        double clear = ClearLevel / RaiseLevel * raiseLevel;
        double escalationRatio = EscalationLevel / RaiseLevel;
        double escalation = double.IsPositiveInfinity(escalationRatio)
            ? double.PositiveInfinity
            : Math.Min(Math.Max(raiseLevel, escalationRatio * raiseLevel), Math.Max(raiseLevel, EscalationCeiling));
        return WithLevels(raiseLevel, clear, escalation) with { Watches = Watches };
    }

    /// <summary>The largest finite escalation level this kind of rule takes (+∞ when unbounded).</summary>
    private protected virtual double EscalationCeiling => double.PositiveInfinity;

    /// <summary>These options with new raise, clear and escalation levels, every other setting unchanged.</summary>
    private protected abstract DriftRuleOptions WithLevels(double raise, double clear, double escalation);

    /// <summary>The <see cref="RuleName"/> of a two-sided limit on <paramref name="signal"/>: <c>Signal(±raise; clear c; critical e)</c>.</summary>
    private protected string LimitRuleName(string signal) =>
        $"{signal}(±{Format(RaiseLevel)}; clear {Format(ClearLevel)}; critical {Format(EscalationLevel)})";

    /// <summary>Formats a level for <see cref="RuleName"/>.</summary>
    private protected static string Format(double value) =>
        double.IsPositiveInfinity(value) ? "none" : value.ToString("G6", CultureInfo.InvariantCulture);
}
