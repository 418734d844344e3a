using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>The Holt-Winters seasonal method for one series. Create it from <see cref="HoltWintersOptions"/>.</summary>
/// <remarks>
/// <para><b>Equations and start.</b> See <see cref="HoltWintersOptions"/>. Warm after c·m actuals (c =
/// <see cref="HoltWintersOptions.StartSeasons"/>, 2 by default).</para>
/// <para><b>Multiplicative domain.</b> Negative actuals are rejected. When the trend would carry the level to zero or
/// below (a steep fall), the step is taken without the trend (ℓ = α·y/s + (1−α)·ℓ, and the trend restarts from that
/// change), so the level stays positive and the series keeps taking actuals; published check values never reach this
/// case. The level and the indices are held at or above 10^-30 (far below any meaningful value), so a long run of
/// zeros or a tiny actual cannot underflow them to zero; with actuals inside <see cref="NumericDomain"/> every ratio
/// then stays finite. In the
/// start window a zero is rejected when it would leave a start season with mean zero (the last actual of an
/// all-zero season) or a start index of zero (a zero in the last start season at a position that was zero in every
/// earlier start season), and the actual that completes the window is rejected when running the start seasons
/// through the equations would make the level or an index non-positive. Rejected actuals leave the state exactly as
/// it was.</para>
/// <para><b>Horizon variance.</b> Additive: the ETS(A,A,A) / ETS(A,Ad,A) class-1 formula (Hyndman, Koehler, Ord
/// &amp; Snyder 2008, from memory): σ²·[1 + Σ_{j=1}^{h−1} c_j²], c_j = α + β_ETS·(φ + … + φʲ) + γ_ETS·[m divides j],
/// with β_ETS = α × trend weight and γ_ETS = (1−α) × seasonal weight (Winters' seasonal equation rewritten in
/// innovations form). Undamped it is 1 + (h−1)[α² + α·β_ETS·h + β_ETS²·h(2h−1)/6] + γ_ETS·k[2α + γ_ETS +
/// β_ETS·m(k+1)], k = ⌊(h−1)/m⌋, O(1); damped it is summed in O(min(h, 40/(1−φ))). Multiplicative: the same
/// additive formula, as an approximation (the exact variance of the multiplicative model depends on the state and
/// on which seasons the horizon crosses).</para>
/// <para><b>Cost.</b> O(1) and allocation-free per update and forecast, except the one update that completes the
/// start window, which computes the start values and runs seasons 2 … c through the equations in O(c·m). Memory:
/// m + c·m numbers per series, allocated at creation.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class HoltWinters : Forecaster
{
    private readonly HoltWintersOptions _options;
    private readonly int _seasonLength;
    private readonly int _startSeasons;
    private readonly bool _multiplicative;
    private readonly double _alpha;
    private readonly double _oneMinusAlpha;
    private readonly double _beta;
    private readonly double _oneMinusBeta;
    private readonly double _gamma;
    private readonly double _oneMinusGamma;
    private readonly double _phi;
    /// <summary>The smallest level and seasonal index multiplicative seasonality holds (see the remarks).</summary>
    internal const double MultiplicativeFloor = 1e-30;

    private readonly double[] _seasonal;    // slot t mod m holds the latest index of that season position
    private readonly double[] _startWindow; // the first c·m actuals while warming up; zero afterwards
    private double _level;
    private double _trend;

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public HoltWinters(HoltWintersOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _seasonLength = options.SeasonLength;
        _startSeasons = options.StartSeasons;
        _multiplicative = options.Seasonality == Seasonality.Multiplicative;
        _alpha = options.LevelWeight;
        _oneMinusAlpha = 1.0 - options.LevelWeight;
        _beta = options.TrendWeight;
        _oneMinusBeta = 1.0 - options.TrendWeight;
        _gamma = options.SeasonalWeight;
        _oneMinusGamma = 1.0 - options.SeasonalWeight;
        _phi = options.Damping;
        _seasonal = new double[_seasonLength];
        _startWindow = new double[_seasonLength * _startSeasons];
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => Count >= _startWindow.Length;

    /// <summary>The current level ℓ(t).</summary>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet.</exception>
    public double Level
    {
        get
        {
            ThrowIfCold();
            return _level;
        }
    }

    /// <summary>The current trend b(t) per period, before damping.</summary>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet.</exception>
    public double Trend
    {
        get
        {
            ThrowIfCold();
            return _trend;
        }
    }

    /// <summary>The seasonal index the forecast for <paramref name="horizon"/> periods ahead uses, s(t+h−m(k+1)).</summary>
    /// <param name="horizon">Periods ahead, 1 or more.</param>
    /// <returns>An additive effect or a multiplicative factor.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is less than 1.</exception>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet.</exception>
    public double SeasonalIndex(int horizon)
    {
        ThrowHelper.CheckHorizon(horizon);
        ThrowIfCold();
        return _seasonal[Slot(horizon)];
    }

    private protected override void UpdateCore(double actual)
    {
        if (_multiplicative && actual < 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(actual), actual, "multiplicative seasonality needs actuals of 0 or more; the state is unchanged");
        }

        long seen = Count;
        if (seen >= _startWindow.Length)
        {
            int slot = (int)(seen % _seasonLength);
            if (!TryStep(_level, _trend, _seasonal[slot], actual, out double level, out double trend, out double index))
            {
                ThrowRejected(actual);
            }

            _level = level;
            _trend = trend;
            _seasonal[slot] = index;
            return;
        }

        int t = (int)seen;
        if (_multiplicative && actual == 0)
        {
            CheckStartZero(t);
        }

        _startWindow[t] = actual;
        if (t + 1 < _startWindow.Length)
        {
            return;
        }

        if (!TryStart(out double startLevel, out double startTrend))
        {
            _startWindow[t] = 0;
            Array.Clear(_seasonal);
            ThrowRejected(actual);
        }

        _level = startLevel;
        _trend = startTrend;
        Array.Clear(_startWindow);
    }

    /// <summary>Computes the start values into the seasonal slots and runs seasons 2 … c through the equations.</summary>
    private bool TryStart(out double level, out double trend)
    {
        Span<double> seasonMeans = stackalloc double[_startSeasons];
        SeasonalStartValues.Compute(_startWindow, _seasonLength, _multiplicative, seasonMeans, _seasonal, out level, out trend);
        if (_multiplicative)
        {
            // Tiny positive actuals can give a start index or level that underflows: hold them at the floor.
            level = Math.Max(level, MultiplicativeFloor);
            for (int i = 0; i < _seasonal.Length; i++)
            {
                _seasonal[i] = Math.Max(_seasonal[i], MultiplicativeFloor);
            }
        }

        for (int t = _seasonLength; t < _startWindow.Length; t++)
        {
            int slot = t % _seasonLength;
            if (!TryStep(level, trend, _seasonal[slot], _startWindow[t], out level, out trend, out double index))
            {
                return false;
            }

            _seasonal[slot] = index;
        }

        return true;
    }

    private bool TryStep(double level, double trend, double seasonal, double actual, out double newLevel, out double newTrend, out double newSeasonal)
    {
        double dampedTrend = _phi * trend;
        if (_multiplicative)
        {
            newLevel = (_alpha * (actual / seasonal)) + (_oneMinusAlpha * (level + dampedTrend));
            if (!(newLevel > 0))
            {
                // The trend would carry the level to zero or below, where multiplicative seasonality breaks down (it
                // divides by the level). Drop the trend for this step: the level becomes a weighted mean of the
                // deseasonalised actual and the old level, positive whenever either is, and the trend restarts from
                // the change that step makes. Without this a steep fall would refuse every later actual.
                dampedTrend = 0;
                newLevel = (_alpha * (actual / seasonal)) + (_oneMinusAlpha * level);
            }

            // A long run of zeros shrinks the level and the indices geometrically; held at the floor they never underflow
            // to zero, so the next actual can always be divided by them.
            newLevel = Math.Max(newLevel, MultiplicativeFloor);
            newTrend = (_beta * (newLevel - level)) + (_oneMinusBeta * dampedTrend);
            newSeasonal = Math.Max((_gamma * (actual / newLevel)) + (_oneMinusGamma * seasonal), MultiplicativeFloor);
            return double.IsFinite(newLevel) && double.IsFinite(newTrend) && double.IsFinite(newSeasonal);
        }

        newLevel = (_alpha * (actual - seasonal)) + (_oneMinusAlpha * (level + dampedTrend));
        newTrend = (_beta * (newLevel - level)) + (_oneMinusBeta * dampedTrend);
        newSeasonal = (_gamma * (actual - newLevel)) + (_oneMinusGamma * seasonal);
        return double.IsFinite(newLevel) && double.IsFinite(newTrend) && double.IsFinite(newSeasonal);
    }

    /// <summary>Rejects a zero at window position <paramref name="t"/> that would give a zero season mean or a zero start index.</summary>
    private void CheckStartZero(int t)
    {
        int m = _seasonLength;
        int season = t / m;
        int position = t % m;
        if (position == m - 1 && IsZero(_startWindow.AsSpan(season * m, m - 1)))
        {
            ThrowHelper.ThrowOutOfRange("actual", 0.0, string.Create(CultureInfo.InvariantCulture,
                $"with this zero every actual of start season {season + 1} would be zero, and multiplicative seasonality divides by the season mean; the state is unchanged"));
        }

        if (season == _startSeasons - 1 && IsZeroAtPosition(_startWindow, m, season, position))
        {
            ThrowHelper.ThrowOutOfRange("actual", 0.0, string.Create(CultureInfo.InvariantCulture,
                $"season position {position + 1} is zero in every start season, so its multiplicative start index would be zero; the state is unchanged"));
        }
    }

    private static bool IsZero(ReadOnlySpan<double> values)
    {
        foreach (double v in values)
        {
            if (v != 0)
            {
                return false;
            }
        }

        return true;
    }

    private static bool IsZeroAtPosition(ReadOnlySpan<double> window, int m, int seasons, int position)
    {
        for (int p = 0; p < seasons; p++)
        {
            if (window[(p * m) + position] != 0)
            {
                return false;
            }
        }

        return true;
    }

    private int Slot(int horizon) => (int)((Count + horizon - 1) % _seasonLength);

    private protected override double ForecastCore(int horizon)
    {
        double trendPart = _level + (SmoothingMath.DampedSum(_phi, horizon) * _trend);
        double index = _seasonal[Slot(horizon)];
        return _multiplicative ? trendPart * index : trendPart + index;
    }

    private protected override double HorizonVarianceRatioCore(int horizon) =>
        SmoothingMath.HorizonVarianceRatio(_alpha, _alpha * _beta, _oneMinusAlpha * _gamma, _phi, _seasonLength, horizon);

    private protected override void ResetCore()
    {
        _level = 0;
        _trend = 0;
        Array.Clear(_seasonal);
        Array.Clear(_startWindow);
    }

    // Layout: level, trend, m seasonal slots, c·m start-window slots.
    private protected override int CoreStateLength => 2 + _seasonal.Length + _startWindow.Length;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _level;
        destination[1] = _trend;
        _seasonal.CopyTo(destination.Slice(2, _seasonal.Length));
        _startWindow.CopyTo(destination[(2 + _seasonal.Length)..]);
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        int m = _seasonLength;
        ReadOnlySpan<double> seasonal = state.Slice(2, m);
        ReadOnlySpan<double> window = state[(2 + m)..];
        if (count >= window.Length)
        {
            if (!IsZero(window))
            {
                return "the start window must be zero once the forecaster is warm";
            }

            if (_multiplicative)
            {
                if (!(state[0] >= MultiplicativeFloor))
                {
                    return "multiplicative seasonality needs a positive level (at least 1e-30)";
                }

                foreach (double s in seasonal)
                {
                    if (!(s >= MultiplicativeFloor))
                    {
                        return "multiplicative seasonality needs positive seasonal indices";
                    }
                }
            }

            return null;
        }

        int filled = (int)count;
        if (state[0] != 0 || state[1] != 0 || !IsZero(seasonal) || !IsZero(window[filled..]))
        {
            return "while warming up only the start-window slots already filled may be non-zero";
        }

        return _multiplicative ? MultiplicativeStartProblem(window, filled) : null;
    }

    private string? MultiplicativeStartProblem(ReadOnlySpan<double> window, int filled)
    {
        int m = _seasonLength;
        for (int t = 0; t < filled; t++)
        {
            if (window[t] < 0)
            {
                return "multiplicative seasonality needs actuals of 0 or more";
            }
        }

        for (int season = 0; (season + 1) * m <= filled; season++)
        {
            if (IsZero(window.Slice(season * m, m)))
            {
                return "a start season has only zero actuals";
            }
        }

        int last = _startSeasons - 1;
        for (int t = last * m; t < filled; t++)
        {
            if (window[t] == 0 && IsZeroAtPosition(window, m, last, t - (last * m)))
            {
                return "a season position is zero in every start season";
            }
        }

        return null;
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _level = state[0];
        _trend = state[1];
        state.Slice(2, _seasonal.Length).CopyTo(_seasonal);
        state[(2 + _seasonal.Length)..].CopyTo(_startWindow);
    }

    private void ThrowIfCold()
    {
        if (!IsWarm)
        {
            ThrowHelper.ThrowNotWarm(_options.MethodName);
        }
    }

    [DoesNotReturn]
    private void ThrowRejected(double actual) => ThrowHelper.ThrowOutOfRange(nameof(actual), actual, _multiplicative
        ? "with this actual the level or a seasonal index would fall to zero or below (or overflow), which multiplicative seasonality cannot hold; the state is unchanged"
        : "the actual is so large that the level, trend or a seasonal index would overflow; the state is unchanged");
}
