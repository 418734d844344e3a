namespace StreamForecast.Hosting.Tests;

/// <summary>A push subscriber that keeps every item it is given, thread-safely.</summary>
internal sealed class Collector<T> : IObserver<T>
{
    private readonly Lock _gate = new();
    private readonly List<T> _items = [];

    public List<T> Items
    {
        get
        {
            lock (_gate)
            {
                return [.. _items];
            }
        }
    }

    public void OnCompleted()
    {
    }

    public void OnError(Exception error) => throw new InvalidOperationException("The engine must never call OnError.", error);

    public void OnNext(T value)
    {
        lock (_gate)
        {
            _items.Add(value);
        }
    }
}
