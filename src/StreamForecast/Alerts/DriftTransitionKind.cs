namespace StreamForecast.Alerts;

/// <summary>What changed in a drift rule's episode state during one call.</summary>
public enum DriftTransitionKind
{
    /// <summary>Nothing to publish: no episode was opened, changed or closed.</summary>
    None = 0,

    /// <summary>A new episode opened, with a new episode id.</summary>
    Raised = 1,

    /// <summary>The open episode went from <see cref="DriftSeverity.Warning"/> to <see cref="DriftSeverity.Critical"/>.</summary>
    Escalated = 2,

    /// <summary>The open episode closed; <see cref="DriftTransition.Reason"/> says why.</summary>
    Cleared = 3,
}
