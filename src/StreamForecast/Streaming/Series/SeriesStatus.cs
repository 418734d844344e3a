using StreamForecast.Alerts;

namespace StreamForecast.Streaming;

/// <summary>
/// One series as it stands now (read with <see cref="ForecastEngine{TKey}.GetSeriesStatusAsync"/>): the forecast for
/// its next period, the running error statistics and the drift episodes open. Unlike a <see cref="ForecastUpdate{TKey}"/>,
/// which is published once when a period closes, a status can be read at any time, for example right after an engine
/// was restored from a checkpoint, when no period has closed since.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <param name="Key">The series.</param>
/// <param name="OpenPeriod">The earliest period of the series' calendar that has not closed yet.</param>
/// <param name="OpenPeriodStart">When <paramref name="OpenPeriod"/> starts; the default value when the series has taken no observation inside its calendar yet.</param>
/// <param name="LastActual">The actual of the latest period fed to the model (observed, or filled in by the gap policy); NaN while no period has been.</param>
/// <param name="Next">The forecast for the next period fed to the model (normally <paramref name="OpenPeriod"/>) with its interval; <see cref="ForecastPoint.IsValid"/> is false while the method warms up.</param>
/// <param name="AtHorizon">The forecast <see cref="SeriesOptions.Horizon"/> periods ahead with its interval.</param>
/// <param name="Errors">The running error statistics.</param>
/// <param name="Method">The method's short label.</param>
/// <param name="OpenEpisodes">The drift episodes open now, one per rule at most, in rule order; empty when none is.</param>
/// <remarks>An immutable value; <paramref name="OpenEpisodes"/> is a fresh list owned by the status.</remarks>
public readonly record struct SeriesStatus<TKey>(
    TKey Key,
    long OpenPeriod,
    DateTimeOffset OpenPeriodStart,
    double LastActual,
    ForecastPoint Next,
    ForecastPoint AtHorizon,
    ErrorSummary Errors,
    string Method,
    IReadOnlyList<DriftEpisodeStatus> OpenEpisodes);
