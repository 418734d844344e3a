namespace StreamForecast.Tests.Infrastructure;

/// <summary>Bit-for-bit comparison of doubles (−0 differs from 0, NaN payloads count).</summary>
public static class Bits
{
    /// <summary>Whether both spans hold the same bit patterns.</summary>
    public static bool Same(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        if (a.Length != b.Length)
        {
            return false;
        }

        for (int i = 0; i < a.Length; i++)
        {
            if (BitConverter.DoubleToInt64Bits(a[i]) != BitConverter.DoubleToInt64Bits(b[i]))
            {
                return false;
            }
        }

        return true;
    }
}
