namespace StreamForecast.Selection;

/// <summary>How quickly a rule noticed a simulated change: the delay from the first changed period to the alarm.</summary>
/// <param name="Runs">The number of simulated streams.</param>
/// <param name="Detected">The streams that alarmed at or after the change, before the cap.</param>
/// <param name="FalseAlarmsBeforeChange">The streams that alarmed before the change; they are left out of the delays.</param>
/// <param name="Missed">The streams that reached the cap without an alarm.</param>
/// <param name="MeanDelay">
/// The mean number of periods from the change to the alarm over the detected streams (1 = alarm in the first changed
/// period); NaN when none was detected or the change could not be simulated.
/// </param>
/// <param name="StandardError">The standard error of <paramref name="MeanDelay"/>; NaN with fewer than two detections.</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct DetectionSummary(int Runs, int Detected, int FalseAlarmsBeforeChange, int Missed, double MeanDelay, double StandardError);
