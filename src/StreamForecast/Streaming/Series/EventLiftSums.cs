namespace StreamForecast.Streaming;

/// <summary>
/// One step's lift per event kind (periods, actual total, forecast total). Part of the step's model-side state: the
/// restatement rollback copies it with the model, so each marked period counts once with its latest actual. Created
/// only for a series that has met a marked period; a handful of kinds at most, so a linear search.
/// </summary>
internal sealed class EventLiftSums
{
    private EventLift[] _items = new EventLift[2];

    public int Count { get; private set; }

    public EventLift this[int index] => _items[index];

    public void Add(EventKind kind, double actual, double forecast)
    {
        int i = IndexOf(kind);
        if (i < 0)
        {
            Append(new EventLift(kind, 0, 0, 0));
            i = Count - 1;
        }

        EventLift l = _items[i];
        _items[i] = l with { Periods = l.Periods + 1, ActualTotal = l.ActualTotal + actual, ForecastTotal = l.ForecastTotal + forecast };
    }

    public void Append(in EventLift lift)
    {
        if (Count == _items.Length)
        {
            Array.Resize(ref _items, Count * 2);
        }

        _items[Count++] = lift;
    }

    public void CopyFrom(EventLiftSums? source)
    {
        Count = 0;
        if (source is not null)
        {
            for (int i = 0; i < source.Count; i++)
            {
                Append(source._items[i]);
            }
        }
    }

    public EventLift[] ToArray() => _items.AsSpan(0, Count).ToArray();

    private int IndexOf(EventKind kind)
    {
        for (int i = 0; i < Count; i++)
        {
            if (_items[i].Kind.Equals(kind))
            {
                return i;
            }
        }

        return -1;
    }
}
