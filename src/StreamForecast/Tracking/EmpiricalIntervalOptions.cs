using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <summary>
/// Prediction intervals from a series' own recent errors instead of a normal σ: for horizon h the interval is
/// [F + q(a/2), F + q(1 − a/2)], F the point forecast, q the quantiles of the last <see cref="Window"/> h-step errors
/// (actual − the forecast made h periods earlier for that period), a = 1 − <see cref="Coverage"/>.
/// </summary>
/// <remarks>
/// <para><b>Quantiles.</b> Exact order statistics of a fixed window, interpolated as definition 6 of Hyndman &amp; Fan
/// (1996, The American Statistician 50:361–365; the NIST e-Handbook's percentile, MathNet.Numerics'
/// <c>QuantileDefinition.R6</c>): with the n errors sorted x₁ ≤ … ≤ xₙ, q(p) sits at rank (n + 1)·p. For errors that are
/// exchangeable (independent and identically distributed), a new error falls below the k-th of n with probability
/// k/(n + 1), so this rank gives an interval whose expected coverage is the nominal one at every window length.</para>
/// <para><b>Cost.</b> Per series and published horizon (the next period, and <see cref="Streaming.SeriesOptions.Horizon"/>
/// when above 1): 16·<see cref="Window"/> bytes (the errors in arrival order and sorted), plus 8·h bytes for the
/// forecasts waiting h periods for their actual. Each period inserts one error and removes the oldest by binary search
/// and a block move: O(<see cref="Window"/>) with a small constant, no allocation; reading a quantile is O(1).</para>
/// <para><b>Warm-up.</b> Until a horizon has <see cref="MinimumErrors"/> errors its interval is the normal one of the
/// same nominal coverage (z = Φ⁻¹((1 + c)/2)), and the published point says <see cref="IntervalKind.Normal"/>.
/// <see cref="Streaming.SeriesStep{TKey}.Acknowledge(long, Streaming.ISeriesSink{TKey})"/> empties the error windows along with the other error
/// statistics; the waiting forecasts are kept.</para>
/// <para>Immutable and thread-safe; validated at construction.</para>
/// </remarks>
public sealed record EmpiricalIntervalOptions
{
    /// <summary>The default nominal coverage: 0.8.</summary>
    public const double DefaultCoverage = 0.8;

    /// <summary>The default window: the last 100 errors per horizon.</summary>
    public const int DefaultWindow = 100;

    /// <summary>The default fewest errors before the empirical interval is used: 20 (more when the coverage needs it).</summary>
    public const int DefaultMinimumErrors = 20;

    /// <summary>Creates empirical-interval options.</summary>
    /// <param name="coverage">The nominal coverage c, above 0 and at most 0.999 (default 0.8).</param>
    /// <param name="window">How many recent errors per horizon are kept (default 100, up to 10,000, at least <paramref name="minimumErrors"/>).</param>
    /// <param name="minimumErrors">
    /// How many errors a horizon needs before its interval is empirical (default: the larger of 20 and the fewest that
    /// place both quantile ranks inside the data, ⌈2/(1 − c)⌉ − 1). Not below that fewest.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A value is outside its stated range.</exception>
    public EmpiricalIntervalOptions(double coverage = DefaultCoverage, int window = DefaultWindow, int? minimumErrors = null)
    {
        if (!(coverage > 0 && coverage <= 0.999))
        {
            ThrowHelper.ThrowOutOfRange(nameof(coverage), coverage, "the nominal coverage must be above 0 and at most 0.999 (0.8 for an 80% interval)");
        }

        // Rank (n + 1)·a/2 ≥ 1 keeps the lower quantile at or above the smallest error (and the upper, symmetrically, at or
        // below the largest); fewer errors would clamp the interval to the range of the data.
        int fewest = (int)Math.Ceiling((2 / (1 - coverage)) - 1 - 1e-9);
        int minimum = minimumErrors ?? Math.Max(DefaultMinimumErrors, fewest);
        if (minimum < fewest || minimum > 10_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(minimumErrors), minimum, string.Create(CultureInfo.InvariantCulture,
                $"at coverage {coverage} the empirical interval needs at least {fewest} errors (and at most 10,000)"));
        }

        if (window < minimum || window > 10_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(window), window, string.Create(CultureInfo.InvariantCulture,
                $"the error window must hold between the minimum number of errors ({minimum}) and 10,000 errors"));
        }

        Coverage = coverage;
        Window = window;
        MinimumErrors = minimum;
        LowerProbability = (1 - coverage) / 2;
        UpperProbability = (1 + coverage) / 2;
        FallbackMultiplier = NormalCoverage.MultiplierFor(coverage);
    }

    /// <summary>The nominal coverage c of the intervals.</summary>
    public double Coverage { get; }

    /// <summary>How many recent errors per horizon are kept.</summary>
    public int Window { get; }

    /// <summary>How many errors a horizon needs before its interval is empirical.</summary>
    public int MinimumErrors { get; }

    /// <summary>The probability of the lower quantile, (1 − c)/2.</summary>
    internal double LowerProbability { get; }

    /// <summary>The probability of the upper quantile, (1 + c)/2.</summary>
    internal double UpperProbability { get; }

    /// <summary>The normal multiplier of the same coverage, used during warm-up.</summary>
    internal double FallbackMultiplier { get; }

    /// <summary>Equal when coverage, window and minimum are equal.</summary>
    /// <param name="other">The other options.</param>
    /// <returns>Whether both describe the same intervals.</returns>
    public bool Equals(EmpiricalIntervalOptions? other) =>
        other is not null && Coverage.Equals(other.Coverage) && Window == other.Window && MinimumErrors == other.MinimumErrors;

    /// <inheritdoc/>
    public override int GetHashCode() => HashCode.Combine(Coverage, Window, MinimumErrors);
}
