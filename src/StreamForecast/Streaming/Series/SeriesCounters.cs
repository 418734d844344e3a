using System.Diagnostics;

namespace StreamForecast.Streaming;

/// <summary>Where a series sends what it produces, and the counters it bumps. Implemented by the owner (a partition).</summary>
internal interface ISeriesOutput<TKey> : ISeriesSink<TKey>
{
    SeriesCounters Counters { get; }
}

/// <summary>
/// Counters bumped by one owner; read by others with relaxed reads (metrics, <c>GetCounters</c>). The one place their
/// order is spelled out is <see cref="Slot"/>: storage, reading and conversion all go through it.
/// </summary>
internal sealed class SeriesCounters
{
    /// <summary>How many counters there are (the length of <see cref="ToArray"/>).</summary>
    public const int Count = 12;

    public long Observations;
    public long Late;
    public long Restated;
    public long Duplicates;
    public long PeriodsClosed;
    public long GapPeriods;
    public long RejectedActuals;
    public long SkippedPeriods;
    public long AlertsRaised;
    public long AlertsEscalated;
    public long AlertsCleared;
    public long Evictions;

    /// <summary>The counter at a fixed position (0 … <see cref="Count"/> − 1), for storing and loading them as an array.</summary>
    public ref long Slot(int index)
    {
        switch (index)
        {
            case 0: return ref Observations;
            case 1: return ref Late;
            case 2: return ref Restated;
            case 3: return ref Duplicates;
            case 4: return ref PeriodsClosed;
            case 5: return ref GapPeriods;
            case 6: return ref RejectedActuals;
            case 7: return ref SkippedPeriods;
            case 8: return ref AlertsRaised;
            case 9: return ref AlertsEscalated;
            case 10: return ref AlertsCleared;
            case 11: return ref Evictions;
            default: throw new ArgumentOutOfRangeException(nameof(index));
        }
    }

    /// <summary>The counters in <see cref="Slot"/> order, each read once with a relaxed read.</summary>
    public long[] ToArray()
    {
        var values = new long[Count];
        for (int i = 0; i < Count; i++)
        {
            values[i] = Volatile.Read(ref Slot(i));
        }

        return values;
    }

    /// <summary>Sets the counters from <see cref="ToArray"/>'s layout.</summary>
    public void Load(ReadOnlySpan<long> values)
    {
        Debug.Assert(values.Length == Count);
        for (int i = 0; i < Count; i++)
        {
            Slot(i) = values[i];
        }
    }

    /// <summary>Sets the counters from the series-level fields of the public record; <see langword="false"/> (nothing changed) when one is negative.</summary>
    public bool TryLoad(in EngineCounters c)
    {
        ReadOnlySpan<long> values =
        [
            c.Observations, c.Late, c.Restated, c.Duplicates, c.PeriodsClosed, c.GapPeriods, c.RejectedActuals,
            c.SkippedPeriods, c.AlertsRaised, c.AlertsEscalated, c.AlertsCleared, c.Evictions,
        ];
        foreach (long v in values)
        {
            if (v < 0)
            {
                return false;
            }
        }

        for (int i = 0; i < Count; i++)
        {
            Volatile.Write(ref Slot(i), values[i]);
        }

        return true;
    }

    /// <summary>These counters as the public record; the engine-level fields (dropped, rejected, series, queues, subscribers) are 0.</summary>
    public EngineCounters ToEngineCounters() => new(
        Volatile.Read(ref Observations), Volatile.Read(ref Late), Volatile.Read(ref Restated), Volatile.Read(ref Duplicates), 0, 0,
        Volatile.Read(ref PeriodsClosed), Volatile.Read(ref GapPeriods), Volatile.Read(ref RejectedActuals),
        Volatile.Read(ref AlertsRaised), Volatile.Read(ref AlertsEscalated), Volatile.Read(ref AlertsCleared), Volatile.Read(ref Evictions),
        0, 0, 0, 0, Volatile.Read(ref SkippedPeriods));
}
