using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// How Holt's linear trend method gets its first level and trend. The sources differ: NIST starts the level at
/// the first actual with an initial trend b₁ (given, or from the first differences); FPP 1st ed. puts ℓ₀ = y₁ and
/// b₀ = y₂ − y₁ before the data and smooths from y₁ on. Each rule is its own factory.
/// </summary>
/// <remarks>
/// <para>Indexing: NIST's S(t), b(t) are the level and trend after actual t, as are FPP's ℓ(t), b(t); FPP's
/// ℓ₀, b₀ come before the first actual.</para>
/// <para>Immutable and thread-safe. <c>default(HoltStart)</c> is <see cref="FirstTwoActuals"/>.</para>
/// </remarks>
public readonly record struct HoltStart
{
    /// <summary>The largest number of differences <see cref="MeanOfFirstDifferences"/> may average.</summary>
    public const int MaxDifferences = 1_000_000;

    private readonly int _differences;
    private readonly double _level;
    private readonly double _trend;

    private HoltStart(HoltStartKind kind, int differences, double level, double trend)
    {
        Kind = kind;
        _differences = differences;
        _level = level;
        _trend = trend;
    }

    /// <summary>
    /// The FPP 1st ed. rule (Hyndman &amp; Athanasopoulos, <i>Forecasting: Principles and Practice</i>, §7.2, section number from memory):
    /// ℓ₀ = y₁ and b₀ = y₂ − y₁, then the smoothing equations run over y₁, y₂, … from the first actual on. The
    /// forecaster waits for y₂, then applies the equations to y₁ and y₂ together; it is warm after two actuals and
    /// its first forecast is for period 3 (FPP's in-sample ŷ₁ and ŷ₂ use y₂ before it is observed).
    /// </summary>
    public static HoltStart FirstTwoActuals => default;

    /// <summary>
    /// The NIST rule with the initial trend from the data (NIST/SEMATECH e-Handbook §6.4.3.3): S₁ = y₁ and
    /// b₁ = the mean of the first <paramref name="differences"/> differences, (y(d+1) − y₁)/d, then the equations
    /// run from y₂ on. NIST shows d = 1 and d = 3 (its worked example, b₁ = 0.8).
    /// </summary>
    /// <param name="differences">The number of differences d averaged, 1 to <see cref="MaxDifferences"/>.</param>
    /// <returns>The start rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="differences"/> is out of range.</exception>
    /// <remarks>
    /// b₁ needs y(d+1), so the forecaster is warm after d + 1 actuals and its first forecast is F(d+2). NIST's table
    /// also prints the in-sample forecasts F₂ … F(d+1), which use b₁ and so the later actuals y₂ … y(d+1); a stream
    /// cannot issue them before those actuals, but from period d + 2 on the forecasts are NIST's exactly. Until
    /// y(d+1) arrives, the forecaster carries the level and trend as linear functions of the not-yet-known b₁
    /// (the equations are linear), so every update stays O(1) without buffering.
    /// </remarks>
    public static HoltStart MeanOfFirstDifferences(int differences)
    {
        if (differences is < 1 or > MaxDifferences)
        {
            ThrowHelper.ThrowOutOfRange(nameof(differences), differences, "the number of differences to average must be between 1 and 1,000,000");
        }

        return new HoltStart(HoltStartKind.MeanOfFirstDifferences, differences, 0, 0);
    }

    /// <summary>
    /// The NIST rule with a given initial trend (NIST/SEMATECH e-Handbook §6.4.3.3): S₁ = y₁ and b₁ =
    /// <paramref name="trend"/>; warm after the first actual, whose forecast for period 2 is F₂ = S₁ + φ·b₁.
    /// </summary>
    /// <param name="trend">The initial trend b₁ per period; must be finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>.</param>
    /// <returns>The start rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="trend"/> is NaN, infinite or beyond <see cref="NumericDomain.MaxMagnitude"/>.</exception>
    public static HoltStart FirstActualAndTrend(double trend)
    {
        ThrowHelper.CheckInDomain(trend, nameof(trend), "the initial trend");

        return new HoltStart(HoltStartKind.FirstActualAndTrend, 0, 0, trend);
    }

    /// <summary>
    /// The level ℓ₀ and trend b₀ are given before any actual (as FPP 1st ed. does with optimised starting
    /// values). The forecaster is warm immediately (<see cref="Forecaster.IsWarm"/> is true at
    /// <see cref="Forecaster.Count"/> 0) and the equations run from y₁ on.
    /// </summary>
    /// <param name="level">The starting level ℓ₀; must be finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>.</param>
    /// <param name="trend">The starting trend b₀; must be finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>.</param>
    /// <returns>The start rule.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="level"/> or <paramref name="trend"/> is NaN, infinite or beyond <see cref="NumericDomain.MaxMagnitude"/>.</exception>
    public static HoltStart Given(double level, double trend)
    {
        ThrowHelper.CheckInDomain(level, nameof(level), "the given starting level");
        ThrowHelper.CheckInDomain(trend, nameof(trend), "the given starting trend");

        return new HoltStart(HoltStartKind.Given, 0, level, trend);
    }

    /// <summary>Which rule this is.</summary>
    public HoltStartKind Kind { get; }

    /// <summary>How many actuals the forecaster takes before its first forecast: 2, d + 1, 1, or 0 for given values.</summary>
    public int WarmUpLength => Kind switch
    {
        HoltStartKind.MeanOfFirstDifferences => _differences + 1,
        HoltStartKind.FirstActualAndTrend => 1,
        HoltStartKind.Given => 0,
        _ => 2,
    };

    /// <summary>The number of differences d for <see cref="HoltStartKind.MeanOfFirstDifferences"/>; <see langword="null"/> otherwise.</summary>
    public int? Differences => Kind == HoltStartKind.MeanOfFirstDifferences ? _differences : null;

    /// <summary>The given level ℓ₀ for <see cref="HoltStartKind.Given"/>; <see langword="null"/> otherwise.</summary>
    public double? Level => Kind == HoltStartKind.Given ? _level : null;

    /// <summary>The given trend (b₁ or b₀) for <see cref="HoltStartKind.FirstActualAndTrend"/> and <see cref="HoltStartKind.Given"/>; <see langword="null"/> otherwise.</summary>
    public double? Trend => Kind is HoltStartKind.FirstActualAndTrend or HoltStartKind.Given ? _trend : null;

    /// <summary>A short label for the rule.</summary>
    /// <returns>The label.</returns>
    public override string ToString() => Kind switch
    {
        HoltStartKind.MeanOfFirstDifferences => string.Create(CultureInfo.InvariantCulture, $"mean of {_differences} differences"),
        HoltStartKind.FirstActualAndTrend => string.Create(CultureInfo.InvariantCulture, $"first actual, trend {_trend}"),
        HoltStartKind.Given => string.Create(CultureInfo.InvariantCulture, $"level {_level}, trend {_trend}"),
        _ => "first two",
    };
}
