using StreamForecast.Alerts;

namespace StreamForecast.Streaming;

/// <summary>A drift episode open now on one rule of a series.</summary>
/// <param name="RuleIndex">The rule's index in <see cref="SeriesOptions.Rules"/>.</param>
/// <param name="RuleName">The rule's label, as in <see cref="DriftAlert{TKey}.RuleName"/>.</param>
/// <param name="EpisodeId">The episode's id (see <see cref="DriftRule.EpisodeId"/>), the same as in the alert that raised it.</param>
/// <param name="Direction">Which way the forecasts are off.</param>
/// <param name="Severity">Warning or Critical.</param>
/// <remarks>An immutable value.</remarks>
public readonly record struct DriftEpisodeStatus(int RuleIndex, string RuleName, long EpisodeId, DriftDirection Direction, DriftSeverity Severity);
