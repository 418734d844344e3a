using System.Runtime.CompilerServices;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

// The parts of a series' state that most series never use, in one object created only for a series that uses one of
// them (issue 15, target 3: memory per series).
internal sealed partial class SeriesState<TKey>
{
    /// <summary>The open-period ring when the lateness needs more than <see cref="InlineOpenPeriods"/> slots; else null.</summary>
    private OpenPeriod[]? OpenSpill => _extras?.OpenSpill;

    /// <summary>The restatement state (the lagged model and the retained closed periods), or null when the options allow none.</summary>
    private Restatement? Restating => _extras?.Restatement;

    /// <summary>The remembered event ids, or null until the first id arrives.</summary>
    private EventIdWindow? Ids => _extras?.Ids;

    /// <summary>
    /// Reads a word of each of this state's cache lines, its step's, its model's, forecaster's and error tracker's (a partition's look-ahead, so that the misses of
    /// several series overlap before they are applied one after another); the value means nothing.
    /// </summary>
    internal long Warm()
    {
        TrackedForecaster model = _step.Model;
        return _nextToClose ^ _lastArrival ^ model.Count ^ model.Tracker.Count;
    }

    /// <summary>The ring slot of open period <paramref name="period"/> (inside the open range).</summary>
    /// <remarks>
    /// The inline pair's slot is the period's parity, <see cref="Slot"/> with a capacity of 2 without its division (read
    /// on every observation and close; issue 15, engine cost per observation).
    /// </remarks>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private ref OpenPeriod OpenSlot(long period)
    {
        if (OpenSpill is { } spill)
        {
            return ref spill[Slot(period, spill.Length)];
        }

        return ref _openInline[(int)(period & 1)];
    }

    /// <summary>The rarely used parts of one series' state: each null when unused.</summary>
    private sealed class Extras
    {
        public OpenPeriod[]? OpenSpill;
        public Restatement? Restatement;
        public EventIdWindow? Ids;
    }
}
