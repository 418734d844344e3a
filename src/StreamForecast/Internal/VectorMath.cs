using System.Numerics;
using System.Runtime.InteropServices;

namespace StreamForecast.Internal;

/// <summary>Small numeric kernels over spans, vectorised with <see cref="Vector{T}"/> where that pays.</summary>
internal static class VectorMath
{
    /// <summary>Σ a[i]·b[i] over equal-length spans. A plain loop for short spans, SIMD lanes for long ones.</summary>
    public static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        System.Diagnostics.Debug.Assert(a.Length == b.Length);
        int i = 0;
        double sum = 0;
        if (Vector.IsHardwareAccelerated && a.Length >= 4 * Vector<double>.Count)
        {
            var va = MemoryMarshal.Cast<double, Vector<double>>(a);
            var vb = MemoryMarshal.Cast<double, Vector<double>>(b);
            var acc0 = Vector<double>.Zero;
            var acc1 = Vector<double>.Zero;
            int v = 0;
            for (; v + 1 < va.Length; v += 2)
            {
                acc0 += va[v] * vb[v];
                acc1 += va[v + 1] * vb[v + 1];
            }

            for (; v < va.Length; v++)
            {
                acc0 += va[v] * vb[v];
            }

            sum = Vector.Sum(acc0 + acc1);
            i = va.Length * Vector<double>.Count;
        }

        for (; i < a.Length; i++)
        {
            sum += a[i] * b[i];
        }

        return sum;
    }
}
