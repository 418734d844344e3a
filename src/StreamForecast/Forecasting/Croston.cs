using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>Which estimator a <see cref="CrostonOptions"/> forecaster reports.</summary>
public enum CrostonVariant
{
    /// <summary>Croston's (1972) estimator: smoothed demand size divided by smoothed inter-demand interval, z/p.</summary>
    Classic = 0,

    /// <summary>
    /// The Syntetos–Boylan approximation (SBA; Syntetos &amp; Boylan 2005, International Journal of Forecasting
    /// 21:303–314): Croston's z/p multiplied by (1 − α/2), with α the interval smoothing weight, which removes most
    /// of the upward bias of z/p.
    /// </summary>
    SyntetosBoylan = 1,
}

/// <summary>
/// Options for Croston's method for intermittent demand and its Syntetos–Boylan correction (SBA): the demand size z
/// and the inter-demand interval p are smoothed separately, only in periods with demand, and the forecast per period
/// is z/p (times 1 − α/2 for SBA).
/// </summary>
/// <remarks>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// <para><b>Which α the SBA factor uses.</b> Syntetos &amp; Boylan (2005) use one smoothing constant for both
/// estimates; when the two weights differ this library takes the <i>interval</i> weight, because the bias the factor
/// removes comes from the interval estimate alone: for geometric intervals with mean p, the smoothed interval p̂ has
/// variance α_p/(2 − α_p)·p(p − 1), so E[1/p̂] ≈ 1/p + α_p/(2 − α_p)·(p − 1)/p², and multiplying by (1 − α_p/2) turns
/// the expectation of z/p̂ into μ/p·(1 − α_p/(2p)) ≈ μ/p (derivation DERIVED from the delta method; that the published
/// α is the interval smoothing constant is from memory of Syntetos &amp; Boylan 2005).</para>
/// </remarks>
public sealed record CrostonOptions : ForecasterOptions
{
    /// <summary>The default smoothing weight, 0.1 (common practice: Croston-family weights of 0.05–0.2).</summary>
    public const double DefaultWeight = 0.1;

    /// <summary>Creates Croston options.</summary>
    /// <param name="sizeWeight">
    /// The smoothing weight α for the demand size, greater than 0 and at most 1; by default <see cref="DefaultWeight"/>.
    /// </param>
    /// <param name="intervalWeight">
    /// The smoothing weight for the inter-demand interval, greater than 0 and at most 1; by default (null) the same
    /// as <paramref name="sizeWeight"/>, as in Croston (1972).
    /// </param>
    /// <param name="variant">Classic Croston (the default) or the Syntetos–Boylan approximation.</param>
    /// <exception cref="ArgumentOutOfRangeException">A weight is not in (0, 1], or the variant is not defined.</exception>
    public CrostonOptions(double sizeWeight = DefaultWeight, double? intervalWeight = null, CrostonVariant variant = CrostonVariant.Classic)
    {
        if (!(sizeWeight > 0 && sizeWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(sizeWeight), sizeWeight, "the demand-size smoothing weight α must be greater than 0 and at most 1");
        }

        double interval = intervalWeight ?? sizeWeight;
        if (!(interval > 0 && interval <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(intervalWeight), interval, "the interval smoothing weight must be greater than 0 and at most 1");
        }

        if (variant is not (CrostonVariant.Classic or CrostonVariant.SyntetosBoylan))
        {
            ThrowHelper.ThrowOutOfRange(nameof(variant), variant, "the variant must be Classic or SyntetosBoylan");
        }

        SizeWeight = sizeWeight;
        IntervalWeight = interval;
        Variant = variant;
    }

    /// <summary>The smoothing weight α for the demand size z.</summary>
    public double SizeWeight { get; }

    /// <summary>The smoothing weight for the inter-demand interval p (equal to <see cref="SizeWeight"/> unless given).</summary>
    public double IntervalWeight { get; }

    /// <summary>Classic Croston or the Syntetos–Boylan approximation.</summary>
    public CrostonVariant Variant { get; }

    /// <summary>
    /// The factor applied to z/p: 1 for <see cref="CrostonVariant.Classic"/>, 1 − <see cref="IntervalWeight"/>/2 for
    /// <see cref="CrostonVariant.SyntetosBoylan"/> (see the remarks on <see cref="CrostonOptions"/> for why the interval weight).
    /// </summary>
    public double BiasFactor => Variant == CrostonVariant.SyntetosBoylan ? 1 - (IntervalWeight / 2) : 1.0;

    /// <inheritdoc/>
    public override string MethodName
    {
        get
        {
            string name = Variant == CrostonVariant.SyntetosBoylan ? "SBA" : "Croston";
            return SizeWeight == IntervalWeight
                ? string.Create(CultureInfo.InvariantCulture, $"{name}({SizeWeight})")
                : string.Create(CultureInfo.InvariantCulture, $"{name}({SizeWeight}, {IntervalWeight})");
        }
    }

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new Croston(this);
}

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
