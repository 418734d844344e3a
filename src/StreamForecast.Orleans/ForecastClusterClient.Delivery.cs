using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <content>Delivery of bucket outputs in number order: the reorder window, gaps and stale gaps.</content>
public sealed partial class ForecastClusterClient<TKey>
{
    private void Deliver(BucketOutput<TKey> output)
    {
        _lastNumber[output.Bucket] = output.Number;

        // One wake-up per subscriber per output (or per 256 items), not one per item.
        _outputs.Forecast(output.Forecasts);
        _outputs.Alert(output.Alerts);
        _outputs.Fault(output.Faults);
    }

    /// <summary>Delivers the waiting outputs that now follow on without a gap. Under <see cref="_outputGate"/>.</summary>
    private void DeliverWaiting(int bucket)
    {
        SortedList<long, (BucketOutput<TKey> Output, long Arrived)>? waiting = _waiting[bucket];
        while (waiting is { Count: > 0 } && waiting.Keys[0] <= _lastNumber[bucket])
        {
            // Made before the first subscription's starting number: already accounted for.
            waiting.RemoveAt(0);
            _repeatedOutputs++;
        }

        while (waiting is { Count: > 0 } && waiting.Keys[0] == _lastNumber[bucket] + 1)
        {
            BucketOutput<TKey> next = waiting.Values[0].Output;
            waiting.RemoveAt(0);
            Deliver(next);
        }
    }

    /// <summary>Gives up on the gap before the oldest waiting output: counts it as missed and delivers on. Under <see cref="_outputGate"/>.</summary>
    private void SkipGap(int bucket)
    {
        DeliverWaiting(bucket);
        SortedList<long, (BucketOutput<TKey> Output, long Arrived)>? waiting = _waiting[bucket];
        if (waiting is not { Count: > 0 })
        {
            return;
        }

        long first = waiting.Keys[0];
        _missedOutputs += first - _lastNumber[bucket] - 1;
        _lastNumber[bucket] = first - 1;
        DeliverWaiting(bucket);
    }

    /// <summary>Skips every gap that has waited longer than the reorder window (or, when stopping, every gap).</summary>
    private void SkipStaleGaps(bool all)
    {
        long now = _time.GetTimestamp();
        lock (_outputGate)
        {
            for (int b = 0; b < _waiting.Length; b++)
            {
                while (_waiting[b] is { Count: > 0 } waiting && (all || _time.GetElapsedTime(waiting.Values[0].Arrived, now) >= Options.OutputReorderWindow))
                {
                    SkipGap(b);
                }
            }
        }
    }
}
