using System.Runtime.CompilerServices;

namespace StreamForecast;

/// <summary>
/// The magnitudes the library accepts, stated once: every actual, event quantity, period total, weight and start
/// value must lie within ±<see cref="MaxMagnitude"/>. Inside that range no sum, product, square or division the
/// library computes can overflow, so no accepted value can leave a series non-finite or unable to take the next
/// normal value.
/// </summary>
/// <remarks>
/// <para><b>Why 10^15.</b> It is below 2^53 (about 9.007·10^15), so every whole quantity up to it is exact in a
/// double; its square (10^30) summed over 2^53 periods (about 9·10^45) and a window of a million such values
/// (10^21) stay far inside the double range (about 1.8·10^308), and so do the products of a value with a
/// weight or a seasonal index. Sales counts, money amounts in cents and sensor message counts all fit with room to
/// spare.</para>
/// <para><b>Where it is enforced.</b> <c>Forecaster.Update</c> and every options constructor throw
/// <see cref="ArgumentOutOfRangeException"/> naming the value and the limit; the engine refuses and counts an
/// observation whose quantity, or the total of its open period, would leave the range; the command-line tool
/// reports such a row as a data error with its file, line and column.</para>
/// <para><b>Thread safety.</b> Constants and pure functions only: thread-safe.</para>
/// </remarks>
public static class NumericDomain
{
    /// <summary>The largest magnitude an actual, quantity, period total, weight or start value may have: 10^15.</summary>
    public const double MaxMagnitude = 1e15;

    /// <summary>The smallest non-zero magnitude of a weight (10^-15), so that weight sums and ratios stay finite.</summary>
    public const double MinWeight = 1e-15;

    /// <summary>Whether <paramref name="value"/> is finite and within ±<see cref="MaxMagnitude"/>.</summary>
    /// <param name="value">The value to test.</param>
    /// <returns><see langword="true"/> when the library accepts the magnitude.</returns>
    /// <remarks>O(1), no allocation. NaN and infinities give <see langword="false"/>.</remarks>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static bool Contains(double value) => Math.Abs(value) <= MaxMagnitude;
}
