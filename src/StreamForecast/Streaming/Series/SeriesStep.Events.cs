namespace StreamForecast.Streaming;

/// <content>Known events: the marked periods and the lift sums, held in the step's extras (null for a series without events).</content>
public sealed partial class SeriesStep<TKey>
{
    /// <summary>
    /// The lift observed per event kind in this series' marked periods (see <see cref="EventLift"/>), in the order the
    /// kinds were first met; empty when no marked period has closed with a forecast.
    /// </summary>
    /// <returns>A fresh array.</returns>
    /// <remarks>O(kinds); allocates the array. Not thread-safe (read it on the owner).</remarks>
    public EventLift[] GetEventLift() => _extras?.Lift?.ToArray() ?? [];

    /// <summary>The marked periods now (null: none).</summary>
    internal EventMarks? Marks => _extras?.Marks;

    /// <summary>The lift sums (null until a marked period closed with a forecast).</summary>
    internal EventLiftSums? Lift => _extras?.Lift;

    /// <summary>Replaces the marked periods (a declaration or withdrawal at run time, a restore).</summary>
    internal void SetMarks(EventMarks? marks)
    {
        if (marks is not null || _extras is not null)
        {
            (_extras ??= new SeriesStepExtras()).Marks = marks;
        }
    }

    /// <summary>Replaces the lift sums (a restore).</summary>
    internal void SetLift(EventLiftSums? lift)
    {
        if (lift is not null || _extras is not null)
        {
            (_extras ??= new SeriesStepExtras()).Lift = lift;
        }
    }
}
