using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace StreamForecast.Internal;

/// <summary>
/// A running sum with Neumaier (improved Kahan–Babuška) compensation, so that adding and removing terms
/// over a sliding window does not drift. Owners re-seed it from the window once per window length
/// (see <see cref="Reset(ReadOnlySpan{double})"/>), which bounds the error by the rounding of one
/// window's worth of compensated operations, independent of how long the series runs.
/// </summary>
internal struct CompensatedSum
{
    private double _sum;
    private double _compensation;

    /// <summary>The compensated value of the sum.</summary>
    public readonly double Value
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => _sum + _compensation;
    }

    /// <summary>Adds a term.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Add(double x)
    {
        double t = _sum + x;
        if (Math.Abs(_sum) >= Math.Abs(x))
        {
            _compensation += (_sum - t) + x;
        }
        else
        {
            _compensation += (x - t) + _sum;
        }

        _sum = t;
    }

    /// <summary>Sets the sum to the compensated sum of <paramref name="terms"/>.</summary>
    public void Reset(ReadOnlySpan<double> terms)
    {
        _sum = 0;
        _compensation = 0;
        for (int i = 0; i < terms.Length; i++)
        {
            Add(terms[i]);
        }
    }

    /// <summary>Sets the sum to one value with no pending compensation.</summary>
    public void Set(double value)
    {
        Debug.Assert(double.IsFinite(value));
        _sum = value;
        _compensation = 0;
    }

    /// <summary>Writes the two parts of the sum (for an exact snapshot).</summary>
    public readonly void CopyTo(Span<double> destination)
    {
        destination[0] = _sum;
        destination[1] = _compensation;
    }

    /// <summary>Reads the two parts written by <see cref="CopyTo"/>.</summary>
    public void LoadFrom(ReadOnlySpan<double> source)
    {
        _sum = source[0];
        _compensation = source[1];
    }

    /// <summary>The unit roundoff of a double, u = 2^-53.</summary>
    public const double UnitRoundoff = 1.1102230246251565e-16;

    /// <summary>
    /// Whether two exported parts agree with a fresh sum of <paramref name="terms"/> to within the rounding a rolling
    /// sum can accumulate, so a corrupted snapshot is caught at import while every reachable state is accepted.
    /// </summary>
    /// <param name="parts">The two exported parts.</param>
    /// <param name="terms">The terms the sum should now hold (the window).</param>
    /// <param name="operations">The most additions and removals the rolling sum can have made since it was last re-seeded.</param>
    /// <param name="termBound">A bound on the magnitude of every term added or removed since then (also those no longer in the window).</param>
    /// <remarks>
    /// Neumaier summation of k terms has |computed − exact| ≤ 2u·|exact| + c·k·u²·Σ|xᵢ| (Higham, <i>Accuracy and
    /// Stability of Numerical Algorithms</i>, 2nd ed., §4.3, from memory); both the stored and the fresh sum carry such an
    /// error and reading the two parts as one number rounds once more, so the check allows
    /// 4u·(|stored| + |fresh|) + 8·k·u²·(Σ|window| + k·bound). A sum that rolled back to exactly zero terms
    /// (a window of zeros after non-zero values) may keep a residue of that size; the check accepts it.
    /// </remarks>
    public static bool Agrees(ReadOnlySpan<double> parts, ReadOnlySpan<double> terms, int operations, double termBound)
    {
        var fresh = default(CompensatedSum);
        double magnitude = 0;
        for (int i = 0; i < terms.Length; i++)
        {
            fresh.Add(terms[i]);
            magnitude += Math.Abs(terms[i]);
        }

        double stored = parts[0] + parts[1];
        double k = operations + terms.Length;
        double allowed = (4 * UnitRoundoff * (Math.Abs(stored) + Math.Abs(fresh.Value)))
            + (8 * k * UnitRoundoff * UnitRoundoff * (magnitude + (k * termBound)));
        return Math.Abs(stored - fresh.Value) <= allowed;
    }
}
