using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>The TSB forecast of one intermittent-demand series. Create it from <see cref="TsbOptions"/>.</summary>
/// <remarks>
/// <para><b>Method.</b> Every period: d ← d + α(1 − d) if it had demand, d ← d + α(0 − d) if not. In a period with
/// demand y &gt; 0 also z ← z + β(y − z). The forecast for every future period is d·z. Unlike Croston's method the
/// forecast falls geometrically, by the factor 1 − α per period, through a run of zero demand (check-values,
/// conventions item 5), which is the point of the method: an item that stops selling stops being forecast.</para>
/// <para><b>Start.</b> The first non-zero demand, in period k counted from 1, sets z to that demand and d to 1/k,
/// the share of the periods so far that had demand (a demand in the first period gives d = 1). This is the
/// probability counterpart of Croston's usual start p = k, so right after the first demand TSB and Croston forecast
/// the same y/k; smoothing starts with the next period.</para>
/// <para><b>Warm-up.</b> Warm after the first non-zero demand; before that there is no size to forecast from.</para>
/// <para><b>Domain.</b> Demand must be zero or positive; a negative actual (and NaN or an infinity) is rejected with
/// <see cref="ArgumentOutOfRangeException"/> and the state is left unchanged. Zero is a valid actual.</para>
/// <para><b>Cost.</b> O(1) and allocation-free per update; three numbers of state.</para>
/// <para><b>Horizon.</b> The forecast is flat. Under the stationary intermittent-demand model behind the method
/// (demand occurrence and size independent with fixed means) the error variance does not grow with h: ratio 1.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class Tsb : Forecaster
{
    private readonly TsbOptions _options;
    private readonly double _probabilityWeight;
    private readonly double _sizeWeight;
    private double _size;         // z
    private double _probability;  // d
    private bool _started;        // a demand has been seen

    /// <summary>Creates an empty forecaster.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public Tsb(TsbOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _probabilityWeight = options.ProbabilityWeight;
        _sizeWeight = options.SizeWeight;
    }

    /// <inheritdoc/>
    public override ForecasterOptions Options => _options;

    /// <inheritdoc/>
    public override bool IsWarm => _started;

    /// <summary>The smoothed demand size z; 0 before the first demand.</summary>
    public double DemandSize => _size;

    /// <summary>The smoothed probability d that a period has demand, between 0 and 1; 0 before the first demand.</summary>
    public double DemandProbability => _probability;

    private protected override void UpdateCore(double actual)
    {
        if (actual < 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(actual), actual, "demand must be zero or more; the state is unchanged");
        }

        if (!_started)
        {
            if (actual > 0)
            {
                _size = actual;
                _probability = 1.0 / (Count + 1); // this period is number Count + 1
                _started = true;
            }

            return;
        }

        if (actual > 0)
        {
            _probability += _probabilityWeight * (1 - _probability);
            _size += _sizeWeight * (actual - _size);
        }
        else
        {
            _probability -= _probabilityWeight * _probability;
        }
    }

    private protected override double ForecastCore(int horizon) => _probability * _size;

    private protected override double HorizonVarianceRatioCore(int horizon) => 1.0;

    private protected override void ResetCore()
    {
        _size = 0;
        _probability = 0;
        _started = false;
    }

    // Layout: z, d, 1 once a demand has been seen (else 0).
    private protected override int CoreStateLength => 3;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _size;
        destination[1] = _probability;
        destination[2] = _started ? 1 : 0;
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> state, long count)
    {
        double size = state[0], probability = state[1], started = state[2];
        if (started == 0)
        {
            return size == 0 && probability == 0 ? null : "before the first demand the size and probability must be 0";
        }

        if (started != 1 || count < 1)
        {
            return "the started flag must be 0 or 1, and 1 only after a period has been counted";
        }

        // d stays in [0, 1] up to rounding (each update is a weighted mean of d and 0 or 1); z is a weighted mean of demands ≥ 0.
        if (!(probability >= 0 && probability <= 1 + 1e-12))
        {
            return "the demand probability must be between 0 and 1";
        }

        return size >= 0 ? null : "the demand size must be zero or more";
    }

    private protected override void ImportCore(ReadOnlySpan<double> state, long count)
    {
        _size = state[0];
        _probability = state[1];
        _started = state[2] == 1;
    }
}
