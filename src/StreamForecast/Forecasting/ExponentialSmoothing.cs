using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>Single exponential smoothing of one series. Create it from <see cref="ExponentialSmoothingOptions"/>.</summary>
/// <remarks>
/// <para><b>Equations.</b> Once warm, each actual y(t) updates the level ℓ(t) = α·y(t) + (1−α)·ℓ(t−1); the forecast
/// for every horizon is the current level (a flat forecast).</para>
/// <para><b>Warm-up.</b> Set by <see cref="ExponentialSmoothingOptions.Start"/>: after the first actual
/// (<see cref="LevelStart.FirstActual"/>, NIST), after k actuals (<see cref="LevelStart.MeanOfFirst"/>), or
/// immediately (<see cref="LevelStart.Given"/>: <see cref="Forecaster.IsWarm"/> is true before any actual).</para>
/// <para><b>Horizon variance.</b> Under the ETS(A,N,N) model (local level with additive errors; Hyndman et al.,
/// from memory) the h-step error variance is σ²·[1 + (h−1)·α²].</para>
/// <para><b>Cost.</b> O(1) and allocation-free per update and forecast. <b>Bad input:</b> NaN, infinities and
/// an actual that would overflow the level are rejected and the state is unchanged.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class ExponentialSmoothing : Forecaster
{
    private readonly ExponentialSmoothingOptions _options;
    private readonly double _alpha;
    private readonly double _oneMinusAlpha;
    private readonly int _warmUpLength;
    private double _level;
    private CompensatedSum _startSum; // the first k actuals while MeanOfFirst is warming up; zero afterwards
    private double _startLevel;       // the start level used (see StartValues)
    private bool _startKnown;

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public ExponentialSmoothing(ExponentialSmoothingOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _alpha = options.Alpha;
        _oneMinusAlpha = 1.0 - options.Alpha;
        _warmUpLength = options.Start.WarmUpLength;
        ResetCore();
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => Count >= _warmUpLength;

    /// <summary>The current level ℓ(t), which is the forecast for every horizon.</summary>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet.</exception>
    public double Level => WhenWarm(_level);

    /// <summary>
    /// The start level this forecaster used: the given ℓ₀ (<see cref="LevelStart.Given"/>), the first actual
    /// (<see cref="LevelStart.FirstActual"/>) or the mean of the first k (<see cref="LevelStart.MeanOfFirst"/>).
    /// </summary>
    /// <value>
    /// <see langword="null"/> while a computed start still waits for its actuals, and after <see cref="Forecaster.ImportState"/>
    /// of a state with a computed start (the state holds the current level, not the start it came from). A given start is
    /// always known.
    /// </value>
    /// <remarks>Allocates the returned record; not for the per-update path.</remarks>
    public LevelStartValues? StartValues => _startKnown ? new LevelStartValues(_options.Start.Kind, _warmUpLength, _startLevel) : null;

    private protected override void UpdateCore(double actual)
    {
        long seen = Count;
        if (seen >= _warmUpLength)
        {
            double level = (_alpha * actual) + (_oneMinusAlpha * _level);
            if (!double.IsFinite(level))
            {
                ThrowOverflow(actual);
            }

            _level = level;
            return;
        }

        // Averaging the first k actuals (k = 1 for FirstActual).
        CompensatedSum sum = _startSum;
        sum.Add(actual);
        if (!double.IsFinite(sum.Value))
        {
            ThrowOverflow(actual);
        }

        if (seen + 1 == _warmUpLength)
        {
            _level = sum.Value / _warmUpLength;
            _startSum = default;
            _startLevel = _level;
            _startKnown = true;
        }
        else
        {
            _startSum = sum;
        }
    }

    private protected override double ForecastCore(int horizon) => _level;

    private protected override double HorizonVarianceRatioCore(int horizon) => 1.0 + ((horizon - 1.0) * _alpha * _alpha);

    private protected override void ResetCore()
    {
        _level = _options.Start.Level ?? 0;
        _startSum = default;
        _startLevel = _level;
        _startKnown = _options.Start.Kind == LevelStartKind.Given;
    }

    // Layout: level, then the two parts of the warm-up sum.
    private protected override int CoreStateLength => 3;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _level;
        _startSum.CopyTo(destination[1..]);
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        if (count >= _warmUpLength)
        {
            if (state[1] != 0 || state[2] != 0)
            {
                return "the warm-up sum must be zero once the forecaster is warm";
            }

            if (count == 0 && _options.Start.Level is double given && state[0] != given)
            {
                return "before any actual the level must be the given starting level";
            }

            return null;
        }

        if (state[0] != 0)
        {
            return "the level must be zero while the first actuals are being averaged";
        }

        return count == 0 && (state[1] != 0 || state[2] != 0) ? "the warm-up sum must be zero before any actual" : null;
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _level = state[0];
        _startSum.LoadFrom(state[1..]);
        if (_options.Start.Kind != LevelStartKind.Given)
        {
            // The state holds the current level only: the start a computed rule gave is no longer known.
            _startKnown = false;
        }
    }

    [DoesNotReturn]
    private static void ThrowOverflow(double actual) =>
        ThrowHelper.ThrowOutOfRange(nameof(actual), actual, "the actual is so large that the smoothed level would overflow; the state is unchanged");
}
