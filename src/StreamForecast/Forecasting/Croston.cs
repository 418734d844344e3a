using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Croston's forecast (or its Syntetos–Boylan correction) of one intermittent-demand series. Create it from
/// <see cref="CrostonOptions"/>.
/// </summary>
/// <remarks>
/// <para><b>Method.</b> In a period with demand y &gt; 0 that comes q periods after the previous demand:
/// z ← z + α(y − z) and p ← p + α_p(q − p). In a period with zero demand nothing is smoothed; only the count of
/// periods since the last demand grows. The forecast for every future period is z/p (times
/// <see cref="CrostonOptions.BiasFactor"/>), unchanged through a run of zeros (check-values, conventions item 5).</para>
/// <para><b>Start.</b> The first non-zero demand sets z to that demand and p to the number of periods from the start
/// of the series up to and including it (a demand in the first period gives p = 1, a demand in the third after two
/// zeros gives p = 3): the leading zeros count as the first interval, as if a demand had occurred just before the
/// series began.</para>
/// <para><b>Warm-up.</b> Warm after the first non-zero demand; before that there is no size to forecast from.</para>
/// <para><b>Domain.</b> Demand must be zero or positive; a negative actual (and NaN or an infinity) is rejected with
/// <see cref="ArgumentOutOfRangeException"/> and the state is left unchanged. Zero is a valid actual.</para>
/// <para><b>Cost.</b> O(1) and allocation-free per update; three numbers of state.</para>
/// <para><b>Horizon.</b> The forecast is flat. Under the stationary intermittent-demand model behind the method
/// (independent sizes and intervals about fixed means) the error variance does not grow with h: ratio 1.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class Croston : Forecaster
{
    private readonly CrostonOptions _options;
    private readonly double _sizeWeight;
    private readonly double _intervalWeight;
    private readonly double _factor;
    private double _size;              // z
    private double _interval;          // p; 0 until the first demand
    private long _periodsSinceDemand;  // periods since the last demand (since the start before the first one)

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public Croston(CrostonOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _sizeWeight = options.SizeWeight;
        _intervalWeight = options.IntervalWeight;
        _factor = options.BiasFactor;
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => _interval > 0;

    /// <summary>The smoothed demand size z; 0 before the first demand.</summary>
    public double DemandSize => _size;

    /// <summary>The smoothed inter-demand interval p in periods; 0 before the first demand, at least 1 after it.</summary>
    public double DemandInterval => _interval;

    private protected override void UpdateCore(double actual)
    {
        if (actual < 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(actual), actual, "demand must be zero or more; the state is unchanged");
        }

        long sinceDemand = _periodsSinceDemand + 1;
        if (actual == 0)
        {
            _periodsSinceDemand = sinceDemand;
            return;
        }

        if (_interval > 0)
        {
            _size += _sizeWeight * (actual - _size);
            _interval += _intervalWeight * (sinceDemand - _interval);
        }
        else
        {
            _size = actual;
            _interval = sinceDemand;
        }

        _periodsSinceDemand = 0;
    }

    private protected override double ForecastCore(int horizon) => _factor * _size / _interval;

    private protected override double HorizonVarianceRatioCore(int horizon) => 1.0;

    private protected override void ResetCore()
    {
        _size = 0;
        _interval = 0;
        _periodsSinceDemand = 0;
    }

    // Layout: z, p, periods since the last demand.
    private protected override int CoreStateLength => 3;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _size;
        destination[1] = _interval;
        destination[2] = _periodsSinceDemand;
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        double size = state[0], interval = state[1], since = state[2];
        if (since < 0 || since != Math.Floor(since) || since > count)
        {
            return "the periods since the last demand must be a whole number between 0 and the count";
        }

        if (interval == 0)
        {
            return size == 0 && since == count ? null : "before the first demand the size must be 0 and every period counts since the start";
        }

        // p is a weighted mean of whole intervals ≥ 1, so it is ≥ 1 up to rounding; z is a weighted mean of demands ≥ 0.
        if (!(interval >= 1 - 1e-9) || count < 1 || since > count - 1)
        {
            return "after a demand the interval must be at least 1 and a demand must have been counted";
        }

        return size >= 0 ? null : "the demand size must be zero or more";
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _size = state[0];
        _interval = state[1];
        _periodsSinceDemand = (long)state[2];
    }
}
