namespace StreamForecast.Alerts;

/// <summary>
/// What one scored period tells a drift rule: the period's forecast error, an estimate of the error's standard
/// deviation, and the tracking signals the owner's error tracker computed after taking that error.
/// </summary>
/// <param name="Error">
/// The period's forecast error e = actual − forecast (positive = under-forecast). Read by <see cref="CusumRule"/>.
/// </param>
/// <param name="Sigma">
/// The estimate σ of the one-step error's standard deviation used to standardize the error, z = e/σ (for example
/// 1.25·MAD, or a σ frozen from an in-control stretch). Read by <see cref="CusumRule"/>; must be finite and positive there.
/// </param>
/// <param name="TrackingSignal">The tracking signal RSFE/MAD after this period. Read by <see cref="TrackingSignalRuleOptions"/>.</param>
/// <param name="TriggSignal">
/// Trigg's smoothed signal E/M after this period, between −1 and 1. Read by <see cref="TriggSignalRuleOptions"/>.
/// </param>
/// <remarks>
/// <para>Each rule reads only its own fields and ignores the others, which may be NaN: the static factories fill the
/// fields a single rule needs and set the rest to NaN. A field a rule reads must be finite and in its domain, or
/// <see cref="DriftRule.Evaluate"/> throws and leaves the rule unchanged.</para>
/// <para>An immutable value; safe to share across threads.</para>
/// </remarks>
public readonly record struct DriftInput(double Error, double Sigma, double TrackingSignal, double TriggSignal)
{
    /// <summary>An input for a <see cref="TrackingSignalRuleOptions"/>: only <see cref="TrackingSignal"/> is set, the rest are NaN.</summary>
    /// <param name="trackingSignal">The tracking signal RSFE/MAD after the period.</param>
    /// <returns>The input.</returns>
    public static DriftInput FromTrackingSignal(double trackingSignal) =>
        new(double.NaN, double.NaN, trackingSignal, double.NaN);

    /// <summary>An input for a <see cref="TriggSignalRuleOptions"/>: only <see cref="TriggSignal"/> is set, the rest are NaN.</summary>
    /// <param name="triggSignal">Trigg's smoothed signal after the period, between −1 and 1.</param>
    /// <returns>The input.</returns>
    public static DriftInput FromTriggSignal(double triggSignal) =>
        new(double.NaN, double.NaN, double.NaN, triggSignal);

    /// <summary>An input for a <see cref="CusumRule"/>: only <see cref="Error"/> and <see cref="Sigma"/> are set, the rest are NaN.</summary>
    /// <param name="error">The period's error e = actual − forecast.</param>
    /// <param name="sigma">The estimate σ of the error's standard deviation, finite and positive.</param>
    /// <returns>The input.</returns>
    public static DriftInput FromError(double error, double sigma) =>
        new(error, sigma, double.NaN, double.NaN);
}
