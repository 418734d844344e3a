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
