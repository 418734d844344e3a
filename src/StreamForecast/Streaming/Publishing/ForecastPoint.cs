using System.Runtime.InteropServices;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>A point forecast some periods ahead with its prediction interval, and what kind of interval it is.</summary>
/// <param name="Horizon">Periods ahead (1 = the next period).</param>
/// <param name="Value">The point forecast; NaN when <see cref="IsValid"/> is false.</param>
/// <param name="Lower">The lower interval bound; NaN when no σ estimate exists yet.</param>
/// <param name="Upper">The upper interval bound; NaN when no σ estimate exists yet.</param>
/// <param name="Kind">
/// How the interval was formed: <see cref="IntervalKind.Normal"/> (also while an empirical configuration warms up) or
/// <see cref="IntervalKind.Empirical"/>.
/// </param>
/// <param name="Coverage">
/// The interval's nominal coverage, for example 0.8 (see <see cref="SeriesOptions.IntervalCoverage"/>); NaN on a point
/// made without series options.
/// </param>
/// <remarks>
/// An immutable value, 40 bytes (the kind fits in the padding after <paramref name="Horizon"/>; the coverage adds 8 bytes).
/// The nominal coverage is a target, not a measurement: the backtester reports the coverage achieved
/// (<c>HorizonAccuracy.Coverage</c> in StreamForecast.Selection).
/// </remarks>
[StructLayout(LayoutKind.Auto)] // lets the one-byte kind share the horizon's 8-byte slot: 40 bytes, not 48
public readonly record struct ForecastPoint(int Horizon, double Value, double Lower, double Upper, IntervalKind Kind = IntervalKind.Normal, double Coverage = double.NaN)
{
    /// <summary>Whether a forecast exists (the method is warm).</summary>
    public bool IsValid => !double.IsNaN(Value);
}
