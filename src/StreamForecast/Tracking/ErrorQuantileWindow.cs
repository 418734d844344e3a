using System.Diagnostics;
using System.Globalization;

namespace StreamForecast.Tracking;

/// <summary>
/// The last n errors of one horizon, kept both in arrival order (a ring) and sorted, so that any quantile of the window
/// is an exact order statistic (Hyndman &amp; Fan 1996, definition 6; see <see cref="EmpiricalIntervalOptions"/>).
/// </summary>
/// <remarks>
/// O(capacity) per <see cref="Add"/> (binary search plus one block move to remove the oldest and one to insert the
/// newest), O(1) per <see cref="Quantile"/>; two arrays of the capacity, allocated once. Not thread-safe.
/// </remarks>
internal sealed class ErrorQuantileWindow
{
    private readonly double[] _ring;   // arrival order: the oldest at _start
    private readonly double[] _sorted; // the same values ascending, in [0, _count)
    private int _start;
    private int _count;

    public ErrorQuantileWindow(int capacity)
    {
        Debug.Assert(capacity > 0);
        _ring = new double[capacity];
        _sorted = new double[capacity];
    }

    public int Capacity => _ring.Length;

    public int Count => _count;

    /// <summary>The newest error; only when <see cref="Count"/> is above 0.</summary>
    public double Newest => _ring[(_start + _count - 1) % _ring.Length];

    /// <summary>Adds a finite error, dropping the oldest when the window is full.</summary>
    public void Add(double error)
    {
        Debug.Assert(double.IsFinite(error));
        error += 0.0; // −0 becomes +0, so that the sorted copy re-derived on import matches bit for bit
        int capacity = _ring.Length;
        if (_count == capacity)
        {
            double oldest = _ring[_start];
            int at = Array.BinarySearch(_sorted, 0, _count, oldest);
            Debug.Assert(at >= 0);
            Array.Copy(_sorted, at + 1, _sorted, at, _count - at - 1);
            _count--;
            _ring[_start] = error;
            _start = (_start + 1) % capacity;
        }
        else
        {
            _ring[(_start + _count) % capacity] = error;
        }

        int insert = Array.BinarySearch(_sorted, 0, _count, error);
        if (insert < 0)
        {
            insert = ~insert;
        }

        Array.Copy(_sorted, insert, _sorted, insert + 1, _count - insert);
        _sorted[insert] = error;
        _count++;
    }

    /// <summary>
    /// The p-quantile by Hyndman &amp; Fan's definition 6: rank r = (n + 1)·p, x₁ below rank 1, xₙ above rank n, and
    /// linear interpolation between x⌊r⌋ and x⌊r⌋₊₁ otherwise. Only when <see cref="Count"/> is above 0.
    /// </summary>
    public double Quantile(double p)
    {
        Debug.Assert(_count > 0 && p >= 0 && p <= 1);
        double rank = (_count + 1) * p;
        if (rank <= 1)
        {
            return _sorted[0];
        }

        if (rank >= _count)
        {
            return _sorted[_count - 1];
        }

        int below = (int)Math.Floor(rank); // 1-based rank of the lower neighbour
        double fraction = rank - below;
        double lower = _sorted[below - 1];
        double upper = _sorted[below];
        return fraction == 0 ? lower : lower + (fraction * (upper - lower));
    }

    /// <summary>
    /// The empirical interval around <paramref name="forecast"/>: forecast + q(a/2), forecast + q(1 − a/2). Only when
    /// <see cref="Count"/> is above 0. The one formula every host uses (the live step and the backtester).
    /// </summary>
    public PredictionInterval IntervalAround(double forecast, EmpiricalIntervalOptions options) =>
        new(forecast + Quantile(options.LowerProbability), forecast + Quantile(options.UpperProbability));

    public void Reset()
    {
        _start = 0;
        _count = 0;
        Array.Clear(_ring);
        Array.Clear(_sorted);
    }

    /// <summary>Writes the count then the errors oldest first, padded with zeros: 1 + capacity numbers.</summary>
    public void Export(Span<double> destination)
    {
        Debug.Assert(destination.Length == 1 + _ring.Length);
        destination.Clear();
        destination[0] = _count;
        for (int i = 0; i < _count; i++)
        {
            destination[1 + i] = _ring[(_start + i) % _ring.Length];
        }
    }

    /// <summary>Why <paramref name="state"/> (as <see cref="Export"/> writes it) cannot be imported, or null.</summary>
    public static string? Validate(ReadOnlySpan<double> state, int capacity, string what)
    {
        if (state.Length != 1 + capacity)
        {
            return Invariant($"{what}: expected {1 + capacity} numbers");
        }

        double count = state[0];
        if (!(count >= 0 && count <= capacity) || count != Math.Floor(count))
        {
            return Invariant($"{what}: the error count {count} is not a whole number between 0 and the window length {capacity}");
        }

        for (int i = 1; i <= capacity; i++)
        {
            double v = state[i];
            if (i <= count ? !double.IsFinite(v) || BitConverter.DoubleToInt64Bits(v) == long.MinValue : BitConverter.DoubleToInt64Bits(v) != 0)
            {
                return Invariant($"{what}: value {i} is {v}; the errors are finite (a zero is stored as +0) and the unused places are +0");
            }
        }

        return null;
    }

    /// <summary>Reads a state that <see cref="Validate"/> accepted; the sorted copy is re-derived, not read.</summary>
    public void Import(ReadOnlySpan<double> state)
    {
        Reset();
        int count = (int)state[0];
        for (int i = 0; i < count; i++)
        {
            Add(state[1 + i]);
        }
    }

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
