using System.Collections.Concurrent;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

/// <summary>Collects everything an engine publishes, per key, in arrival order.</summary>
internal sealed class EngineRecorder<TKey> : IObserver<ForecastUpdate<TKey>>, IObserver<DriftAlert<TKey>>, IObserver<SeriesFault<TKey>>
    where TKey : notnull
{
    private readonly Lock _gate = new();

    public List<ForecastUpdate<TKey>> Forecasts { get; } = [];

    public List<DriftAlert<TKey>> Alerts { get; } = [];

    public List<SeriesFault<TKey>> Faults { get; } = [];

    public int Completed { get; private set; }

    public static EngineRecorder<TKey> Attach(ForecastEngine<TKey> engine)
    {
        var r = new EngineRecorder<TKey>();
        engine.Forecasts.Subscribe(r);
        engine.Alerts.Subscribe(r);
        engine.Faults.Subscribe(r);
        return r;
    }

    public Dictionary<TKey, List<ForecastUpdate<TKey>>> ForecastsByKey(IEqualityComparer<TKey>? comparer = null)
    {
        lock (_gate)
        {
            var map = new Dictionary<TKey, List<ForecastUpdate<TKey>>>(comparer);
            foreach (var f in Forecasts)
            {
                if (!map.TryGetValue(f.Key, out var list))
                {
                    map[f.Key] = list = [];
                }

                list.Add(f);
            }

            return map;
        }
    }

    public void OnCompleted()
    {
        lock (_gate)
        {
            Completed++;
        }
    }

    public void OnError(Exception error) => throw new InvalidOperationException("The engine must never call OnError.", error);

    public void OnNext(ForecastUpdate<TKey> value)
    {
        lock (_gate)
        {
            Forecasts.Add(value);
        }
    }

    public void OnNext(DriftAlert<TKey> value)
    {
        lock (_gate)
        {
            Alerts.Add(value);
        }
    }

    public void OnNext(SeriesFault<TKey> value)
    {
        lock (_gate)
        {
            Faults.Add(value);
        }
    }
}
