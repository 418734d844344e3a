namespace StreamForecast.Streaming;

/// <summary>
/// What the periods of one event kind did compared with the forecasts made for them: the lift of a promotion, the
/// loss of a closure. Read with <see cref="ForecastEngine{TKey}.GetEventLiftAsync"/> (summed over series) or
/// <see cref="SeriesStep{TKey}.GetEventLift"/> (one series).
/// </summary>
/// <param name="Kind">The event kind.</param>
/// <param name="Periods">Marked periods that had a forecast (periods while the method was cold are not counted).</param>
/// <param name="ActualTotal">The sum of those periods' actuals.</param>
/// <param name="ForecastTotal">The sum of the forecasts made for them before they closed.</param>
/// <remarks>
/// <para>Each marked period counts once, with its latest actual: a restatement (a late event, a late declaration)
/// replaces what the period had added. An immutable value.</para>
/// </remarks>
public readonly record struct EventLift(EventKind Kind, long Periods, double ActualTotal, double ForecastTotal)
{
    /// <summary>
    /// The lift as a ratio of totals: <see cref="ActualTotal"/> ÷ <see cref="ForecastTotal"/> (1.8 means 80% above
    /// the forecasts; a closure gives about 0). Totals rather than a mean of daily ratios, so a period with a forecast
    /// near zero does not dominate. NaN when the forecast total is not positive.
    /// </summary>
    public double Ratio => ForecastTotal > 0 ? ActualTotal / ForecastTotal : double.NaN;

    /// <summary>The mean difference per period, (<see cref="ActualTotal"/> − <see cref="ForecastTotal"/>) ÷ <see cref="Periods"/>, in the series' units; NaN with no period.</summary>
    public double MeanDifference => Periods > 0 ? (ActualTotal - ForecastTotal) / Periods : double.NaN;
}
