namespace StreamForecast.Alerts;

/// <summary>Why a drift episode closed (the <see cref="DriftTransition.Reason"/> of a <see cref="DriftTransitionKind.Cleared"/> transition).</summary>
public enum DriftCloseReason
{
    /// <summary>Not a close (every transition other than <see cref="DriftTransitionKind.Cleared"/>).</summary>
    None = 0,

    /// <summary>The signal stayed at or below the clear level for the required number of consecutive periods.</summary>
    SignalReturned = 1,

    /// <summary>
    /// The signal reached the raise level on the opposite side for the required number of consecutive periods while the
    /// episode was open and its own side had fallen below the raise level. A new episode in the new direction is raised on the next period that still meets the raise rule.
    /// </summary>
    DirectionReversed = 2,

    /// <summary>The owner called <see cref="DriftRule.Acknowledge"/>.</summary>
    Acknowledged = 3,

    /// <summary>The owner called <see cref="DriftRule.Rebaseline"/>.</summary>
    Rebaselined = 4,
}
