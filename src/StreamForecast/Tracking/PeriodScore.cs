namespace StreamForecast.Tracking;

/// <summary>What one period step of a <see cref="TrackedForecaster"/> did.</summary>
/// <param name="Actual">The period's actual.</param>
/// <param name="Forecast">The forecast that was made for the period; NaN when the forecaster was not warm yet.</param>
/// <param name="Error">The period's error (sign: see <see cref="ErrorTracker"/>); NaN when the period was not scored.</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct PeriodScore(double Actual, double Forecast, double Error)
{
    /// <summary>Whether the period had a forecast and was scored.</summary>
    public bool IsScored => !double.IsNaN(Forecast);
}
