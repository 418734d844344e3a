using StreamForecast.Alerts;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Orleans;

// Orleans surrogates for the alert, fault and counter payload types (field ids are a wire contract, as in Converters.cs).

/// <summary>Wire form of <see cref="DriftTransition"/>.</summary>
[GenerateSerializer]
internal struct DriftTransitionSurrogate
{
    /// <summary>Raised, escalated or cleared.</summary>
    [Id(0)] public int Kind;

    /// <summary>The rule's kind.</summary>
    [Id(1)] public int Rule;

    /// <summary>The episode id.</summary>
    [Id(2)] public long EpisodeId;

    /// <summary>The direction.</summary>
    [Id(3)] public int Direction;

    /// <summary>The severity.</summary>
    [Id(4)] public int Severity;

    /// <summary>The signal's value.</summary>
    [Id(5)] public double Signal;

    /// <summary>The level crossed.</summary>
    [Id(6)] public double Level;

    /// <summary>Periods the rule has observed.</summary>
    [Id(7)] public long PeriodsObserved;

    /// <summary>Why an episode closed.</summary>
    [Id(8)] public int Reason;
}

/// <summary>Converts <see cref="DriftTransition"/> to and from its wire form.</summary>
[RegisterConverter]
internal sealed class DriftTransitionConverter : IConverter<DriftTransition, DriftTransitionSurrogate>
{
    /// <inheritdoc/>
    public DriftTransition ConvertFromSurrogate(in DriftTransitionSurrogate s) =>
        new((DriftTransitionKind)s.Kind, (DriftRuleKind)s.Rule, s.EpisodeId, (DriftDirection)s.Direction, (DriftSeverity)s.Severity, s.Signal, s.Level, s.PeriodsObserved, (DriftCloseReason)s.Reason);

    /// <inheritdoc/>
    public DriftTransitionSurrogate ConvertToSurrogate(in DriftTransition v) => new()
    {
        Kind = (int)v.Kind, Rule = (int)v.Rule, EpisodeId = v.EpisodeId, Direction = (int)v.Direction, Severity = (int)v.Severity,
        Signal = v.Signal, Level = v.Level, PeriodsObserved = v.PeriodsObserved, Reason = (int)v.Reason,
    };
}

/// <summary>Wire form of <see cref="DriftAlert{TKey}"/>.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[GenerateSerializer]
internal struct DriftAlertSurrogate<TKey>
{
    /// <summary>The series key.</summary>
    [Id(0)] public TKey Key;

    /// <summary>The period.</summary>
    [Id(1)] public long Period;

    /// <summary>Where the period starts.</summary>
    [Id(2)] public DateTimeOffset PeriodStart;

    /// <summary>The rule's index in the series options.</summary>
    [Id(3)] public int RuleIndex;

    /// <summary>The rule's name.</summary>
    [Id(4)] public string RuleName;

    /// <summary>The transition.</summary>
    [Id(5)] public DriftTransition Transition;

    /// <summary>The error statistics.</summary>
    [Id(6)] public ErrorSummary Errors;
}

/// <summary>Converts <see cref="DriftAlert{TKey}"/> to and from its wire form.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[RegisterConverter]
internal sealed class DriftAlertConverter<TKey> : IConverter<DriftAlert<TKey>, DriftAlertSurrogate<TKey>>
{
    /// <inheritdoc/>
    public DriftAlert<TKey> ConvertFromSurrogate(in DriftAlertSurrogate<TKey> s) =>
        new(s.Key, s.Period, s.PeriodStart, s.RuleIndex, s.RuleName, s.Transition, s.Errors);

    /// <inheritdoc/>
    public DriftAlertSurrogate<TKey> ConvertToSurrogate(in DriftAlert<TKey> v) => new()
    {
        Key = v.Key, Period = v.Period, PeriodStart = v.PeriodStart, RuleIndex = v.RuleIndex, RuleName = v.RuleName,
        Transition = v.Transition, Errors = v.Errors,
    };
}

/// <summary>Wire form of <see cref="SeriesFault{TKey}"/>.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[GenerateSerializer]
internal struct SeriesFaultSurrogate<TKey>
{
    /// <summary>The series key.</summary>
    [Id(0)] public TKey Key;

    /// <summary>The period, or 0.</summary>
    [Id(1)] public long Period;

    /// <summary>What went wrong.</summary>
    [Id(2)] public int Kind;

