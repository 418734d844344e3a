namespace StreamForecast.Forecasting;

/// <summary>What one update of a <see cref="MethodSelector"/> did.</summary>
/// <param name="Actual">The period's actual.</param>
/// <param name="Forecast">The forecast that was published for the period (by the method that was selected before it); NaN when none was.</param>
/// <param name="Error">The published forecast's error, actual − forecast; NaN when none was published.</param>
/// <param name="MethodIndex">The candidate that produced <paramref name="Forecast"/>; −1 when none was published.</param>
/// <param name="SelectedIndex">The candidate selected after this period, whose forecasts are published next; −1 while none can forecast.</param>
/// <param name="Switched">Whether a challenger replaced the incumbent in this period (the first selection is not a switch).</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct SelectionStep(double Actual, double Forecast, double Error, int MethodIndex, int SelectedIndex, bool Switched)
{
    /// <summary>Whether a forecast was published for the period.</summary>
    public bool IsScored => MethodIndex >= 0;
}
