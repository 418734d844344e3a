using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// How single exponential smoothing gets its first level, the value every later level is smoothed from.
/// Create one with <see cref="FirstActual"/> (the default), <see cref="MeanOfFirst"/> or <see cref="Given"/>.
/// </summary>
/// <remarks>
/// <para>The three rules differ only in what the forecaster knows before the smoothing equation
/// ℓ(t) = α·y(t) + (1−α)·ℓ(t−1) takes over, and so in how many actuals it needs before its first forecast
/// (<see cref="WarmUpLength"/>).</para>
/// <para>Immutable and thread-safe. <c>default(LevelStart)</c> is <see cref="FirstActual"/>.</para>
/// </remarks>
public readonly record struct LevelStart
{
    /// <summary>The largest number of actuals <see cref="MeanOfFirst"/> may average.</summary>
    public const int MaxCount = 1_000_000;

    private readonly int _count;
    private readonly double _level;

    private LevelStart(LevelStartKind kind, int count, double level)
    {
        Kind = kind;
        _count = count;
        _level = level;
    }

    /// <summary>
    /// The NIST convention: the first forecast equals the first actual. The first actual becomes the level, so the
    /// forecaster is warm after one actual and its errors start at period 2.
    /// </summary>
    /// <remarks>
    /// NIST/SEMATECH e-Handbook of Statistical Methods §6.4.3.1 sets S₂ = y₁ (S(t) there is the forecast for
    /// period t). Hyndman &amp; Athanasopoulos, <i>Forecasting: Principles and Practice</i> (1st ed.) §7.1 sets
    /// ℓ₀ = y₁ and smooths from y₁ on; that gives ℓ₁ = α·y₁ + (1−α)·y₁ = y₁ and hence the same forecasts, with one
    /// extra zero error at period 1. Equal to <c>MeanOfFirst(1)</c>.
    /// </remarks>
    public static LevelStart FirstActual => default;

    /// <summary>
    /// The first level is the mean of the first <paramref name="count"/> actuals; the forecaster is warm after
    /// them, and the ordinary smoothing equation takes every actual from number <paramref name="count"/> + 1 on.
    /// The first <paramref name="count"/> actuals enter only through their mean; they are not smoothed again.
    /// </summary>
    /// <param name="count">How many actuals to average, 1 to <see cref="MaxCount"/>. 1 gives <see cref="FirstActual"/>.</param>
    /// <returns>The start rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="count"/> is out of range.</exception>
    /// <remarks>Averaging the first actuals is a common practice for a less noisy start. The mean is a
    /// compensated running sum, O(1) per actual.</remarks>
    public static LevelStart MeanOfFirst(int count)
    {
        if (count is < 1 or > MaxCount)
        {
            ThrowHelper.ThrowOutOfRange(nameof(count), count, "the number of actuals to average must be between 1 and 1,000,000");
        }

        return count == 1 ? default : new LevelStart(LevelStartKind.MeanOfFirst, count, 0);
    }

    /// <summary>
    /// The caller gives the level ℓ₀ before any actual (FPP 1st ed. §7.1 shows ℓ₀ chosen by optimisation). The
    /// forecaster is warm immediately (<see cref="Forecaster.IsWarm"/> is true at <see cref="Forecaster.Count"/>
    /// 0, forecasting ℓ₀), and the first actual is already smoothed: ℓ₁ = α·y₁ + (1−α)·ℓ₀.
    /// </summary>
    /// <param name="level">The starting level; must be finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>.</param>
    /// <returns>The start rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="level"/> is NaN, infinite or beyond <see cref="NumericDomain.MaxMagnitude"/>.</exception>
    public static LevelStart Given(double level)
    {
        ThrowHelper.CheckInDomain(level, nameof(level), "the given starting level");

        return new LevelStart(LevelStartKind.Given, 0, level);
    }

    /// <summary>Which rule this is.</summary>
    public LevelStartKind Kind { get; }

    /// <summary>How many actuals the forecaster takes before its first forecast: 1, the count averaged, or 0 for a given level.</summary>
    public int WarmUpLength => Kind switch
    {
        LevelStartKind.MeanOfFirst => _count,
        LevelStartKind.Given => 0,
        _ => 1,
    };

    /// <summary>The given starting level for <see cref="LevelStartKind.Given"/>; <see langword="null"/> otherwise.</summary>
    public double? Level => Kind == LevelStartKind.Given ? _level : null;

    /// <summary>A short label: <c>first</c>, <c>mean of k</c> or <c>level x</c>.</summary>
    /// <returns>The label.</returns>
    public override string ToString() => Kind switch
    {
        LevelStartKind.MeanOfFirst => string.Create(CultureInfo.InvariantCulture, $"mean of {_count}"),
        LevelStartKind.Given => string.Create(CultureInfo.InvariantCulture, $"level {_level}"),
        _ => "first",
    };
}
