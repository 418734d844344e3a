namespace StreamForecast.Selection;

/// <summary>The run lengths (periods from a fresh start to the first alarm) of simulated in-control streams.</summary>
/// <param name="Runs">The number of simulated streams.</param>
/// <param name="Mean">The mean run length (the in-control average run length); censored runs count at the cap.</param>
/// <param name="StandardError">The standard error of <paramref name="Mean"/> (sample standard deviation / √runs).</param>
/// <param name="Median">The median run length.</param>
/// <param name="Censored">The streams that reached the cap without an alarm.</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct RunLengthSummary(int Runs, double Mean, double StandardError, double Median, int Censored);
