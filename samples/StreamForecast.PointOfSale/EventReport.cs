namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// A known event (a declared promotion, a closure) as the shop sees it (<c>GET /events</c>): which closed days it marked,
/// what they sold against their forecasts, and whether the item raised a drift alert during it or in the week after.
/// </summary>
/// <param name="Shop">The shop.</param>
/// <param name="Item">The item.</param>
/// <param name="Kind">The kind of event, for example "promotion".</param>
/// <param name="FirstDay">The first marked shop day that has closed.</param>
/// <param name="LastDay">The last marked shop day that has closed.</param>
/// <param name="Days">Marked days closed so far. They are left out of the forecast-error figures and the drift checks.</param>
/// <param name="SoldVsForecast">Units sold on those days divided by the units forecast for them (1.8: 80% above the forecasts); null without a forecast.</param>
/// <param name="AlertsRaised">Drift alerts raised for the item from its first marked day to seven days after the last.</param>
public sealed record EventReport(string Shop, string Item, string Kind, DateOnly FirstDay, DateOnly LastDay, int Days, double? SoldVsForecast, int AlertsRaised);
