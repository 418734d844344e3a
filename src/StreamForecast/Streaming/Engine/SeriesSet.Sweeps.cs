namespace StreamForecast.Streaming;

/// <content>
/// Sweeps in slices: a flush or a watermark visits every series, and an owner loop that publishes what they close
/// (an engine partition) does it a slice at a time, so that it can let its subscribers catch up between slices.
/// The series are visited in the same order as <see cref="Flush"/> and <see cref="Advance"/> visit them, so the outputs
/// are the same, only spread out in time.
/// </content>
public sealed partial class SeriesSet<TKey>
{
    // The series still to visit in the sweep under way (single writer: nothing changes the set between slices).
    private Dictionary<TKey, SeriesState<TKey>>.ValueCollection.Enumerator _sweep;

    /// <summary>Starts a sweep over every series.</summary>
    internal void BeginSweep() => _sweep = _series.Values.GetEnumerator();

    /// <summary>
    /// Visits the next series of the sweep, closing every open period (a flush) or those that end at or before
    /// <paramref name="watermarkTicks"/> (an advance), until at least <paramref name="maxPeriods"/> periods have closed
    /// or every series has been visited.
    /// </summary>
    /// <param name="flush">Close every open period (<see cref="Flush"/>) rather than those the watermark completes.</param>
    /// <param name="watermarkTicks">The watermark's UTC ticks, for an advance.</param>
    /// <param name="maxPeriods">How many closed periods end the slice, ≥ 1 (a series is never split: the last one visited may take it beyond).</param>
    /// <param name="sink">Receives the outputs.</param>
    /// <returns><see langword="true"/> while series remain to be visited.</returns>
    internal bool SweepSlice(bool flush, long watermarkTicks, int maxPeriods, ISeriesSink<TKey> sink)
    {
        Output output = Use(sink);
        long end = output.Counters.PeriodsClosed + maxPeriods;
        while (output.Counters.PeriodsClosed < end)
        {
            if (!_sweep.MoveNext())
            {
                return false;
            }

            if (flush)
            {
                _sweep.Current.CloseAll(output);
            }
            else
            {
                _sweep.Current.CloseThrough(watermarkTicks, output);
            }
        }

        return true;
    }

    /// <summary>Ends the sweep (every series visited): evicts quiet series, as <see cref="Flush"/> and <see cref="Advance"/> do.</summary>
    internal void EndSweep()
    {
        _sweep = default;
        EvictQuiet();
    }
}