    /// <summary>The message.</summary>
    [Id(3)] public string Message;
}

/// <summary>Converts <see cref="SeriesFault{TKey}"/> to and from its wire form.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[RegisterConverter]
internal sealed class SeriesFaultConverter<TKey> : IConverter<SeriesFault<TKey>, SeriesFaultSurrogate<TKey>>
{
    /// <inheritdoc/>
    public SeriesFault<TKey> ConvertFromSurrogate(in SeriesFaultSurrogate<TKey> s) => new(s.Key, s.Period, (SeriesFaultKind)s.Kind, s.Message);

    /// <inheritdoc/>
    public SeriesFaultSurrogate<TKey> ConvertToSurrogate(in SeriesFault<TKey> v) => new() { Key = v.Key, Period = v.Period, Kind = (int)v.Kind, Message = v.Message };
}

/// <summary>Wire form of <see cref="EngineCounters"/>.</summary>
[GenerateSerializer]
internal struct EngineCountersSurrogate
{
    /// <summary>Observations.</summary>
    [Id(0)] public long Observations;

    /// <summary>Late.</summary>
    [Id(1)] public long Late;

    /// <summary>Restated.</summary>
    [Id(2)] public long Restated;

    /// <summary>Duplicates.</summary>
    [Id(3)] public long Duplicates;

    /// <summary>Dropped.</summary>
    [Id(4)] public long Dropped;

    /// <summary>Rejected.</summary>
    [Id(5)] public long Rejected;

    /// <summary>PeriodsClosed.</summary>
    [Id(6)] public long PeriodsClosed;

    /// <summary>GapPeriods.</summary>
    [Id(7)] public long GapPeriods;

    /// <summary>RejectedActuals.</summary>
    [Id(8)] public long RejectedActuals;

    /// <summary>AlertsRaised.</summary>
    [Id(9)] public long AlertsRaised;

    /// <summary>AlertsEscalated.</summary>
    [Id(10)] public long AlertsEscalated;

    /// <summary>AlertsCleared.</summary>
    [Id(11)] public long AlertsCleared;

    /// <summary>Evictions.</summary>
    [Id(12)] public long Evictions;

    /// <summary>ActiveSeries.</summary>
    [Id(13)] public long ActiveSeries;

    /// <summary>QueueDepth.</summary>
    [Id(14)] public long QueueDepth;

    /// <summary>SubscriberDrops.</summary>
    [Id(15)] public long SubscriberDrops;

    /// <summary>SubscriberFaults.</summary>
    [Id(16)] public long SubscriberFaults;

    /// <summary>SkippedPeriods.</summary>
    [Id(17)] public long SkippedPeriods;
}

/// <summary>Converts <see cref="EngineCounters"/> to and from its wire form.</summary>
[RegisterConverter]
internal sealed class EngineCountersConverter : IConverter<EngineCounters, EngineCountersSurrogate>
{
    /// <inheritdoc/>
    public EngineCounters ConvertFromSurrogate(in EngineCountersSurrogate s) =>
        new(s.Observations, s.Late, s.Restated, s.Duplicates, s.Dropped, s.Rejected, s.PeriodsClosed, s.GapPeriods, s.RejectedActuals, s.AlertsRaised, s.AlertsEscalated, s.AlertsCleared, s.Evictions, s.ActiveSeries, s.QueueDepth, s.SubscriberDrops, s.SubscriberFaults, s.SkippedPeriods);

    /// <inheritdoc/>
    public EngineCountersSurrogate ConvertToSurrogate(in EngineCounters v) => new()
    {
        Observations = v.Observations,
        Late = v.Late,
        Restated = v.Restated,
        Duplicates = v.Duplicates,
        Dropped = v.Dropped,
        Rejected = v.Rejected,
        PeriodsClosed = v.PeriodsClosed,
        GapPeriods = v.GapPeriods,
        RejectedActuals = v.RejectedActuals,
        AlertsRaised = v.AlertsRaised,
        AlertsEscalated = v.AlertsEscalated,
        AlertsCleared = v.AlertsCleared,
        Evictions = v.Evictions,
        ActiveSeries = v.ActiveSeries,
        QueueDepth = v.QueueDepth,
        SubscriberDrops = v.SubscriberDrops,
        SubscriberFaults = v.SubscriberFaults,
        SkippedPeriods = v.SkippedPeriods,
    };
}
