using StreamForecast.Alerts;

namespace StreamForecast.Streaming;

/// <summary>
/// A drift-alert transition of one series: an episode was raised, escalated or cleared. Only changes are published,
/// never a repeat of an unchanged state; <c>(Key, Rule, EpisodeId)</c> identifies an episode.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <param name="Key">The series.</param>
/// <param name="Period">The period whose close caused the transition.</param>
/// <param name="PeriodStart">When that period started.</param>
/// <param name="RuleIndex">The rule's position in <see cref="SeriesOptions.Rules"/>.</param>
/// <param name="RuleName">The rule's short label.</param>
/// <param name="Transition">What changed, the episode id, direction, severity and the values that explain it.</param>
/// <param name="Errors">
/// The error statistics the rule watched at that moment (MAD, tracking signal, periods observed...): the published
/// model's, or the reference model's when <see cref="Watched"/> is <see cref="WatchedModel.Reference"/>.
/// </param>
/// <remarks>An immutable value. Alerts are advisory: they need a person's judgement before anything is changed.</remarks>
public readonly record struct DriftAlert<TKey>(
    TKey Key,
    long Period,
    DateTimeOffset PeriodStart,
    int RuleIndex,
    string RuleName,
    DriftTransition Transition,
    ErrorSummary Errors)
{
    /// <summary>Whose errors the rule watched: the published model's or the series' reference model's (from <see cref="Transition"/>).</summary>
    public WatchedModel Watched => Transition.Watched;
}
