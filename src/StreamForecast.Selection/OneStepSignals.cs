namespace StreamForecast.Selection;

/// <summary>
/// How the tracking signals behaved on a backtest's one-step errors, as the engine's error tracker with the backtest's
/// <see cref="BacktestOptions.Tracking"/> settings saw them: it scores every period from the first one the method is warm
/// for (before the first origin too), and the maxima are read over the periods after the first origin.
/// </summary>
/// <param name="Periods">The scored one-step periods after the first origin.</param>
/// <param name="FinalTrackingSignal">The tracking signal RSFE/MAD after the last period; NaN when nothing was scored.</param>
/// <param name="MaxAbsoluteTrackingSignal">
/// The largest |RSFE/MAD| after the first <see cref="BacktestOptions.SignalWarmUpPeriods"/> of those periods; NaN when no
/// period came after them.
/// </param>
/// <param name="MaxAbsoluteTriggSignal">
/// The largest |Trigg's smoothed signal| after the first <see cref="BacktestOptions.SignalWarmUpPeriods"/> of those periods;
/// NaN when no period came after them.
/// </param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct OneStepSignals(
    long Periods,
    double FinalTrackingSignal,
    double MaxAbsoluteTrackingSignal,
    double MaxAbsoluteTriggSignal);
