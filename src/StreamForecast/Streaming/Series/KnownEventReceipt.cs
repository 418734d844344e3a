namespace StreamForecast.Streaming;

/// <summary>What declaring or withdrawing a known event at run time did (<see cref="ForecastEngine{TKey}.DeclareEventAsync"/>).</summary>
/// <param name="SeriesAffected">Series held now that the event applies to (series created later pick it up when they are created).</param>
/// <param name="PeriodsRestated">Closed periods republished as restatements because their marking changed (inside the restatement horizon).</param>
/// <param name="PeriodsBeyondHorizon">
/// Periods the event covers that lie before a series' restatement horizon (closed already, or before the series began;
/// every closed period when the series keeps no restatement window), summed over series: their published outputs, error
/// statistics and drift rules stay as they were; the marking applies from the horizon on.
/// </param>
/// <remarks>An immutable value; summed over the engine's partitions.</remarks>
public readonly record struct KnownEventReceipt(int SeriesAffected, long PeriodsRestated, long PeriodsBeyondHorizon);
