namespace StreamForecast.Tracking;

/// <summary>How a prediction interval was formed.</summary>
/// <remarks>Stored in one byte so that it fits in the padding of <see cref="Streaming.ForecastPoint"/>.</remarks>
[System.Diagnostics.CodeAnalysis.SuppressMessage("Design", "CA1028:Enum Storage should be Int32", Justification = "One byte keeps ForecastPoint, published every period, at its old size.")]
public enum IntervalKind : byte
{
    /// <summary>
    /// forecast ± z·σ·√r: normally distributed errors assumed, σ from the error tracker
    /// (<see cref="ErrorTracker.Sigma"/>), r the method's horizon variance ratio. Also what an empirical configuration
    /// publishes while it warms up.
    /// </summary>
    Normal = 0,

    /// <summary>
    /// forecast plus two quantiles of the series' own recent errors at that horizon (see
    /// <see cref="EmpiricalIntervalOptions"/>); no distribution assumed.
    /// </summary>
    Empirical = 1,
}
