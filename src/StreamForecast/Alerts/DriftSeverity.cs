namespace StreamForecast.Alerts;

/// <summary>How far the signal of an open drift episode has gone.</summary>
/// <remarks>An episode's severity only rises (Warning to Critical) until the episode closes; it never steps down.</remarks>
public enum DriftSeverity
{
    /// <summary>No open episode.</summary>
    None = 0,

    /// <summary>The signal reached the rule's raise level.</summary>
    Warning = 1,

    /// <summary>The signal reached the rule's escalation level.</summary>
    Critical = 2,
}
