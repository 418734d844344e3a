namespace StreamForecast.Samples.PointOfSale;

/// <summary>One sale as a till sends it. Every field is checked by <see cref="SaleRules"/>; none is trusted.</summary>
/// <param name="Shop">The shop's code: 1 to 40 characters of a-z, 0-9 and '-'.</param>
/// <param name="Item">The item's code, same rule.</param>
/// <param name="SoldAt">When the sale happened: ISO 8601 with its UTC offset (<c>Z</c> or <c>+01:00</c>); a time without one is refused with 400.</param>
/// <param name="Quantity">Units sold, 0 to 10,000 (a till may send 0 for a voided line).</param>
/// <param name="SaleId">The till's id of the sale line, 1 to 80 characters; a resent sale with the same id counts once.</param>
public sealed record SaleEvent(string? Shop, string? Item, DateTimeOffset? SoldAt, double? Quantity, string? SaleId);

/// <summary>A batch of sales from one till.</summary>
/// <param name="Sales">The sales, at most <see cref="SaleRules.MaxBatchLength"/>.</param>
public sealed record SaleBatch(IReadOnlyList<SaleEvent>? Sales);

/// <summary>What happened to a batch: how many sales were taken and why each other one was not.</summary>
/// <param name="Accepted">Sales taken: logged durably and queued for forecasting (they survive a crash of the server).</param>
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
/// <param name="Since">
/// The shop day whose close raised it; null for an episode that was already open when the server last started (the
/// restored state holds the episode, not the day it was raised).
/// </param>
public sealed record OpenAlert(string Shop, string Item, string Rule, long EpisodeId, string Direction, string Severity, DateOnly? Since);

/// <summary>What the server restored when it started and what its engine has counted since (<c>GET /status</c>).</summary>
/// <param name="RestoredSeries">Series restored from the checkpoint at the start.</param>
/// <param name="CheckpointPosition">The input position of that checkpoint (0 when the server started empty).</param>
/// <param name="ReplayedSales">Sales replayed from the input log at the start (acknowledged after that checkpoint).</param>
/// <param name="RefusedOnReplay">Of those, sales the engine refused at its door (each logged with its position).</param>
/// <param name="LoggedSales">The input log position: every sale before it is logged and taken by the engine.</param>
/// <param name="Counted">Sales the engine has counted since the start (replayed ones included): added to their day, or counted as late.</param>
/// <param name="Duplicates">Resent sales ignored because their sale id was already counted (not in <paramref name="Counted"/>).</param>
/// <param name="Late">Of <paramref name="Counted"/>, sales too late to restate their day (counted, not added to any day).</param>
/// <param name="Restated">Of <paramref name="Counted"/>, late sales that restated a closed day.</param>
/// <param name="Rejected">Sales the engine refused inside (a day's total out of range, the series limit reached), each also reported as a fault (not in <paramref name="Counted"/>).</param>
public sealed record ServerStatus(
    int RestoredSeries, long CheckpointPosition, long ReplayedSales, long RefusedOnReplay, long LoggedSales,
    long Counted, long Duplicates, long Late, long Restated, long Rejected);

/// <summary>The answer of <c>GET /health</c>: the engine's state and the counts behind it.</summary>
/// <param name="Status">Healthy, Degraded (answered 200) or Unhealthy (answered 503).</param>
/// <param name="Description">Why, in one sentence.</param>
/// <param name="Engine">The engine's counts: series, queueDepth, counted, duplicates, late, rejected, droppedQueueFull, periodsClosed, alertsRaised, alertsCleared, loggedSales, restoredSeries (empty before the engine has started).</param>
public sealed record EngineHealth(string Status, string? Description, IReadOnlyDictionary<string, object> Engine);
