using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace StreamForecast.Internal;

/// <summary>
/// The last m values pushed, kept only to read the value m pushes back (a lag-m difference such as the MASE scale's
/// |y(t) − y(t−m)|). The owner counts the pushes and passes the count in, so the window stores no position of its own.
/// For m = 1 (the default, and by far the most common) the one value is held inline: no array is allocated.
/// </summary>
/// <remarks>
/// The raw layout is the same as <see cref="RingWindow"/>'s after the same pushes: push number k (from 0) goes to
/// slot k mod m, and slots not yet written are zero. Exported states are therefore interchangeable.
/// </remarks>
internal struct LagWindow
{
    private readonly double[]? _ring; // m > 1: slot k mod m holds push k
    private double _single;           // m = 1: the last value pushed

    public LagWindow(int length)
    {
        Debug.Assert(length >= 1);
        _ring = length > 1 ? new double[length] : null;
    }

    /// <summary>The lag m.</summary>
    public readonly int Length => _ring is null ? 1 : _ring.Length;

    /// <summary>The value pushed m pushes before the next one, after <paramref name="count"/> pushes (count ≥ m).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public readonly double Lagged(long count)
    {
        Debug.Assert(count >= Length);
        return _ring is null ? _single : _ring[(int)(count % _ring.Length)];
    }

    /// <summary>The value of the newest push, after <paramref name="count"/> pushes (count ≥ 1).</summary>
    public readonly double Newest(long count)
    {
        Debug.Assert(count >= 1);
        return _ring is null ? _single : _ring[(int)((count - 1) % _ring.Length)];
    }

    /// <summary>Pushes <paramref name="value"/> as push number <paramref name="count"/> (the number of earlier pushes).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Push(double value, long count)
    {
        Debug.Assert(count >= 0);
        if (_ring is null)
        {
            _single = value;
        }
        else
        {
            _ring[(int)(count % _ring.Length)] = value;
        }
    }

    public void Clear()
    {
        if (_ring is null)
        {
            _single = 0;
        }
        else
        {
            Array.Clear(_ring);
        }
    }

    /// <summary>Writes the raw slots (ring order, <see cref="Length"/> numbers).</summary>
    public readonly void CopyRawTo(Span<double> destination)
    {
        if (_ring is null)
        {
            destination[0] = _single;
        }
        else
        {
            _ring.CopyTo(destination);
        }
    }

    /// <summary>Loads raw slots written by <see cref="CopyRawTo"/> (or by a <see cref="RingWindow"/> of the same length).</summary>
    public void LoadRaw(ReadOnlySpan<double> raw)
    {
        Debug.Assert(raw.Length == Length);
        if (_ring is null)
        {
            _single = raw[0];
        }
        else
        {
            raw.CopyTo(_ring);
        }
    }
}
