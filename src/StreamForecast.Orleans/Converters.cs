using StreamForecast.Alerts;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Orleans;

// Orleans serializes the engine's own payload types through these surrogates, so observations, forecast updates,
// drift alerts and faults cross the cluster as the very types the in-process engine publishes. The core library
// stays free of Orleans attributes. Field ids are the wire contract: never renumber, only append. Enums travel as
// their numeric values (the enums belong to the core assembly, which Orleans does not generate code for).

/// <summary>Wire form of <see cref="Observation{TKey}"/>.</summary>
/// <typeparam name="TKey">The series key type; Orleans must be able to serialize it.</typeparam>
[GenerateSerializer]
internal struct ObservationSurrogate<TKey>
{
    /// <summary>The series key.</summary>
    [Id(0)] public TKey Key;

    /// <summary>The event time.</summary>
    [Id(1)] public DateTimeOffset Timestamp;

    /// <summary>The quantity.</summary>
    [Id(2)] public double Quantity;

    /// <summary>The optional event id.</summary>
    [Id(3)] public string? EventId;
}

/// <summary>Converts <see cref="Observation{TKey}"/> to and from its wire form.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[RegisterConverter]
internal sealed class ObservationConverter<TKey> : IConverter<Observation<TKey>, ObservationSurrogate<TKey>>
{
    /// <inheritdoc/>
    public Observation<TKey> ConvertFromSurrogate(in ObservationSurrogate<TKey> surrogate) =>
        new(surrogate.Key, surrogate.Timestamp, surrogate.Quantity, surrogate.EventId);

    /// <inheritdoc/>
    public ObservationSurrogate<TKey> ConvertToSurrogate(in Observation<TKey> value) =>
        new() { Key = value.Key, Timestamp = value.Timestamp, Quantity = value.Quantity, EventId = value.EventId };
}

/// <summary>Wire form of <see cref="ForecastPoint"/>.</summary>
[GenerateSerializer]
internal struct ForecastPointSurrogate
{
    /// <summary>The horizon.</summary>
    [Id(0)] public int Horizon;

    /// <summary>The point forecast.</summary>
    [Id(1)] public double Value;

    /// <summary>The interval's lower end.</summary>
    [Id(2)] public double Lower;

    /// <summary>The interval's upper end.</summary>
    [Id(3)] public double Upper;

    /// <summary>How the interval was formed.</summary>
    [Id(4)] public IntervalKind Kind;

    /// <summary>The interval's nominal coverage.</summary>
    [Id(5)] public double Coverage;
}

/// <summary>Converts <see cref="ForecastPoint"/> to and from its wire form.</summary>
[RegisterConverter]
internal sealed class ForecastPointConverter : IConverter<ForecastPoint, ForecastPointSurrogate>
{
    /// <inheritdoc/>
    public ForecastPoint ConvertFromSurrogate(in ForecastPointSurrogate surrogate) =>
        new(surrogate.Horizon, surrogate.Value, surrogate.Lower, surrogate.Upper, surrogate.Kind, surrogate.Coverage);

    /// <inheritdoc/>
    public ForecastPointSurrogate ConvertToSurrogate(in ForecastPoint value) =>
        new() { Horizon = value.Horizon, Value = value.Value, Lower = value.Lower, Upper = value.Upper, Kind = value.Kind, Coverage = value.Coverage };
}

/// <summary>Wire form of <see cref="ErrorSummary"/>.</summary>
[GenerateSerializer]
internal struct ErrorSummarySurrogate
{
    /// <summary>Scored periods.</summary>
    [Id(0)] public long ScoredPeriods;

    /// <summary>RSFE.</summary>
    [Id(1)] public double Rsfe;

    /// <summary>MAD.</summary>
    [Id(2)] public double Mad;

    /// <summary>Smoothed MAD.</summary>
    [Id(3)] public double SmoothedMad;

    /// <summary>MSE.</summary>
    [Id(4)] public double Mse;

    /// <summary>Bias.</summary>
    [Id(5)] public double Bias;

    /// <summary>MAPE.</summary>
    [Id(6)] public double Mape;

    /// <summary>MASE.</summary>
    [Id(7)] public double Mase;

