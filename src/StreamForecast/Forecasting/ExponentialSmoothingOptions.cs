using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for single exponential smoothing: the level ℓ(t) = α·y(t) + (1−α)·ℓ(t−1) is the forecast for every
/// period ahead.
/// </summary>
/// <remarks>
/// <para>Sources: NIST/SEMATECH e-Handbook of Statistical Methods §6.4.3.1–6.4.3.2 (there S(t+1) = α·y(t) +
/// (1−α)·S(t), S(t) being the forecast for period t); Hyndman &amp; Athanasopoulos, <i>Forecasting: Principles
/// and Practice</i> (1st ed.) §7.1 (the level ℓ(t), forecast ŷ(t+h) = ℓ(t)). Both call the weight α.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record ExponentialSmoothingOptions : ForecasterOptions
{
    /// <summary>Creates single exponential smoothing options.</summary>
    /// <param name="alpha">The smoothing weight α given to the newest actual, in (0, 1]; 1 gives the naive forecast.</param>
    /// <param name="start">How the first level is set; the default is <see cref="LevelStart.FirstActual"/> (NIST).</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="alpha"/> is not in (0, 1] (or is NaN).</exception>
    public ExponentialSmoothingOptions(double alpha, LevelStart start = default)
    {
        CheckAlpha(alpha, nameof(alpha));
        Alpha = alpha;
        Start = start;
    }

    /// <summary>The smoothing weight α in (0, 1].</summary>
    public double Alpha { get; }

    /// <summary>The start rule for the first level.</summary>
    public LevelStart Start { get; }

    /// <inheritdoc/>
    public override string MethodName => Start.Kind == LevelStartKind.FirstActual
        ? string.Create(CultureInfo.InvariantCulture, $"SES({Alpha})")
        : string.Create(CultureInfo.InvariantCulture, $"SES({Alpha}, {Start})");

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new ExponentialSmoothing(this);

    /// <summary>
    /// The α whose smoothing has the same average age of data as an <paramref name="length"/>-period moving
    /// average: α = 2/(n+1) (common practice; both average ages are (n−1)/2 = (1−α)/α periods).
    /// </summary>
    /// <param name="length">The moving-average length n, 1 or more (1 gives α = 1).</param>
    /// <returns>2/(n+1), in (0, 1].</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="length"/> is less than 1.</exception>
    public static double AlphaForLength(int length)
    {
        if (length < 1)
        {
            ThrowHelper.ThrowOutOfRange(nameof(length), length, "the moving-average length must be 1 or more");
        }

        return 2.0 / (length + 1.0);
    }

    /// <summary>
    /// The moving-average length with the same average age of data as smoothing with <paramref name="alpha"/>:
    /// n = 2/α − 1 (common practice; the inverse of <see cref="AlphaForLength"/>, not necessarily a whole number).
    /// </summary>
    /// <param name="alpha">The smoothing weight, in (0, 1].</param>
    /// <returns>2/α − 1, at least 1.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="alpha"/> is not in (0, 1].</exception>
    public static double EquivalentLength(double alpha)
    {
        CheckAlpha(alpha, nameof(alpha));
        return (2.0 / alpha) - 1.0;
    }

    private static void CheckAlpha(double alpha, string paramName)
    {
        if (!(alpha > 0 && alpha <= 1))
        {
            ThrowHelper.ThrowOutOfRange(paramName, alpha, "the smoothing weight alpha must be greater than 0 and at most 1");
        }
    }
}
