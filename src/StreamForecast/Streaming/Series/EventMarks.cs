using System.Diagnostics;

namespace StreamForecast.Streaming;

/// <summary>
/// The periods of one series marked by known events, flattened into disjoint runs sorted by period: where events
/// overlap, the winning kind (<see cref="EventKind.Precedence"/>) marks the period, and the period is kept out of the
/// model when any event covering it with that kind says so. Immutable: a declaration builds a new one.
/// </summary>
internal sealed class EventMarks
{
    private readonly long[] _first;
    private readonly long[] _last;
    private readonly EventKind[] _kinds;
    private readonly bool[] _keepOut;

    private EventMarks(long[] first, long[] last, EventKind[] kinds, bool[] keepOut)
    {
        _first = first;
        _last = last;
        _kinds = kinds;
        _keepOut = keepOut;
    }

    /// <summary>How many disjoint runs there are.</summary>
    public int Count => _first.Length;

    /// <summary>The kind marking <paramref name="period"/>, or null; O(log runs), no allocation.</summary>
    public EventKind? KindAt(long period, out bool keepOut)
    {
        int lo = 0, hi = _first.Length - 1;
        while (lo <= hi)
        {
            int mid = (lo + hi) >>> 1;
            if (_last[mid] < period)
            {
                lo = mid + 1;
            }
            else if (_first[mid] > period)
            {
                hi = mid - 1;
            }
            else
            {
                keepOut = _keepOut[mid];
                return _kinds[mid];
            }
        }

        keepOut = false;
        return null;
    }

    /// <summary>Whether two markings treat <paramref name="period"/> the same way.</summary>
    public static bool SameAt(EventMarks? a, EventMarks? b, long period)
    {
        bool keepA = false, keepB = false;
        EventKind? ka = a?.KindAt(period, out keepA);
        EventKind? kb = b?.KindAt(period, out keepB);
        return Equals(ka, kb) && keepA == keepB;
    }

    /// <summary>Flattens possibly overlapping spans into disjoint runs (O(n²) in the number of spans).</summary>
    public static EventMarks? Build(List<Span> spans)
    {
        if (spans.Count == 0)
        {
            return null;
        }

        // Elementary boundaries: every span start and every period after a span end.
        var bounds = new SortedSet<long>();
        foreach (Span s in spans)
        {
            bounds.Add(s.First);
            if (s.Last < long.MaxValue)
            {
                bounds.Add(s.Last + 1);
            }
        }

        long[] b = [.. bounds];
        var first = new List<long>();
        var last = new List<long>();
        var kinds = new List<EventKind>();
        var keep = new List<bool>();
        for (int i = 0; i < b.Length; i++)
        {
            long from = b[i];
            long to = i + 1 < b.Length ? b[i + 1] - 1 : from;
            EventKind? winner = null;
            bool keepOut = false;
            foreach (Span s in spans)
            {
                if (s.First > from || s.Last < from)
                {
                    continue;
                }

                int order = winner is null ? -1 : EventKind.Precedence(s.Kind, winner);
                if (order < 0)
                {
                    winner = s.Kind;
                    keepOut = s.KeepOut;
                }
                else if (order == 0)
                {
                    keepOut |= s.KeepOut;
                }
            }

            if (winner is null)
            {
                continue;
            }

            int n = first.Count;
            if (n > 0 && last[n - 1] == from - 1 && kinds[n - 1].Equals(winner) && keep[n - 1] == keepOut)
            {
                last[n - 1] = to;
            }
            else
            {
                first.Add(from);
                last.Add(to);
                kinds.Add(winner);
                keep.Add(keepOut);
            }
        }

        Debug.Assert(first.Count > 0);
        return new EventMarks([.. first], [.. last], [.. kinds], [.. keep]);
    }

    /// <summary>One event's periods for one series, before flattening.</summary>
    internal readonly record struct Span(long First, long Last, EventKind Kind, bool KeepOut);
}
