namespace StreamForecast.Periods;

/// <summary>Where an event falls relative to the watermark; see <see cref="LatenessPolicy.Classify(long, long)"/>.</summary>
public enum EventTiming
{
    /// <summary>The event's period is still open: count it normally.</summary>
    OnTime,

    /// <summary>
    /// The event's period is closed but is one of the <see cref="LatenessPolicy.RestatementPeriods"/> most recently
    /// closed periods: the period may be restated (its total corrected and republished).
    /// </summary>
    Late,

    /// <summary>The event's period closed longer ago than the restatement horizon: the event can only be dropped or counted as too late.</summary>
    TooLate,
}
