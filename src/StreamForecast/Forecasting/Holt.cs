using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>Holt's linear trend method (optionally damped) for one series. Create it from <see cref="HoltOptions"/>.</summary>
/// <remarks>
/// <para><b>Equations.</b> See <see cref="HoltOptions"/>. Which actuals pass through them is fixed by the start
/// rule (<see cref="HoltStart"/>); once warm, every actual does.</para>
/// <para><b>Warm-up.</b> 2 actuals (<see cref="HoltStart.FirstTwoActuals"/>), d + 1
/// (<see cref="HoltStart.MeanOfFirstDifferences"/>), 1 (<see cref="HoltStart.FirstActualAndTrend"/>) or none
/// (<see cref="HoltStart.Given"/>).</para>
/// <para><b>Horizon variance.</b> Under the ETS(A,A,N) model (Hyndman, Koehler, Ord &amp; Snyder 2008, class 1,
/// from memory) the h-step error variance is σ²·[1 + Σ_{j=1}^{h−1} c_j²] with c_j = α + β_ETS·j, β_ETS = α × trend
/// weight, which sums to 1 + (h−1)·[α² + α·β_ETS·h + β_ETS²·h(2h−1)/6] (O(1)). Damped (ETS(A,Ad,N)):
/// c_j = α + β_ETS·(φ + … + φʲ), summed term by term until φʲ stops mattering in double precision, so
/// <see cref="Forecaster.HorizonVarianceRatio"/> costs O(min(h, 40/(1−φ))).</para>
/// <para><b>Cost.</b> O(1) and allocation-free per update and forecast. <b>Bad input:</b> NaN, infinities and an
/// actual that would overflow the level or trend are rejected and the state is unchanged.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class Holt : Forecaster
{
    private readonly HoltOptions _options;
    private readonly HoltStartKind _startKind;
    private readonly int _warmUpLength;
    private readonly HoltEquations _equations;

    // Once warm: the level and trend. While MeanOfFirstDifferences warms up they hold the parts P and R of
    // level = P + Q·b₁ and trend = R + U·b₁, with b₁ not yet known.
    private double _level;
    private double _trend;
    private double _levelPerStartTrend;  // Q (warm-up only; zero afterwards)
    private double _trendPerStartTrend;  // U (warm-up only; zero afterwards)
    private double _firstActual;         // y₁ (warm-up only; zero afterwards)
    private double _startLevel;          // the start values used (see StartValues)
    private double _startTrend;
    private bool _startKnown;

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public Holt(HoltOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _startKind = options.Start.Kind;
        _warmUpLength = options.Start.WarmUpLength;
        _equations = new HoltEquations(options.LevelWeight, options.TrendWeight, options.Damping);
        ResetCore();
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => Count >= _warmUpLength;

    /// <summary>The current level ℓ(t) (NIST S(t)).</summary>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet.</exception>
    public double Level => WhenWarm(_level);

    /// <summary>The current trend b(t) per period, before damping.</summary>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet.</exception>
    public double Trend => WhenWarm(_trend);

    /// <summary>
    /// The start values this forecaster used: ℓ₀ and b₀ before the first actual (FPP's y₁ and y₂ − y₁ for
    /// <see cref="HoltStart.FirstTwoActuals"/>, the given values for <see cref="HoltStart.Given"/>), or NIST's S₁ = y₁ and b₁
    /// after it (<see cref="HoltStart.MeanOfFirstDifferences"/>, <see cref="HoltStart.FirstActualAndTrend"/>).
    /// </summary>
    /// <value>
    /// <see langword="null"/> while a computed start still waits for its actuals, and after <see cref="Forecaster.ImportState"/>
    /// of a state with a computed start (the state holds the current level and trend, not the start they came from). A given
    /// start is always known.
    /// </value>
    /// <remarks>Allocates the returned record; not for the per-update path.</remarks>
    public HoltStartValues? StartValues => _startKnown
        ? new HoltStartValues(_startKind, _startKind is HoltStartKind.FirstTwoActuals or HoltStartKind.Given ? 0 : 1, _startLevel, _startTrend)
        : null;

    private protected override void UpdateCore(double actual)
    {
        long seen = Count;
        if (seen >= _warmUpLength)
        {
            Step(_level, _trend, actual, out double level, out double trend);
            Commit(actual, level, trend);
            return;
        }

        switch (_startKind)
        {
            case HoltStartKind.FirstActualAndTrend:
                // NIST: S₁ = y₁ with the given b₁.
                Commit(actual, actual, _options.Start.Trend.GetValueOrDefault());
                KeepStart(actual, _trend);
                break;

            case HoltStartKind.MeanOfFirstDifferences:
                UpdateDifferencesStart(actual, seen);
                break;

            default: // FirstTwoActuals
                if (seen == 0)
                {
                    _firstActual = actual;
                }
                else
                {
                    // FPP 1st ed.: ℓ₀ = y₁, b₀ = y₂ − y₁, then the equations over y₁ and y₂.
                    double first = _firstActual;
                    Step(first, actual - first, first, out double level1, out double trend1);
                    Step(level1, trend1, actual, out double level2, out double trend2);
                    Commit(actual, level2, trend2);
                    KeepStart(first, actual - first);
                    _firstActual = 0;
                }

                break;
        }
    }

    private void UpdateDifferencesStart(double actual, long seen)
    {
        if (seen == 0)
        {
            // S₁ = y₁ (P = y₁, Q = 0); b₁ unknown (R = 0, U = 1).
            _firstActual = actual;
            _level = actual;
            _trend = 0;
            _levelPerStartTrend = 0;
            _trendPerStartTrend = 1;
            return;
        }

        // The equations are linear in b₁: run them on the parts (P, R) and the coefficients (Q, U) separately.
        double p = (_equations.Alpha * actual) + (_equations.OneMinusAlpha * (_level + (_equations.Phi * _trend)));
        double r = (_equations.Beta * (p - _level)) + (_equations.OneMinusBeta * _equations.Phi * _trend);
        double q = _equations.OneMinusAlpha * (_levelPerStartTrend + (_equations.Phi * _trendPerStartTrend));
        double u = (_equations.Beta * (q - _levelPerStartTrend)) + (_equations.OneMinusBeta * _equations.Phi * _trendPerStartTrend);
        if (seen + 1 < _warmUpLength)
        {
            if (!(double.IsFinite(p) && double.IsFinite(r)))
            {
                ThrowOverflow(actual);
            }

            _level = p;
            _trend = r;
            _levelPerStartTrend = q;
            _trendPerStartTrend = u;
            return;
        }

        // y(d+1) has arrived: b₁ = (y(d+1) − y₁)/d.
        double startTrend = (actual - _firstActual) / (_warmUpLength - 1);
        Commit(actual, p + (q * startTrend), r + (u * startTrend));
        KeepStart(_firstActual, startTrend);
        _levelPerStartTrend = 0;
        _trendPerStartTrend = 0;
        _firstActual = 0;
    }

    private void KeepStart(double level, double trend)
    {
        _startLevel = level;
        _startTrend = trend;
        _startKnown = true;
    }

    private void Step(double level, double trend, double actual, out double newLevel, out double newTrend) =>
        _equations.Step(level, trend, actual, out newLevel, out newTrend);

    private void Commit(double actual, double level, double trend)
    {
        if (!(double.IsFinite(level) && double.IsFinite(trend)))
        {
            ThrowOverflow(actual);
        }

        _level = level;
        _trend = trend;
    }

    private protected override double ForecastCore(int horizon) => _equations.Forecast(_level, _trend, horizon);

    private protected override double HorizonVarianceRatioCore(int horizon) =>
        SmoothingMath.HorizonVarianceRatio(_equations.Alpha, _equations.Alpha * _equations.Beta, 0, _equations.Phi, 0, horizon);

    private protected override void ResetCore()
    {
        _level = _options.Start.Level ?? 0;
        _trend = _startKind == HoltStartKind.Given ? _options.Start.Trend.GetValueOrDefault() : 0;
        _levelPerStartTrend = 0;
        _trendPerStartTrend = 0;
        _firstActual = 0;
        _startLevel = _level;
        _startTrend = _trend;
        _startKnown = _startKind == HoltStartKind.Given;
    }

    // Layout: level (or P), trend (or R), Q, U, y₁.
    private protected override int CoreStateLength => 5;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _level;
        destination[1] = _trend;
        destination[2] = _levelPerStartTrend;
        destination[3] = _trendPerStartTrend;
        destination[4] = _firstActual;
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        bool warmUpPartsZero = state[2] == 0 && state[3] == 0 && state[4] == 0;
        if (count >= _warmUpLength)
        {
            if (!warmUpPartsZero)
            {
                return "the warm-up numbers must be zero once the forecaster is warm";
            }

            if (count == 0 && (state[0] != _options.Start.Level || state[1] != _options.Start.Trend))
            {
                return "before any actual the level and trend must be the given starting values";
            }

            return null;
        }

        if (count == 0)
        {
            return state[0] == 0 && state[1] == 0 && warmUpPartsZero ? null : "before any actual every number must be zero";
        }

        if (_startKind == HoltStartKind.FirstTwoActuals)
        {
            // One actual seen: only y₁ is kept.
            return state[0] == 0 && state[1] == 0 && state[2] == 0 && state[3] == 0 ? null : "after one actual only the first actual may be non-zero";
        }

        return null; // MeanOfFirstDifferences part-way: any finite parts.
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _level = state[0];
        _trend = state[1];
        _levelPerStartTrend = state[2];
        _trendPerStartTrend = state[3];
        _firstActual = state[4];
        if (_startKind != HoltStartKind.Given)
        {
            // The state holds the current level and trend only: the start a computed rule gave is no longer known.
            _startKnown = false;
        }
    }

    [DoesNotReturn]
    private static void ThrowOverflow(double actual) =>
        ThrowHelper.ThrowOutOfRange(nameof(actual), actual, "the actual is so large that the level or trend would overflow; the state is unchanged");
}
