namespace StreamForecast.Alerts;

/// <summary>
/// What a drift rule's episode state did in one call: nothing, an episode raised, escalated or cleared. Rules return
/// transitions only, so an episode that stays open and unchanged produces <see cref="DriftTransitionKind.None"/>
/// (the default value) until it changes: one raise, at most one escalation and one clear per episode.
/// </summary>
/// <param name="Kind">What happened; <see cref="DriftTransitionKind.None"/> for the default value, whose other fields are all zero.</param>
/// <param name="Rule">The kind of rule that produced the transition.</param>
/// <param name="EpisodeId">
/// The episode's id: a per-rule sequence number starting at 1, carried in the rule's exported state so that a rule
/// restored from a snapshot continues the numbering. Stable for the episode's lifetime; 0 for <see cref="DriftTransitionKind.None"/>.
/// </param>
/// <param name="Direction">The episode's direction (for a close, the direction of the episode that closed).</param>
/// <param name="Severity">The episode's severity after the transition (for a close, the severity it closed with).</param>
/// <param name="Signal">
/// The value that explains the transition, signed by direction: positive for under-forecast evidence, negative for
/// over-forecast evidence. It is the tracking signal for <see cref="TrackingSignalRuleOptions"/>, Trigg's signal for
/// <see cref="TriggSignalRuleOptions"/>, and C⁺ (positive) or −C⁻ (negative) for <see cref="CusumRule"/>. For a
/// <see cref="DriftCloseReason.DirectionReversed"/> close it is the opposite-side signal that caused the close; for
/// <see cref="DriftCloseReason.Acknowledged"/> and <see cref="DriftCloseReason.Rebaselined"/> closes, the episode's
/// signal in the last evaluated period.
/// </param>
/// <param name="Level">
/// The level the signal was compared with, signed the same way: the raise level for <see cref="DriftTransitionKind.Raised"/>
/// and for a <see cref="DriftCloseReason.DirectionReversed"/> close (on the opposite side), the escalation level for
/// <see cref="DriftTransitionKind.Escalated"/>, and the clear level for every other close.
/// </param>
/// <param name="PeriodsObserved">
/// The periods the rule had evaluated since it was created, reset or restarted (<see cref="DriftRule.Acknowledge"/>,
/// <see cref="DriftRule.Rebaseline"/>), including the current one.
/// </param>
/// <param name="Reason">Why the episode closed, for <see cref="DriftTransitionKind.Cleared"/>; otherwise <see cref="DriftCloseReason.None"/>.</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct DriftTransition(
    DriftTransitionKind Kind,
    DriftRuleKind Rule,
    long EpisodeId,
    DriftDirection Direction,
    DriftSeverity Severity,
    double Signal,
    double Level,
    long PeriodsObserved,
    DriftCloseReason Reason)
{
    /// <summary>
    /// Whose errors the rule watched (its <see cref="DriftRuleOptions.Watches"/>): the published model's, or the series'
    /// reference model's. <see cref="WatchedModel.Published"/> for the default value.
    /// </summary>
    public WatchedModel Watched { get; init; }

    /// <summary>Whether nothing happened (<see cref="Kind"/> is <see cref="DriftTransitionKind.None"/>), so there is nothing to publish.</summary>
    public bool IsNone => Kind == DriftTransitionKind.None;
}
