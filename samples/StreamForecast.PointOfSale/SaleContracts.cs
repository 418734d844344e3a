namespace StreamForecast.Samples.PointOfSale;

/// <summary>One sale as a till sends it. Every field is checked by <see cref="SaleRules"/>; none is trusted.</summary>
/// <param name="Shop">The shop's code: 1 to 40 characters of a-z, 0-9 and '-'.</param>
/// <param name="Item">The item's code, same rule.</param>
/// <param name="SoldAt">When the sale happened, with its UTC offset.</param>
/// <param name="Quantity">Units sold, 0 to 10,000 (a till may send 0 for a voided line).</param>
/// <param name="SaleId">The till's id of the sale line, 1 to 80 characters; a resent sale with the same id counts once.</param>
public sealed record SaleEvent(string? Shop, string? Item, DateTimeOffset? SoldAt, double? Quantity, string? SaleId);

/// <summary>A batch of sales from one till.</summary>
/// <param name="Sales">The sales, at most <see cref="SaleRules.MaxBatchLength"/>.</param>
public sealed record SaleBatch(IReadOnlyList<SaleEvent>? Sales);

/// <summary>What happened to a batch: how many sales were taken and why each other one was not.</summary>
/// <param name="Accepted">Sales queued for forecasting.</param>
/// <param name="Rejected">The sales not taken, by their index in the batch, with the reasons.</param>
public sealed record BatchResult(int Accepted, IReadOnlyList<RejectedSale> Rejected);

/// <summary>A sale of a batch that was not taken.</summary>
/// <param name="Index">Its position in the batch (from 0).</param>
/// <param name="Reasons">What was wrong and what is allowed.</param>
public sealed record RejectedSale(int Index, IReadOnlyList<string> Reasons);

/// <summary>The current forecast of one shop and item.</summary>
/// <remarks>
/// A statistic that is not defined yet (MAD and the tracking signal before any error exists, for example after a single
/// closed day; an interval without an error estimate) is written as JSON <c>null</c>, never omitted, so clients see
/// every field in every answer. JSON has no NaN or infinity, and a NaN must never turn an answer into an error.
/// </remarks>
/// <param name="Shop">The shop.</param>
/// <param name="Item">The item.</param>
/// <param name="LastClosedDay">The last shop day that closed (local date).</param>
/// <param name="LastDaySold">Units sold on it.</param>
/// <param name="NextDay">The forecast for the next shop day; null while the method warms up.</param>
/// <param name="NextDayLow">The lower end of its 80% interval; null without an error estimate.</param>
/// <param name="NextDayHigh">The upper end of its 80% interval.</param>
/// <param name="Method">The forecasting method.</param>
/// <param name="Mad">The mean absolute deviation of the errors so far; null until there is an error to average.</param>
/// <param name="TrackingSignal">RSFE / MAD; null while MAD is undefined or zero.</param>
public sealed record ItemForecast(
    string Shop, string Item, DateOnly LastClosedDay, double LastDaySold, double? NextDay, double? NextDayLow, double? NextDayHigh, string Method, double? Mad, double? TrackingSignal);

/// <summary>An open drift alert of one shop and item.</summary>
/// <param name="Shop">The shop.</param>
/// <param name="Item">The item.</param>
/// <param name="Rule">The rule that raised it.</param>
/// <param name="EpisodeId">The episode's id (stable while it is open).</param>
/// <param name="Direction">UnderForecast (selling more than forecast) or OverForecast.</param>
/// <param name="Severity">Warning or Critical.</param>
/// <param name="Since">The shop day whose close raised it.</param>
public sealed record OpenAlert(string Shop, string Item, string Rule, long EpisodeId, string Direction, string Severity, DateOnly Since);
