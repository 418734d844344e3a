namespace StreamForecast.Internal;

/// <summary>Checks on counts stored as doubles in exported states.</summary>
internal static class WholeNumbers
{
    /// <summary>2^53: every whole number up to it is exact in a double, so an exported count never exceeds it.</summary>
    internal const double MaxExact = 9_007_199_254_740_992;

    /// <summary>Whether <paramref name="value"/> is a whole number in [0, <paramref name="max"/>] (false for NaN).</summary>
    internal static bool IsWhole(double value, double max) => value >= 0 && value <= max && value == Math.Floor(value);

    /// <summary>Whether <paramref name="value"/> is a whole number in [0, 2^53].</summary>
    internal static bool IsCount(double value) => IsWhole(value, MaxExact);
}
