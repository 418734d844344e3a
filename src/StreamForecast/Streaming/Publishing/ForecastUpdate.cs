using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>
/// What happened to one series when a period closed: the period's actual, the forecast that had been made for it and
/// its error, the new forecasts for the next period and for the configured horizon with prediction intervals, and
/// the running error statistics.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <param name="Key">The series.</param>
/// <param name="Period">The closed period's index in the series' calendar.</param>
/// <param name="PeriodStart">When the closed period started.</param>
/// <param name="Actual">The period's actual (the sum of its observations, or the gap value).</param>
/// <param name="IsImputed">Whether <paramref name="Actual"/> was filled in by the gap policy rather than observed.</param>
/// <param name="ForecastForPeriod">The forecast made for this period before it closed; NaN when there was none.</param>
/// <param name="Error">Actual − forecast; NaN when the period was not scored (also for a period marked by a known event, see <see cref="Event"/>).</param>
/// <param name="Next">The forecast for the next period with its interval; <see cref="ForecastPoint.IsValid"/> is false while the method warms up.</param>
/// <param name="AtHorizon">The forecast <see cref="SeriesOptions.Horizon"/> periods ahead with its interval.</param>
/// <param name="Errors">The running error statistics after this period.</param>
/// <param name="Method">The short label of the method that made <paramref name="Next"/>: the series' method, or for a
/// <see cref="Forecasting.MethodSelector"/> the candidate selected now.</param>
/// <param name="IsRestatement">Whether this update recomputes a period already published, after a late event changed an earlier actual.</param>
/// <remarks>An immutable value.</remarks>
public readonly record struct ForecastUpdate<TKey>(
    TKey Key,
    long Period,
    DateTimeOffset PeriodStart,
    double Actual,
    bool IsImputed,
    double ForecastForPeriod,
    double Error,
    ForecastPoint Next,
    ForecastPoint AtHorizon,
    ErrorSummary Errors,
    string Method,
    bool IsRestatement)
{
    /// <summary>
    /// The kind of known event marking this period (<see cref="KnownEvent{TKey}"/>), or null for an ordinary period.
    /// A marked period is not scored (<see cref="Error"/> is NaN, <see cref="Errors"/> and the drift rules do not see it);
    /// <see cref="Actual"/> ÷ <see cref="ForecastForPeriod"/> is its lift.
    /// </summary>
    public EventKind? Event { get; init; }
}
