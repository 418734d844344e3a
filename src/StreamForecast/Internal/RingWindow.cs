using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace StreamForecast.Internal;

/// <summary>
/// A fixed-length window over the most recent actuals, stored as a ring. The write position is derived from
/// the number of values pushed (<c>count mod length</c>), so the state is the raw buffer plus the count.
/// </summary>
internal struct RingWindow
{
    private readonly double[] _buffer;
    private int _next;
    private int _filled;

    public RingWindow(int length)
    {
        Debug.Assert(length >= 1);
        _buffer = new double[length];
    }

    public readonly int Length => _buffer.Length;

    public readonly int Filled => _filled;

    public readonly bool IsFull => _filled == _buffer.Length;

    /// <summary>The slot that the next push writes, which holds the oldest value once the window is full.</summary>
    public readonly int NextIndex => _next;

    /// <summary>The raw buffer, in ring order (not chronological).</summary>
    public readonly ReadOnlySpan<double> Raw => _buffer;

    /// <summary>Writes <paramref name="value"/> over the oldest slot and returns what it replaced (0 while filling).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Push(double value)
    {
        int i = _next;
        double evicted = _buffer[i];
        _buffer[i] = value;
        i++;
        _next = i == _buffer.Length ? 0 : i;
        if (_filled < _buffer.Length)
        {
            _filled++;
            evicted = 0;
        }

        return evicted;
    }

    /// <summary>The value pushed <paramref name="age"/> pushes ago (0 = the newest).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public readonly double Recent(int age)
    {
        Debug.Assert(age >= 0 && age < _filled);
        int i = _next - 1 - age;
        if (i < 0)
        {
            i += _buffer.Length;
        }

        return _buffer[i];
    }

    /// <summary>The oldest part of the window (ring order) followed by <see cref="Newer"/> gives chronological order.</summary>
    public readonly ReadOnlySpan<double> Older => IsFull ? _buffer.AsSpan(_next) : ReadOnlySpan<double>.Empty;

    /// <summary>The newer part of the window; see <see cref="Older"/>.</summary>
    public readonly ReadOnlySpan<double> Newer => _buffer.AsSpan(0, IsFull ? _next : _filled);

    public void Clear()
    {
        Array.Clear(_buffer);
        _next = 0;
        _filled = 0;
    }

    public readonly void CopyRawTo(Span<double> destination) => _buffer.CopyTo(destination);

    /// <summary>Loads a raw buffer exported by <see cref="CopyRawTo"/> after <paramref name="count"/> pushes.</summary>
    public void LoadRaw(ReadOnlySpan<double> raw, long count)
    {
        Debug.Assert(raw.Length == _buffer.Length && count >= 0);
        raw.CopyTo(_buffer);
        _next = (int)(count % _buffer.Length);
        _filled = (int)Math.Min(count, _buffer.Length);
    }

    /// <summary>Whether a raw buffer could come from <paramref name="count"/> pushes (unfilled slots are zero).</summary>
    public static bool RawFits(ReadOnlySpan<double> raw, long count)
    {
        for (long i = count; i < raw.Length; i++)
        {
            if (raw[(int)i] != 0)
            {
                return false;
            }
        }

        return true;
    }
}
