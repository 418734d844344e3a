namespace StreamForecast.Streaming;

/// <summary>
/// The event ids one series still has to recognise as repeats: those of events whose period is open or still
/// restatable, at most <c>capacity</c> of them. Older ids are forgotten as their periods fall out of the lateness and
/// restatement horizon (a repeat of such an event is late anyway). Memory grows with the ids actually held, not with
/// the capacity.
/// </summary>
internal sealed class EventIdWindow
{
    private readonly HashSet<string> _set = new(StringComparer.Ordinal);
    private readonly Queue<(string Id, long Period)> _order = new();
    private readonly int _capacity;

    public EventIdWindow(int capacity) => _capacity = capacity;

    public int Count => _set.Count;

    /// <summary>Remembers <paramref name="id"/> for an event of <paramref name="period"/>; false when it is already remembered (a repeat).</summary>
    public bool TryAdd(string id, long period)
    {
        if (!_set.Add(id))
        {
            return false;
        }

        _order.Enqueue((id, period));
        if (_order.Count > _capacity)
        {
            _set.Remove(_order.Dequeue().Id);
        }

        return true;
    }

    /// <summary>Forgets ids, oldest arrival first, whose period is before <paramref name="period"/>.</summary>
    /// <remarks>Arrival order is nearly period order; an id that arrived out of order may be kept a little longer.</remarks>
    public void ForgetBefore(long period)
    {
        while (_order.TryPeek(out var oldest) && oldest.Period < period)
        {
            _set.Remove(_order.Dequeue().Id);
        }
    }

    /// <summary>The remembered ids with their periods, oldest arrival first.</summary>
    public IEnumerable<(string Id, long Period)> Oldest() => _order;
}
