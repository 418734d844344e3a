using System.Runtime.InteropServices;
using System.Text;

namespace StreamForecast.Streaming;

/// <content>Eviction of quiet series (ForecastEngineOptions.EvictAfterQuietPeriods).</content>
public sealed partial class SeriesSet<TKey>
{
    private void EvictQuiet()
    {
        if (_options.EvictAfterQuietPeriods is not { } quiet)
        {
            return;
        }

        foreach (SeriesState<TKey> s in _series.Values)
        {
            if (s.QuietPeriods >= quiet)
            {
                _evict.Add(s.Key);
            }
        }

        foreach (TKey key in _evict)
        {
            if (_series.Remove(key, out SeriesState<TKey>? removed) && removed.Options.IdleTimeout is not null)
            {
                _idleSeries--;
            }

            _output.Counters.Evictions++;
            _budget?.ReleaseSeries();
        }

        _evict.Clear();
        _count = _series.Count;
    }
}
