using System.Diagnostics.Metrics;
using System.Text;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <content>Completion checks, the end of the partition loops, and the status reader.</content>
public sealed partial class ForecastEngine<TKey>
{
    private void ThrowIfCompleted()
    {
        if (Volatile.Read(ref _completing))
        {
            throw new InvalidOperationException("The engine has been completed; it takes no more observations or commands.");
        }
    }

    private async Task FinishAsync(Task loops)
    {
        // Subscribers of forecasts and alerts may still fail while draining and report on Faults: complete Faults last.
        _forecasts.Complete(loops.Exception);
        _alerts.Complete(loops.Exception);
        await Task.WhenAll(_forecasts.Completion, _alerts.Completion).ConfigureAwait(false);
        _faults.Complete(loops.Exception);
        await _faults.Completion.ConfigureAwait(false);
        _completion.TrySetResult();
    }

    private sealed class StatusReader : ISeriesVisitor<TKey>
    {
        public List<SeriesStatus<TKey>> Statuses { get; } = [];

        public void Visit(ICollection<SeriesState<TKey>> series)
        {
            Statuses.Capacity = series.Count;
            foreach (SeriesState<TKey> s in series)
            {
                Statuses.Add(s.Status());
            }
        }
    }
}
