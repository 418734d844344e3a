namespace StreamForecast.Streaming;

/// <summary>
/// The last <c>capacity</c> event ids of one series, for de-duplication with bounded memory: a set for look-up and
/// a ring for first-in, first-out forgetting. Allocated once per series, on its first event id.
/// </summary>
internal sealed class EventIdWindow
{
    private readonly HashSet<string> _set;
    private readonly string?[] _ring;
    private int _next;

    public EventIdWindow(int capacity)
    {
        _set = new HashSet<string>(capacity, StringComparer.Ordinal);
        _ring = new string?[capacity];
    }

    public int Count => _set.Count;

    /// <summary>Remembers <paramref name="id"/>; false when it is already remembered (a duplicate).</summary>
    public bool TryAdd(string id)
    {
        if (!_set.Add(id))
        {
            return false;
        }

        string? evicted = _ring[_next];
        if (evicted is not null)
        {
            _set.Remove(evicted);
        }

        _ring[_next] = id;
        _next = _next + 1 == _ring.Length ? 0 : _next + 1;
        return true;
    }

    /// <summary>The remembered ids, oldest first.</summary>
    public IEnumerable<string> Oldest()
    {
        for (int i = 0; i < _ring.Length; i++)
        {
            string? id = _ring[(_next + i) % _ring.Length];
            if (id is not null)
            {
                yield return id;
            }
        }
    }
}
