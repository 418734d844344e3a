namespace StreamForecast.Alerts;

/// <summary>
/// The direction of a forecast bias. Errors are e = actual − forecast throughout the library, so positive
/// errors mean the forecast was too low.
/// </summary>
public enum DriftDirection
{
    /// <summary>No episode (the value of a default <see cref="DriftTransition"/> and of a rule with no open episode).</summary>
    None = 0,

    /// <summary>Actuals run above the forecast: errors are positive, the forecast is too low.</summary>
    UnderForecast = 1,

    /// <summary>Actuals run below the forecast: errors are negative, the forecast is too high.</summary>
    OverForecast = 2,
}
