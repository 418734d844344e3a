using System.Collections.Immutable;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>The weighted moving-average forecast of one series. Create it from <see cref="WeightedMovingAverageOptions"/>.</summary>
/// <remarks>
/// <para><b>Cost.</b> Linearly decaying weights (n, n−1, …, 1): O(1) per update. With S the window sum and W the
/// weighted sum, a new actual x gives W ← W − S + n·x (every weight drops by one; the oldest reaches zero) and
/// S ← S + x − oldest, both compensated (Neumaier) and re-seeded from the window once per n updates, so the
/// error is bounded by one window's rounding however long the series runs. Other weights: one O(n) dot product per
/// update, vectorised for long windows. Allocation-free after creation.</para>
/// <para><b>Warm-up.</b> Warm after n actuals. <b>Horizon:</b> flat forecast, error variance ratio 1.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class WeightedMovingAverage : Forecaster
{
    private readonly WeightedMovingAverageOptions _options;
    private readonly double[] _chronologicalWeights; // oldest first
    private readonly double _weightSum;
    private readonly bool _linear;
    private RingWindow _window;
    private CompensatedSum _sum;      // linear path: S
    private CompensatedSum _weighted; // linear path: W with integer weights 1 (oldest) … n (newest)
    private double _forecast;         // arbitrary path: cached once warm
    private double _peak;             // linear path: the largest |actual| in the window at the last re-seed or pushed since (bounds the sums' rounding)

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public WeightedMovingAverage(WeightedMovingAverageOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        int n = options.Length;
        _window = new RingWindow(n);
        _linear = options.IsLinear;
        _chronologicalWeights = new double[n];
        double total = 0;
        for (int i = 0; i < n; i++)
        {
            _chronologicalWeights[i] = options.Weights[n - 1 - i];
            total += options.Weights[i];
        }

        _weightSum = _linear ? n * (n + 1) / 2.0 : total;
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => _window.IsFull;

    private protected override void UpdateCore(double actual)
    {
        if (_linear)
        {
            double previousSum = _sum.Value;
            _peak = Math.Max(_peak, Math.Abs(actual));
            double evicted = _window.Push(actual);
            if (_window.NextIndex == 0)
            {
                Reseed();
            }
            else
            {
                _weighted.Add(-previousSum);
                _weighted.Add(_window.Length * actual);
                _sum.Add(actual);
                _sum.Add(-evicted);
            }
        }
        else
        {
            _window.Push(actual);
            if (_window.IsFull)
            {
                _forecast = WeightedSum(_window, _chronologicalWeights) / _weightSum;
            }
        }
    }

    private protected override double ForecastCore(int horizon) => _linear ? _weighted.Value / _weightSum : _forecast;

    private protected override double HorizonVarianceRatioCore(int horizon) => 1.0;

    private protected override void ResetCore()
    {
        _window.Clear();
        _sum = default;
        _weighted = default;
        _forecast = 0;
        _peak = 0;
    }

    // Layout: raw ring (n); linear path adds S (2 numbers), W (2 numbers) and the peak magnitude that bounds their rounding.
    private protected override int CoreStateLength => _window.Length + (_linear ? 5 : 0);

    private protected override void ExportCore(Span<double> destination)
    {
        int n = _window.Length;
        _window.CopyRawTo(destination);
        if (_linear)
        {
            _sum.CopyTo(destination.Slice(n, 2));
            _weighted.CopyTo(destination.Slice(n + 2, 2));
            destination[n + 4] = _peak;
        }
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        int n = _window.Length;
        ReadOnlySpan<double> raw = state[..n];
        if (!RingWindow.RawFits(raw, count))
        {
            return "slots not yet filled must be zero";
        }

        if (!_linear)
        {
            return null;
        }

        double peak = state[n + 4];
        double windowPeak = 0;
        foreach (double x in raw)
        {
            windowPeak = Math.Max(windowPeak, Math.Abs(x));
        }

        if (!(peak >= windowPeak && peak <= NumericDomain.MaxMagnitude))
        {
            return "the peak magnitude must be at least the largest value in the window and inside NumericDomain.MaxMagnitude";
        }

        var probe = new RingWindow(n);
        probe.LoadRaw(raw, count);
        ReadOnlySpan<double> sums = state.Slice(n, 4);
        if (!CompensatedSum.Agrees(sums[..2], raw, 2 * n, peak))
        {
            return "the running sum does not match the window";
        }

        // W moves by −S + n·x per update, and each of those terms is rounded once (the value of S, the product n·x):
        // at most 2u·n·peak per update over at most n updates since the last re-seed, so 2u·n²·peak; the compensated
        // accumulation and the fresh recomputation each add about 2u·|W|. The allowance doubles both.
        double weighted = LinearWeightedSum(probe);
        double stored = sums[2] + sums[3];
        double allowed = (4 * CompensatedSum.UnitRoundoff * (Math.Abs(stored) + Math.Abs(weighted)))
            + (4 * CompensatedSum.UnitRoundoff * n * (double)n * peak);
        return Math.Abs(stored - weighted) <= allowed ? null : "the weighted running sum does not match the window";
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        int n = _window.Length;
        _window.LoadRaw(state[..n], count);
        if (_linear)
        {
            _sum.LoadFrom(state.Slice(n, 2));
            _weighted.LoadFrom(state.Slice(n + 2, 2));
            _peak = state[n + 4];
        }
        else
        {
            _forecast = _window.IsFull ? WeightedSum(_window, _chronologicalWeights) / _weightSum : 0;
        }
    }

    private void Reseed()
    {
        _sum.Reset(_window.Raw);
        _peak = 0;
        foreach (double x in _window.Raw)
        {
            _peak = Math.Max(_peak, Math.Abs(x));
        }

        _weighted = default;
        ReadOnlySpan<double> older = _window.Older;
        ReadOnlySpan<double> newer = _window.Newer;
        int k = 1;
        for (int i = 0; i < older.Length; i++, k++)
        {
            _weighted.Add(k * older[i]);
        }

        for (int i = 0; i < newer.Length; i++, k++)
        {
            _weighted.Add(k * newer[i]);
        }
    }

    private static double LinearWeightedSum(RingWindow window)
    {
        var sum = default(CompensatedSum);
        int k = window.Length - window.Filled + 1; // while filling, the oldest value has weight n − filled + 1
        foreach (double x in window.Older)
        {
            sum.Add(k++ * x);
        }

        foreach (double x in window.Newer)
        {
            sum.Add(k++ * x);
        }

        return sum.Value;
    }

    private static double WeightedSum(RingWindow window, double[] chronologicalWeights)
    {
        ReadOnlySpan<double> older = window.Older;
        ReadOnlySpan<double> weights = chronologicalWeights;
        return VectorMath.Dot(older, weights[..older.Length]) + VectorMath.Dot(window.Newer, weights[older.Length..]);
    }
}
