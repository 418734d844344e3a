namespace StreamForecast.Alerts;

/// <summary>Which drift rule produced a <see cref="DriftTransition"/>.</summary>
public enum DriftRuleKind
{
    /// <summary>No rule: the value of a default <see cref="DriftTransition"/>.</summary>
    None = 0,

    /// <summary>A two-sided limit on the tracking signal RSFE/MAD (<see cref="TrackingSignalRuleOptions"/>).</summary>
    TrackingSignal = 1,

    /// <summary>A limit on |Trigg's smoothed signal| (<see cref="TriggSignalRuleOptions"/>).</summary>
    TriggSignal = 2,

    /// <summary>A two-sided tabular CUSUM on standardized errors (<see cref="CusumRule"/>).</summary>
    Cusum = 3,
}
