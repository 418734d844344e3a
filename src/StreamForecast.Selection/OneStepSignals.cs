namespace StreamForecast.Selection;

/// <summary>
/// How the tracking signals behaved on a backtest's one-step errors, as a live error tracker with the backtest's
/// <see cref="BacktestOptions.Tracking"/> settings would have seen them from the first origin on.
/// </summary>
/// <param name="Periods">The scored one-step periods.</param>
/// <param name="FinalTrackingSignal">The tracking signal RSFE/MAD after the last period; NaN when nothing was scored.</param>
/// <param name="MaxAbsoluteTrackingSignal">
/// The largest |RSFE/MAD| after the first <see cref="BacktestOptions.SignalWarmUpPeriods"/> scored periods; NaN when no
/// period came after them.
/// </param>
/// <param name="MaxAbsoluteTriggSignal">
/// The largest |Trigg's smoothed signal| after the first <see cref="BacktestOptions.SignalWarmUpPeriods"/> scored periods;
/// NaN when no period came after them.
/// </param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct OneStepSignals(
    long Periods,
    double FinalTrackingSignal,
    double MaxAbsoluteTrackingSignal,
    double MaxAbsoluteTriggSignal);
