namespace StreamForecast.Streaming;

/// <summary>The engine's counters at one moment (see <see cref="ForecastEngine{TKey}.GetCounters"/>).</summary>
/// <param name="Observations">Observations taken into a period (duplicates and rejections excluded).</param>
/// <param name="Late">Observations for a closed period beyond the restatement horizon: dropped.</param>
/// <param name="Restated">Late observations that restated a closed period.</param>
/// <param name="Duplicates">Observations ignored as repeats of a remembered event id.</param>
/// <param name="Dropped">Observations dropped at post because a queue was full (<see cref="IngestionFullMode.DropNewest"/>).</param>
/// <param name="Rejected">Observations rejected inside the engine: time outside the calendar, series limit reached, options not resolvable, a period total that would exceed <see cref="NumericDomain.MaxMagnitude"/>.</param>
/// <param name="PeriodsClosed">Periods closed across all series.</param>
/// <param name="GapPeriods">Closed periods that had no observation.</param>
/// <param name="RejectedActuals">Closed periods whose actual the method refused (for example negative demand).</param>
/// <param name="AlertsRaised">Drift episodes raised.</param>
/// <param name="AlertsEscalated">Drift episodes escalated.</param>
/// <param name="AlertsCleared">Drift episodes cleared.</param>
/// <param name="Evictions">Series evicted after their quiet-period limit.</param>
/// <param name="ActiveSeries">Series held now.</param>
/// <param name="QueueDepth">Items waiting in the partition queues.</param>
/// <param name="SubscriberDrops">Items dropped from full push-subscriber buffers.</param>
/// <param name="SubscriberFaults">Exceptions thrown by subscribers.</param>
/// <param name="SkippedPeriods">
/// Empty periods skipped without feeding the model because one step had more to close than
/// <see cref="SeriesOptions.MaxCatchUpPeriods"/> (not counted in <paramref name="PeriodsClosed"/>).
/// </param>
public readonly record struct EngineCounters(
    long Observations,
    long Late,
    long Restated,
    long Duplicates,
    long Dropped,
    long Rejected,
    long PeriodsClosed,
    long GapPeriods,
    long RejectedActuals,
    long AlertsRaised,
    long AlertsEscalated,
    long AlertsCleared,
    long Evictions,
    long ActiveSeries,
    long QueueDepth,
    long SubscriberDrops,
    long SubscriberFaults,
    long SkippedPeriods = 0)
{
    /// <summary>Adds two sets of counters field by field (for example the buckets of a cluster, or several engines).</summary>
    /// <param name="left">The first set.</param>
    /// <param name="right">The second set.</param>
    /// <returns>The field-by-field sum.</returns>
    public static EngineCounters operator +(EngineCounters left, EngineCounters right) => new(
        left.Observations + right.Observations, left.Late + right.Late, left.Restated + right.Restated, left.Duplicates + right.Duplicates,
        left.Dropped + right.Dropped, left.Rejected + right.Rejected, left.PeriodsClosed + right.PeriodsClosed, left.GapPeriods + right.GapPeriods,
        left.RejectedActuals + right.RejectedActuals, left.AlertsRaised + right.AlertsRaised, left.AlertsEscalated + right.AlertsEscalated,
        left.AlertsCleared + right.AlertsCleared, left.Evictions + right.Evictions, left.ActiveSeries + right.ActiveSeries,
        left.QueueDepth + right.QueueDepth, left.SubscriberDrops + right.SubscriberDrops, left.SubscriberFaults + right.SubscriberFaults,
        left.SkippedPeriods + right.SkippedPeriods);

    /// <summary>Adds two sets of counters field by field (the named form of <c>+</c>).</summary>
    /// <param name="other">The set to add.</param>
    /// <returns>The field-by-field sum.</returns>
    public EngineCounters Add(EngineCounters other) => this + other;
}
