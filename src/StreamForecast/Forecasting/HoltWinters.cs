using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>How the seasonal pattern combines with level and trend in <see cref="HoltWintersOptions"/>.</summary>
public enum Seasonality
{
    /// <summary>Seasonal effects are added: F = ℓ + (φ + … + φʰ)·b + s. Any finite actuals.</summary>
    Additive = 0,

    /// <summary>Seasonal effects multiply: F = (ℓ + (φ + … + φʰ)·b)·s. Actuals must be ≥ 0 and the level stays positive.</summary>
    Multiplicative = 1,
}

/// <summary>
/// Options for the Holt-Winters seasonal method (triple exponential smoothing), additive or multiplicative,
/// optionally with a damped trend. With α the level weight, β the trend weight, γ the seasonal weight, φ the
/// damping, m the season length and s(t−m) the index of the same season one season back:
/// <para>Additive: ℓ(t) = α·(y(t) − s(t−m)) + (1−α)·(ℓ(t−1) + φ·b(t−1)); s(t) = γ·(y(t) − ℓ(t)) + (1−γ)·s(t−m);
/// F(t+h) = ℓ(t) + φ_h·b(t) + s(t+h−m(k+1)).</para>
/// <para>Multiplicative: ℓ(t) = α·y(t)/s(t−m) + (1−α)·(ℓ(t−1) + φ·b(t−1)); s(t) = γ·y(t)/ℓ(t) + (1−γ)·s(t−m);
/// F(t+h) = (ℓ(t) + φ_h·b(t))·s(t+h−m(k+1)).</para>
/// <para>Both: b(t) = β·(ℓ(t) − ℓ(t−1)) + (1−β)·φ·b(t−1); φ_h = φ + … + φʰ (h when φ = 1); k = ⌊(h−1)/m⌋.</para>
/// </summary>
/// <remarks>
/// <para><b>Sources and letters.</b> The seasonal equation uses the new level ℓ(t), as Winters (1960) and the
/// NIST/SEMATECH e-Handbook §6.4.3.5 do (NIST, multiplicative, from memory: S(t) = α·y(t)/I(t−L) + (1−α)(S(t−1) +
/// b(t−1)), b(t) = γ(S(t) − S(t−1)) + (1−γ)b(t−1), I(t) = β·y(t)/S(t) + (1−β)I(t−L); so NIST α = level weight,
/// NIST γ = trend weight, NIST β = seasonal weight). Hyndman &amp; Athanasopoulos, <i>Forecasting: Principles and
/// Practice</i> (1st ed.) §7.5 (from memory) write the seasonal equation with ℓ(t−1) + b(t−1) in place of ℓ(t) and
/// call the trend weight β*; for additive seasonality that is the same method with FPP's γ = seasonal weight ×
/// (1−α), for multiplicative seasonality the two forms differ slightly. The damped trend is Gardner &amp;
/// McKenzie's (FPP 1st ed. §7.4, from memory).</para>
/// <para><b>Start rule</b> (from the first c = <see cref="StartSeasons"/> whole seasons, NIST §6.4.3.5 formulas
/// from memory): A_p is the mean of season p; the start level is A₁ and the start trend (A₂ − A₁)/m, which is
/// NIST's (1/m)·Σᵢ (y(m+i) − y(i))/m and uses the first two seasons whatever c is; the start index of season
/// position i is the mean over the c seasons of y/A_p (multiplicative, as NIST) or y − A_p (additive, the same
/// rule with differences; common practice). These values are the state at period m (the classical convention
/// puts the start level A₁ at the end of season 1); the actuals m+1 … c·m then pass through the equations above,
/// as a batch run from period m+1 would. The forecaster is warm after c·m actuals, and every later actual updates
/// the state as it arrives.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record HoltWintersOptions : ForecasterOptions
{
    /// <summary>The largest season length accepted.</summary>
    public const int MaxSeasonLength = 100_000;

    /// <summary>The largest number of start seasons accepted.</summary>
    public const int MaxStartSeasons = 50;

    /// <summary>The largest start window (start seasons × season length) accepted.</summary>
    public const int MaxStartWindow = 1_000_000;

    /// <summary>Creates Holt-Winters options.</summary>
    /// <param name="seasonLength">The season length m in periods, 2 to <see cref="MaxSeasonLength"/>.</param>
    /// <param name="seasonality">Additive or multiplicative seasonal effects.</param>
    /// <param name="levelWeight">The level weight α (NIST α, FPP α), in (0, 1].</param>
    /// <param name="trendWeight">The trend weight (NIST γ, FPP β*), in [0, 1].</param>
    /// <param name="seasonalWeight">The seasonal weight (NIST β; Winters' form, see the remarks), in [0, 1].</param>
    /// <param name="damping">The damping φ, in (0, 1]; the default 1 is the undamped method.</param>
    /// <param name="startSeasons">
    /// The number of whole seasons c the start values come from, 2 (the default) to <see cref="MaxStartSeasons"/>,
    /// with c·m at most <see cref="MaxStartWindow"/>.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A parameter is out of range or NaN.</exception>
    public HoltWintersOptions(
        int seasonLength,
        Seasonality seasonality,
        double levelWeight,
        double trendWeight,
        double seasonalWeight,
        double damping = 1.0,
        int startSeasons = 2)
    {
        if (seasonLength is < 2 or > MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the season length m must be between 2 and 100,000 periods");
        }

        if (seasonality is not (Seasonality.Additive or Seasonality.Multiplicative))
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonality), seasonality, "the seasonality must be Additive or Multiplicative");
        }

        if (!(levelWeight > 0 && levelWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(levelWeight), levelWeight, "the level weight (alpha) must be greater than 0 and at most 1");
        }

        if (!(trendWeight >= 0 && trendWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(trendWeight), trendWeight, "the trend weight must be between 0 and 1");
        }

        if (!(seasonalWeight >= 0 && seasonalWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonalWeight), seasonalWeight, "the seasonal weight must be between 0 and 1");
        }

        if (!(damping > 0 && damping <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(damping), damping, "the damping (phi) must be greater than 0 and at most 1; 1 means no damping");
        }

        if (startSeasons is < 2 or > MaxStartSeasons)
        {
            ThrowHelper.ThrowOutOfRange(nameof(startSeasons), startSeasons, "the number of start seasons must be between 2 and 50");
        }

        if ((long)startSeasons * seasonLength > MaxStartWindow)
        {
            ThrowHelper.ThrowOutOfRange(nameof(startSeasons), startSeasons,
                string.Create(CultureInfo.InvariantCulture, $"start seasons × season length ({seasonLength}) must be at most 1,000,000 periods"));
        }

        SeasonLength = seasonLength;
        Seasonality = seasonality;
        LevelWeight = levelWeight;
        TrendWeight = trendWeight;
        SeasonalWeight = seasonalWeight;
        Damping = damping;
        StartSeasons = startSeasons;
    }

    /// <summary>The season length m.</summary>
    public int SeasonLength { get; }

    /// <summary>Additive or multiplicative seasonal effects.</summary>
    public Seasonality Seasonality { get; }

    /// <summary>The level weight α in (0, 1].</summary>
    public double LevelWeight { get; }

    /// <summary>The trend weight in [0, 1] (NIST γ, FPP β*).</summary>
    public double TrendWeight { get; }

    /// <summary>The seasonal weight in [0, 1] (NIST β).</summary>
    public double SeasonalWeight { get; }

    /// <summary>The damping φ in (0, 1]; 1 means no damping.</summary>
    public double Damping { get; }

    /// <summary>The number of whole seasons c the start values come from; the forecaster is warm after c·m actuals.</summary>
    public int StartSeasons { get; }

    /// <inheritdoc/>
    public override string MethodName
    {
        get
        {
            string kind = Seasonality == Seasonality.Additive ? "additive" : "multiplicative";
            string damped = Damping == 1.0 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $", damping {Damping}");
            string start = StartSeasons == 2 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $", start {StartSeasons} seasons");
            return string.Create(CultureInfo.InvariantCulture,
                $"HoltWinters({kind}, m {SeasonLength}, {LevelWeight}, {TrendWeight}, {SeasonalWeight}{damped}{start})");
        }
    }

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new HoltWinters(this);
}

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
