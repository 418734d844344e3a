using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace StreamForecast.Periods;

/// <summary>Integer helpers shared by the calendars.</summary>
internal static class PeriodMath
{
    /// <summary>The Unix epoch, 1970-01-01T00:00:00Z, in <see cref="DateTime"/> ticks.</summary>
    public const long UnixEpochTicks = 621_355_968_000_000_000;

    /// <summary>⌊<paramref name="dividend"/> / <paramref name="divisor"/>⌋ for a positive divisor (rounds toward −∞).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static long FloorDiv(long dividend, long divisor)
    {
        Debug.Assert(divisor > 0);
        long quotient = dividend / divisor;
        return (dividend % divisor) < 0 ? quotient - 1 : quotient;
    }
}
