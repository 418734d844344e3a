using Microsoft.Extensions.Diagnostics.HealthChecks;
using StreamForecast.Hosting;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.PointOfSale;

/// <summary>
/// The engine's state for <c>GET /health</c>: unhealthy until the host has restored and started the engine or once it
/// has stopped (the server cannot take sales then), degraded while sales wait in the queues beyond half of one queue's capacity
/// or once the engine has dropped any for a full queue, healthy otherwise. The report carries the counts behind it.
/// </summary>
/// <remarks>Cheap: reads the engine's counters (no call into the partitions); safe to call from any thread.</remarks>
/// <param name="engine">The hosted engine.</param>
/// <param name="queueCapacity">The capacity of one partition queue (StreamForecast:QueueCapacity).</param>
public sealed class EngineHealthCheck(HostedForecastEngine<string> engine, long queueCapacity) : IHealthCheck
{
    /// <inheritdoc />
    public Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        if (!engine.IsStarted)
        {
            return Task.FromResult(HealthCheckResult.Unhealthy("The forecast engine has not started yet (restoring the checkpoint and replaying the input log)."));
        }

        ForecastEngine<string> running = engine.Engine;
        if (running.Completion.IsCompleted)
        {
            return Task.FromResult(HealthCheckResult.Unhealthy("The forecast engine has stopped; sales are not taken.", running.Completion.Exception));
        }

        EngineCounters c = running.GetCounters();
        var data = new Dictionary<string, object>
        {
            ["series"] = running.SeriesCount,
            ["queueDepth"] = c.QueueDepth,
            ["counted"] = c.Observations,
            ["duplicates"] = c.Duplicates,
            ["late"] = c.Late,
            ["rejected"] = c.Rejected,
            ["droppedQueueFull"] = c.Dropped,
            ["periodsClosed"] = c.PeriodsClosed,
            ["alertsRaised"] = c.AlertsRaised,
            ["alertsCleared"] = c.AlertsCleared,
            ["loggedSales"] = engine.PostedPosition,
            ["restoredSeries"] = engine.Start.SeriesRestored,
        };

        if (c.Dropped > 0)
        {
            return Task.FromResult(HealthCheckResult.Degraded($"The engine dropped {c.Dropped} sales for a full queue.", data: data));
        }

        if (c.QueueDepth > queueCapacity / 2)
        {
            return Task.FromResult(HealthCheckResult.Degraded($"{c.QueueDepth} sales wait in the queues (over half of one queue's capacity, {queueCapacity}).", data: data));
        }

        return Task.FromResult(HealthCheckResult.Healthy("The forecast engine is running.", data));
    }
}