    /// <summary>Tracking signal.</summary>
    [Id(8)] public double TrackingSignal;

    /// <summary>Trigg's signal.</summary>
    [Id(9)] public double TriggSignal;

    /// <summary>σ.</summary>
    [Id(10)] public double Sigma;
}

/// <summary>Converts <see cref="ErrorSummary"/> to and from its wire form.</summary>
[RegisterConverter]
internal sealed class ErrorSummaryConverter : IConverter<ErrorSummary, ErrorSummarySurrogate>
{
    /// <inheritdoc/>
    public ErrorSummary ConvertFromSurrogate(in ErrorSummarySurrogate s) =>
        new(s.ScoredPeriods, s.Rsfe, s.Mad, s.SmoothedMad, s.Mse, s.Bias, s.Mape, s.Mase, s.TrackingSignal, s.TriggSignal, s.Sigma);

    /// <inheritdoc/>
    public ErrorSummarySurrogate ConvertToSurrogate(in ErrorSummary v) => new()
    {
        ScoredPeriods = v.ScoredPeriods, Rsfe = v.Rsfe, Mad = v.Mad, SmoothedMad = v.SmoothedMad, Mse = v.Mse, Bias = v.Bias,
        Mape = v.Mape, Mase = v.Mase, TrackingSignal = v.TrackingSignal, TriggSignal = v.TriggSignal, Sigma = v.Sigma,
    };
}

/// <summary>Wire form of <see cref="ForecastUpdate{TKey}"/>.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[GenerateSerializer]
internal struct ForecastUpdateSurrogate<TKey>
{
    /// <summary>The series key.</summary>
    [Id(0)] public TKey Key;

    /// <summary>The closed period.</summary>
    [Id(1)] public long Period;

    /// <summary>Where the period starts.</summary>
    [Id(2)] public DateTimeOffset PeriodStart;

    /// <summary>The actual.</summary>
    [Id(3)] public double Actual;

    /// <summary>Whether the actual was imputed.</summary>
    [Id(4)] public bool IsImputed;

    /// <summary>The forecast made for the period.</summary>
    [Id(5)] public double ForecastForPeriod;

    /// <summary>The error.</summary>
    [Id(6)] public double Error;

    /// <summary>The next-period forecast.</summary>
    [Id(7)] public ForecastPoint Next;

    /// <summary>The forecast at the series' horizon.</summary>
    [Id(8)] public ForecastPoint AtHorizon;

    /// <summary>The error statistics.</summary>
    [Id(9)] public ErrorSummary Errors;

    /// <summary>The method's name.</summary>
    [Id(10)] public string Method;

    /// <summary>Whether this restates an earlier update.</summary>
    [Id(11)] public bool IsRestatement;

    /// <summary>The name of the known event's kind that marks the period; null when none does.</summary>
    [Id(12)] public string? Event;
}

/// <summary>Converts <see cref="ForecastUpdate{TKey}"/> to and from its wire form.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
[RegisterConverter]
internal sealed class ForecastUpdateConverter<TKey> : IConverter<ForecastUpdate<TKey>, ForecastUpdateSurrogate<TKey>>
{
    /// <inheritdoc/>
    public ForecastUpdate<TKey> ConvertFromSurrogate(in ForecastUpdateSurrogate<TKey> s) =>
        new(s.Key, s.Period, s.PeriodStart, s.Actual, s.IsImputed, s.ForecastForPeriod, s.Error, s.Next, s.AtHorizon, s.Errors, s.Method, s.IsRestatement)
        {
            Event = s.Event is null ? null : EventKind.Named(s.Event),
        };

    /// <inheritdoc/>
    public ForecastUpdateSurrogate<TKey> ConvertToSurrogate(in ForecastUpdate<TKey> v) => new()
    {
        Key = v.Key, Period = v.Period, PeriodStart = v.PeriodStart, Actual = v.Actual, IsImputed = v.IsImputed,
        ForecastForPeriod = v.ForecastForPeriod, Error = v.Error, Next = v.Next, AtHorizon = v.AtHorizon, Errors = v.Errors,
        Method = v.Method, IsRestatement = v.IsRestatement, Event = v.Event?.Name,
    };
}
