using System.Diagnostics.Metrics;
using System.Text;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <content>The engine's counters and the metrics instruments that read them.</content>
public sealed partial class ForecastEngine<TKey>
{
    /// <summary>The engine's counters, summed over partitions (each read without locks, so a sum may straddle an update).</summary>
    /// <returns>The counters now.</returns>
    public EngineCounters GetCounters()
    {
        EngineCounters total = default;
        long depth = 0;
        foreach (Partition<TKey> p in _partitions)
        {
            total += p.GetCounters();
            depth += p.QueueDepth;
        }

        return total with
        {
            Dropped = Interlocked.Read(ref _dropped),
            Rejected = total.Rejected + Interlocked.Read(ref _rejected),
            ActiveSeries = SeriesCount,
            QueueDepth = depth,
            SubscriberDrops = Interlocked.Read(ref _subscriberDrops),
            SubscriberFaults = Interlocked.Read(ref _subscriberFaults),
        };
    }

    /// <inheritdoc/>
    public Task<EngineCounters> GetCountersAsync(CancellationToken cancellationToken = default) =>
        cancellationToken.IsCancellationRequested ? Task.FromCanceled<EngineCounters>(cancellationToken) : Task.FromResult(GetCounters());


    private void CreateInstruments()
    {
        // Counters are read from the partitions' own tallies when a listener collects: nothing on the hot path.
        // Tags never carry a series key.
        _meter.CreateObservableCounter("streamforecast.observations", () => GetCounters().Observations, description: "Observations taken by the partitions.");
        _meter.CreateObservableCounter("streamforecast.late", () => GetCounters().Late, description: "Late observations dropped (too late to restate).");
        _meter.CreateObservableCounter("streamforecast.restated", () => GetCounters().Restated, description: "Late observations that restated a closed period.");
        _meter.CreateObservableCounter("streamforecast.dropped", () => GetCounters().Dropped, description: "Observations dropped because a queue was full.");
        _meter.CreateObservableCounter("streamforecast.duplicates", () => GetCounters().Duplicates, description: "Observations ignored as repeats of a remembered event id.");
        _meter.CreateObservableCounter("streamforecast.rejected", () => GetCounters().Rejected, description: "Observations rejected inside the engine (outside the calendar, series limit reached, period total out of range).");
        _meter.CreateObservableCounter("streamforecast.periods_skipped", () => GetCounters().SkippedPeriods, description: "Empty periods skipped because one step had more to close than the series allows.");
        _meter.CreateObservableCounter("streamforecast.periods_closed", () => GetCounters().PeriodsClosed, description: "Periods closed across all series.");
        _meter.CreateObservableCounter("streamforecast.evictions", () => GetCounters().Evictions, description: "Series removed after their quiet-period limit.");
        _meter.CreateObservableCounter("streamforecast.alerts_raised", () => GetCounters().AlertsRaised, description: "Drift episodes raised.");
        _meter.CreateObservableCounter("streamforecast.alerts_cleared", () => GetCounters().AlertsCleared, description: "Drift episodes cleared.");
        _meter.CreateObservableUpDownCounter("streamforecast.active_series", () => (long)SeriesCount, description: "Series held now.");
        _meter.CreateObservableUpDownCounter("streamforecast.queue_depth", () => GetCounters().QueueDepth, description: "Observations and commands waiting in the partition queues.");
    }
}
