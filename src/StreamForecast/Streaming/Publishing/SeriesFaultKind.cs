namespace StreamForecast.Streaming;

/// <summary>Why a series could not process something; published as a <see cref="SeriesFault{TKey}"/>, never as OnError.</summary>
public enum SeriesFaultKind
{
    /// <summary>A closed period's actual was outside the method's domain (for example negative demand); the period was skipped.</summary>
    ActualRejected = 1,

    /// <summary>A subscriber threw while handling an item; the item was still delivered to the others.</summary>
    SubscriberFailed = 2,

    /// <summary>An observation could not be taken (its time is outside the calendar, or its series could not be set up); it was counted as rejected.</summary>
    ObservationRejected = 3,

    /// <summary>An unexpected error (a defect) while handling an item; the partition went on with the next item.</summary>
    InternalError = 4,

    /// <summary>
    /// A series had more periods to close in one step than <see cref="SeriesOptions.MaxCatchUpPeriods"/> allows: the
    /// empty stretch was skipped without feeding the model (counted in <see cref="EngineCounters.SkippedPeriods"/>).
    /// </summary>
    PeriodsSkipped = 5,
}
