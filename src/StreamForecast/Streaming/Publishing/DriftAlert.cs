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
/// <param name="Errors">The series' error statistics at that moment (MAD, tracking signal, periods observed...).</param>
/// <remarks>An immutable value. Alerts are advisory: they need a person's judgement before anything is changed.</remarks>
public readonly record struct DriftAlert<TKey>(
    TKey Key,
    long Period,
    DateTimeOffset PeriodStart,
    int RuleIndex,
    string RuleName,
    DriftTransition Transition,
    ErrorSummary Errors);

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

/// <summary>A per-series or per-subscriber fault: the stream goes on for every other key and subscriber.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <param name="Key">The series, or default when the fault is not tied to one.</param>
/// <param name="Period">The period concerned, or 0.</param>
/// <param name="Kind">What went wrong.</param>
/// <param name="Message">A readable explanation.</param>
public readonly record struct SeriesFault<TKey>(TKey Key, long Period, SeriesFaultKind Kind, string Message);
