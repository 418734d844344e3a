using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>The Holt-Winters seasonal method for one series. Create it from <see cref="HoltWintersOptions"/>.</summary>
/// <remarks>
/// <para><b>Equations and start.</b> See <see cref="HoltWintersOptions"/> and <see cref="HoltWintersStart"/>. Warm after c·m
/// actuals (c = <see cref="HoltWintersOptions.StartSeasons"/>, 2 by default) with a computed start, at once with a given
/// one. <see cref="StartValues"/> tells which start values were used.</para>
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
/// m + c·m numbers per series (2·m + 2·c·m + 2 with the classical-decomposition start, m + 2 more with a given one),
/// allocated at creation.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed partial class HoltWinters : Forecaster
{
    private readonly HoltWintersOptions _options;
    private readonly int _seasonLength;
    private readonly int _startSeasons;
    private readonly bool _multiplicative;
    private readonly HoltWintersEquations _equations;
    private readonly HoltWintersStartKind _startKind;
    /// <summary>The smallest level and seasonal index multiplicative seasonality holds (see the remarks).</summary>
    internal const double MultiplicativeFloor = 1e-30;

    private readonly double[] _seasonal;    // slot t mod m holds the latest index of that season position
    private readonly double[] _startWindow; // the first c·m actuals while warming up; zero afterwards
    private readonly double[] _startIndices; // the start indices this forecaster used (see StartValues)
    private readonly double[] _centred;      // decomposition scratch (empty for the other starts)
    private double _level;
    private double _trend;
    private double _startLevel;
    private double _startTrend;
    private bool _startKnown;

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
        _equations = new HoltWintersEquations(_multiplicative, options.LevelWeight, options.TrendWeight, options.SeasonalWeight, options.Damping);
        _startKind = options.Start.Kind;
        _seasonal = new double[_seasonLength];
        _startWindow = new double[options.WarmUpLength];
        _startIndices = new double[_seasonLength];
        _centred = new double[_startKind == HoltWintersStartKind.ClassicalDecomposition ? _startWindow.Length : 0];
        ResetCore();
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

    /// <summary>
    /// The start values this forecaster used: for a computed start, the level, trend and indices the rule gave, as the state
    /// at period m before the actuals m+1 … c·m ran through the equations; for a given start, the given values (period 0).
    /// </summary>
    /// <value>
    /// <see langword="null"/> while a computed start still waits for its c·m actuals, and after <see cref="Forecaster.ImportState"/>
    /// of a warm state with a computed start (the snapshot holds the current state, not the start it came from).
    /// </value>
    /// <remarks>Allocates the returned record (O(m)); not for the per-update path.</remarks>
    public HoltWintersStartValues? StartValues => _startKnown
        ? new HoltWintersStartValues(_options.Start.Kind, _startKind == HoltWintersStartKind.Given ? 0 : _seasonLength, _startLevel, _startTrend, [.. _startIndices])
        : null;

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
            if (!_equations.TryStep(_level, _trend, _seasonal[slot], actual, out double level, out double trend, out double index))
            {
                ThrowRejected(actual);
            }

            _level = level;
            _trend = trend;
            _seasonal[slot] = index;
            return;
        }

        int t = (int)seen;
        if (_multiplicative && actual == 0 && _startKind == HoltWintersStartKind.SeasonMeans)
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
        _startKnown = true;
        Array.Clear(_startWindow);
    }

    /// <summary>Computes the start values into the seasonal slots and runs seasons 2 … c through the equations.</summary>
    private bool TryStart(out double level, out double trend)
    {
        if (_startKind == HoltWintersStartKind.ClassicalDecomposition)
        {
            SeasonalStartValues.ComputeDecomposition(_startWindow, _seasonLength, _multiplicative, _centred, _seasonal, out level, out trend);
            Array.Clear(_centred);
        }
        else
        {
            Span<double> seasonMeans = stackalloc double[_startSeasons];
            SeasonalStartValues.Compute(_startWindow, _seasonLength, _multiplicative, seasonMeans, _seasonal, out level, out trend);
        }

        _equations.FloorStart(ref level, _seasonal);
        _startLevel = level;
        _startTrend = trend;
        _seasonal.CopyTo(_startIndices);
        return _equations.TryRunStartSeasons(_startWindow, _seasonal, ref level, ref trend);
    }

    private int Slot(int horizon) => (int)((Count + horizon - 1) % _seasonLength);

    private protected override double ForecastCore(int horizon) =>
        _equations.Forecast(_level, _trend, _seasonal[Slot(horizon)], horizon);

    private protected override double HorizonVarianceRatioCore(int horizon) =>
        SmoothingMath.HorizonVarianceRatio(_equations.Alpha, _equations.Alpha * _equations.Beta, _equations.OneMinusAlpha * _equations.Gamma, _equations.Phi, _seasonLength, horizon);

    private protected override void ResetCore()
    {
        Array.Clear(_startWindow);
        if (_startKind == HoltWintersStartKind.Given)
        {
            // Given values are the state before the first actual; multiplicative ones are held at the floor like any state.
            HoltWintersStart start = _options.Start;
            _level = _multiplicative ? Math.Max(start.Level!.Value, MultiplicativeFloor) : start.Level!.Value;
            _trend = start.Trend!.Value;
            for (int i = 0; i < _seasonal.Length; i++)
            {
                _seasonal[i] = _multiplicative ? Math.Max(start.SeasonalIndices[i], MultiplicativeFloor) : start.SeasonalIndices[i];
            }

            _startLevel = _level;
            _startTrend = _trend;
            _seasonal.CopyTo(_startIndices);
            _startKnown = true;
            return;
        }

        _level = 0;
        _trend = 0;
        Array.Clear(_seasonal);
        _startLevel = 0;
        _startTrend = 0;
        Array.Clear(_startIndices);
        _startKnown = false;
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

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _level = state[0];
        _trend = state[1];
        state.Slice(2, _seasonal.Length).CopyTo(_seasonal);
        state[(2 + _seasonal.Length)..].CopyTo(_startWindow);
        if (_startKind != HoltWintersStartKind.Given)
        {
            // The snapshot holds the current state only: the start a computed rule gave is no longer known.
            _startKnown = false;
        }
    }

    [DoesNotReturn]
    private void ThrowRejected(double actual) => ThrowHelper.ThrowOutOfRange(nameof(actual), actual, _multiplicative
        ? "with this actual the level or a seasonal index would fall to zero or below (or overflow), which multiplicative seasonality cannot hold; the state is unchanged"
        : "the actual is so large that the level, trend or a seasonal index would overflow; the state is unchanged");
}
