using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>The running error statistics of one series after a closed period (see <see cref="ErrorTracker"/> for definitions and the sign convention).</summary>
/// <param name="ScoredPeriods">Periods scored so far.</param>
/// <param name="Rsfe">Running sum of forecast errors.</param>
/// <param name="Mad">Mean absolute deviation (cumulative).</param>
/// <param name="SmoothedMad">Exponentially smoothed MAD.</param>
/// <param name="Mse">Mean squared error.</param>
/// <param name="Bias">Mean error.</param>
/// <param name="Mape">Mean absolute percentage error in percent over non-zero actuals; NaN when undefined.</param>
/// <param name="Mase">Mean absolute scaled error; NaN when undefined.</param>
/// <param name="TrackingSignal">RSFE / MAD.</param>
/// <param name="TriggSignal">Trigg's smoothed error / smoothed absolute error.</param>
/// <param name="Sigma">The one-step error σ estimate.</param>
public readonly record struct ErrorSummary(
    long ScoredPeriods,
    double Rsfe,
    double Mad,
    double SmoothedMad,
    double Mse,
    double Bias,
    double Mape,
    double Mase,
    double TrackingSignal,
    double TriggSignal,
    double Sigma)
{
    /// <summary>Reads the current statistics of a tracker.</summary>
    /// <param name="tracker">The tracker.</param>
    /// <returns>A copy of its statistics.</returns>
    public static ErrorSummary Of(ErrorTracker tracker)
    {
        ArgumentNullException.ThrowIfNull(tracker);
        return new ErrorSummary(
            tracker.Count, tracker.Rsfe, tracker.Mad, tracker.SmoothedMad, tracker.Mse, tracker.Bias,
            tracker.Mape, tracker.Mase, tracker.TrackingSignal, tracker.TriggSignal, tracker.Sigma);
    }

    /// <summary>
    /// The input every drift rule reads for a scored period: its error with this summary's σ and signals. The engine,
    /// the backtester and the limit calibrator all build it here, so a rule sees the same numbers in each.
    /// </summary>
    /// <param name="error">The period's error (actual − forecast).</param>
    /// <returns>The drift-rule input.</returns>
    /// <remarks>O(1), no allocation.</remarks>
    public Alerts.DriftInput ToDriftInput(double error) => new(error, Sigma, TrackingSignal, TriggSignal);
}

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
/// <param name="Error">Actual − forecast; NaN when the period was not scored.</param>
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
    bool IsRestatement);

/// <summary>A point forecast some periods ahead with its prediction interval.</summary>
/// <param name="Horizon">Periods ahead (1 = the next period).</param>
/// <param name="Value">The point forecast; NaN when <see cref="IsValid"/> is false.</param>
/// <param name="Lower">The lower interval bound; NaN when no σ estimate exists yet.</param>
/// <param name="Upper">The upper interval bound; NaN when no σ estimate exists yet.</param>
public readonly record struct ForecastPoint(int Horizon, double Value, double Lower, double Upper)
{
    /// <summary>Whether a forecast exists (the method is warm).</summary>
    public bool IsValid => !double.IsNaN(Value);
}
