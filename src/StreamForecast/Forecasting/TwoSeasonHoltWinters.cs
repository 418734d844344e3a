using System.Diagnostics.CodeAnalysis;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Holt-Winters with two seasonal cycles (double seasonal Holt-Winters) for one series. Create it from
/// <see cref="TwoSeasonHoltWintersOptions"/>.
/// </summary>
/// <remarks>
/// <para><b>Equations and start.</b> See <see cref="TwoSeasonHoltWintersOptions"/>. Warm after 2·m₂ actuals.</para>
/// <para><b>Multiplicative domain.</b> The same policy as <see cref="HoltWinters"/>: negative actuals are rejected; when
/// the trend would carry the level to zero or below, the step is taken without the trend; the level and every index are
/// held at or above 10^-30, so long runs of zeros cannot underflow them (a start window of zeros gives indices at that
/// floor instead of a refusal). An actual that would make any part of the state non-finite is rejected. Rejected actuals
/// leave the state exactly as it was.</para>
/// <para><b>Horizon variance.</b> The additive innovations form of the equations (from memory, as for
/// <see cref="HoltWinters"/>): 1 + Σ_{j=1}^{h−1} c_j², c_j = α + αβ·j + (1−α)δ·[m₁ divides j] + (1−α)ω·[m₂ divides j], in
/// O(1). The error adjustment is left out of the ratio, and the multiplicative form uses the same ratio as an
/// approximation.</para>
/// <para><b>Cost.</b> O(1) and allocation-free per update and forecast, except the one update that completes the start
/// window, which computes the start values and runs the second long cycle through the equations in O(m₂). Memory:
/// m₁ + 3·m₂ numbers per series, allocated at creation.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class TwoSeasonHoltWinters : Forecaster
{
    private const int StartCycles = 2;
    private readonly TwoSeasonHoltWintersOptions _options;
    private readonly bool _multiplicative;
    private readonly bool _hasTrend;
    private readonly double _alpha;
    private readonly double _beta;
    private readonly double _delta;
    private readonly double _omega;
    private readonly double _lambda;

    private readonly double[] _short;       // slot t mod m₁ holds the latest short-cycle index of that position
    private readonly double[] _long;        // slot t mod m₂ holds the latest long-cycle index of that position
    private readonly double[] _startWindow; // the first 2·m₂ actuals while warming up; zero afterwards
    private double _level;
    private double _trend;
    private double _error;                  // the last one-step error of the unadjusted forecast

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public TwoSeasonHoltWinters(TwoSeasonHoltWintersOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _multiplicative = options.Seasonality == Seasonality.Multiplicative;
        _hasTrend = options.TrendWeight.HasValue;
        _alpha = options.LevelWeight;
        _beta = options.TrendWeight ?? 0;
        _delta = options.ShortCycleWeight;
        _omega = options.LongCycleWeight;
        _lambda = options.ErrorAdjustment;
        _short = new double[options.ShortCycle];
        _long = new double[options.LongCycle];
        _startWindow = new double[StartCycles * options.LongCycle];
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => Count >= _startWindow.Length;

    private protected override void UpdateCore(double actual)
    {
        if (_multiplicative && actual < 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(actual), actual, "multiplicative seasonality needs actuals of 0 or more; the state is unchanged");
        }

        long seen = Count;
        if (seen >= _startWindow.Length)
        {
            int i = (int)(seen % _short.Length), j = (int)(seen % _long.Length);
            if (!TryStep(ref _level, ref _trend, ref _short[i], ref _long[j], actual, out double error))
            {
                ThrowRejected(actual);
            }

            _error = error;
            return;
        }

        int t = (int)seen;
        _startWindow[t] = actual;
        if (t + 1 < _startWindow.Length)
        {
            return;
        }

        if (!TryStart())
        {
            _startWindow[t] = 0;
            _level = _trend = _error = 0;
            Array.Clear(_short);
            Array.Clear(_long);
            ThrowRejected(actual);
        }

        Array.Clear(_startWindow);
    }

    /// <summary>Computes the start values (see the options' remarks) and runs the second long cycle through the equations.</summary>
    private bool TryStart()
    {
        int m1 = _short.Length, m2 = _long.Length;
        Span<double> cycleMeans = stackalloc double[StartCycles];

        // The one-cycle start with season m₂ leaves a combined index per long-cycle position in _long.
        SeasonalStartValues.Compute(_startWindow, m2, _multiplicative, cycleMeans, _long, out double level, out double trend);
        Array.Clear(_short);
        for (int j = 0; j < m2; j++)
        {
            _short[j % m1] += _long[j];
        }

        for (int i = 0; i < m1; i++)
        {
            int positions = ((m2 - 1 - i) / m1) + 1; // the j < m₂ with j mod m₁ = i
            _short[i] /= positions;
            if (_multiplicative)
            {
                _short[i] = Math.Max(_short[i], HoltWinters.MultiplicativeFloor);
            }
        }

        for (int j = 0; j < m2; j++)
        {
            double d = _short[j % m1];
            _long[j] = _multiplicative ? Math.Max(_long[j] / d, HoltWinters.MultiplicativeFloor) : _long[j] - d;
        }

        _level = _multiplicative ? Math.Max(level, HoltWinters.MultiplicativeFloor) : level;
        _trend = _hasTrend ? trend : 0;
        _error = 0;
        for (int t = m2; t < _startWindow.Length; t++)
        {
            if (!TryStep(ref _level, ref _trend, ref _short[t % m1], ref _long[t % m2], _startWindow[t], out _error))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>
    /// One period of the equations. Writes the new level, trend and the two indices of this period's positions only when
    /// every one of them, and the one-step error, is finite; otherwise changes nothing and returns false.
    /// </summary>
    private bool TryStep(ref double level, ref double trend, ref double shortIndex, ref double longIndex, double actual, out double error)
    {
        double d = shortIndex, w = longIndex, oldLevel = level, oldTrend = trend;
        double newLevel, newTrend, newShort, newLong;
        if (_multiplicative)
        {
            error = actual - ((oldLevel + oldTrend) * d * w);
            double deseasonalised = actual / (d * w);
            newLevel = (_alpha * deseasonalised) + ((1.0 - _alpha) * (oldLevel + oldTrend));
            if (!(newLevel > 0))
            {
                // As in HoltWinters: the trend would carry the level to zero or below; take this step without it.
                oldTrend = 0;
                newLevel = (_alpha * deseasonalised) + ((1.0 - _alpha) * oldLevel);
            }

            newLevel = Math.Max(newLevel, HoltWinters.MultiplicativeFloor);
            newShort = Math.Max((_delta * (actual / (newLevel * w))) + ((1.0 - _delta) * d), HoltWinters.MultiplicativeFloor);
            newLong = Math.Max((_omega * (actual / (newLevel * d))) + ((1.0 - _omega) * w), HoltWinters.MultiplicativeFloor);
        }
        else
        {
            error = actual - (oldLevel + oldTrend + d + w);
            newLevel = (_alpha * (actual - d - w)) + ((1.0 - _alpha) * (oldLevel + oldTrend));
            newShort = (_delta * (actual - newLevel - w)) + ((1.0 - _delta) * d);
            newLong = (_omega * (actual - newLevel - d)) + ((1.0 - _omega) * w);
        }

        newTrend = _hasTrend ? (_beta * (newLevel - oldLevel)) + ((1.0 - _beta) * oldTrend) : 0;
        if (!(double.IsFinite(newLevel) && double.IsFinite(newTrend) && double.IsFinite(newShort) && double.IsFinite(newLong) && double.IsFinite(error)))
        {
            return false;
        }

        level = newLevel;
        trend = newTrend;
        shortIndex = newShort;
        longIndex = newLong;
        return true;
    }

    private protected override double ForecastCore(int horizon)
    {
        long position = Count + horizon - 1;
        double d = _short[(int)(position % _short.Length)];
        double w = _long[(int)(position % _long.Length)];
        double trendPart = _level + (horizon * _trend);
        double forecast = _multiplicative ? trendPart * d * w : trendPart + d + w;
        return _lambda == 0 ? forecast : forecast + (Math.Pow(_lambda, horizon) * _error);
    }

    private protected override double HorizonVarianceRatioCore(int horizon)
    {
        int m1 = _short.Length, m2 = _long.Length;
        double trendWeight = _alpha * _beta, shortWeight = (1.0 - _alpha) * _delta, longWeight = (1.0 - _alpha) * _omega;
        double ratio = SmoothingMath.HorizonVarianceRatio(_alpha, trendWeight, shortWeight, 1.0, m1, horizon);
        if (longWeight == 0)
        {
            return ratio;
        }

        // The long cycle adds, at every j = k·m₂ ≤ h − 1, (c_j + g₂)² − c_j² = 2·g₂·c_j + g₂², where c_j without it is
        // α + β·k·m₂ + g₁·[m₁ divides k·m₂]; m₁ divides k·m₂ for every k that is a multiple of m₁/gcd(m₁, m₂).
        long cycles = (horizon - 1L) / m2;
        long withShort = cycles / (m1 / GreatestCommonDivisor(m1, m2));
        double sumK = cycles * (cycles + 1) / 2.0;
        ratio += (2 * longWeight * ((cycles * _alpha) + (trendWeight * m2 * sumK) + (withShort * shortWeight))) + (cycles * longWeight * longWeight);
        return ratio;
    }

    private static int GreatestCommonDivisor(int a, int b)
    {
        while (b != 0)
        {
            (a, b) = (b, a % b);
        }

        return a;
    }

    private protected override void ResetCore()
    {
        _level = _trend = _error = 0;
        Array.Clear(_short);
        Array.Clear(_long);
        Array.Clear(_startWindow);
    }

    // Layout: level, trend, last error, m₁ short-cycle slots, m₂ long-cycle slots, 2·m₂ start-window slots.
    private protected override int CoreStateLength => 3 + _short.Length + _long.Length + _startWindow.Length;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _level;
        destination[1] = _trend;
        destination[2] = _error;
        _short.CopyTo(destination.Slice(3, _short.Length));
        _long.CopyTo(destination.Slice(3 + _short.Length, _long.Length));
        _startWindow.CopyTo(destination[(3 + _short.Length + _long.Length)..]);
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        ReadOnlySpan<double> indices = state.Slice(3, _short.Length + _long.Length);
        ReadOnlySpan<double> window = state[(3 + indices.Length)..];
        if (count < window.Length)
        {
            int filled = (int)count;
            if (state[..3].IndexOfAnyExcept(0.0) >= 0 || indices.IndexOfAnyExcept(0.0) >= 0 || window[filled..].IndexOfAnyExcept(0.0) >= 0)
            {
                return "while warming up only the start-window slots already filled may be non-zero";
            }

            return _multiplicative && window[..filled].IndexOfAnyExceptInRange(0.0, double.MaxValue) >= 0
                ? "multiplicative seasonality needs actuals of 0 or more"
                : null;
        }

        if (window.IndexOfAnyExcept(0.0) >= 0)
        {
            return "the start window must be zero once the forecaster is warm";
        }

        if (!_hasTrend && state[1] != 0)
        {
            return "without a trend component the trend must be zero";
        }

        if (_multiplicative && (!(state[0] >= HoltWinters.MultiplicativeFloor) || indices.IndexOfAnyExceptInRange(HoltWinters.MultiplicativeFloor, double.MaxValue) >= 0))
        {
            return "multiplicative seasonality needs a positive level and positive indices (at least 1e-30)";
        }

        return null;
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _level = state[0];
        _trend = state[1];
        _error = state[2];
        state.Slice(3, _short.Length).CopyTo(_short);
        state.Slice(3 + _short.Length, _long.Length).CopyTo(_long);
        state[(3 + _short.Length + _long.Length)..].CopyTo(_startWindow);
    }

    [DoesNotReturn]
    private static void ThrowRejected(double actual) => ThrowHelper.ThrowOutOfRange(nameof(actual), actual,
        "with this actual the level, trend, a seasonal index or the one-step error would overflow; the state is unchanged");
}
