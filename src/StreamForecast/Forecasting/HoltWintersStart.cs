using System.Collections.Immutable;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// How the Holt-Winters method gets its first level, trend and seasonal indices. Create one with
/// <see cref="SeasonMeans"/> (the default), <see cref="ClassicalDecomposition"/> or <see cref="Given"/>.
/// </summary>
/// <remarks>
/// <para>The two rules computed from the data use the first c = <see cref="HoltWintersOptions.StartSeasons"/> whole
/// seasons, put the start state at period m (the end of the first season) and then run the actuals m+1 … c·m through the
/// equations, so the forecaster is warm after c·m actuals. A given start is the state before the first actual: the
/// forecaster is warm at once and every actual passes through the equations.</para>
/// <para><b>Normalisation policy.</b> Both computed rules return indices that sum to 0 (additive) or average 1
/// (multiplicative): the classical decomposition rescales them explicitly, the season-means rule gets there by
/// construction (within each season the ratios to, or differences from, its own mean average 1 or 0). Given indices are used exactly as given and never rescaled: give indices that sum to 0
/// (additive) or average 1 (multiplicative) to follow the usual convention (common practice); other values are
/// accepted because a fitted or carried-over state need not be normalised.</para>
/// <para>Immutable and thread-safe. <c>default(HoltWintersStart)</c> is <see cref="SeasonMeans"/>. Two starts are equal
/// when their kinds and every given number are equal.</para>
/// </remarks>
public readonly record struct HoltWintersStart
{
    private readonly double _level;
    private readonly double _trend;
    private readonly ImmutableArray<double> _indices;

    private HoltWintersStart(HoltWintersStartKind kind, double level, double trend, ImmutableArray<double> indices)
    {
        Kind = kind;
        _level = level;
        _trend = trend;
        _indices = indices;
    }

    /// <summary>
    /// The season-means rule (NIST/SEMATECH e-Handbook §6.4.3.5, see <see cref="HoltWintersOptions"/>): level A₁ (the mean of
    /// the first season), trend (A₂ − A₁)/m, index i the mean over the c seasons of y/A_p or y − A_p. The default.
    /// </summary>
    public static HoltWintersStart SeasonMeans => default;

    /// <summary>
    /// Classical decomposition of the first c seasons: a centred moving average over one season (2×m for even m, m for odd
    /// m) estimates the trend-cycle; the actuals less (or divided by) it give the detrended values; the seasonal index of
    /// each position is the mean of its detrended values, normalised to sum to 0 (additive) or average 1
    /// (multiplicative); a least-squares line through the centred averages gives the trend (its slope) and the level (its
    /// value at period m).
    /// </summary>
    /// <remarks>
    /// <para>Sources: the decomposition is the textbook classical decomposition (Hyndman &amp; Athanasopoulos,
    /// <i>Forecasting: Principles and Practice</i>, 2nd ed., §6.3, section number from memory); fitting the level and trend
    /// by a straight line through the trend-cycle of the first seasons is the start the R function <c>HoltWinters</c> uses
    /// (its documentation, from memory). With c = 2 and m = 12 the centred average has 12 values, at periods 7 … 18.</para>
    /// <para>The regression's value is taken at period m, where the start state sits; a line evaluated at the first
    /// centred average instead would differ by (m/2)·slope in the level, which the level weight washes out within a few
    /// seasons.</para>
    /// </remarks>
    public static HoltWintersStart ClassicalDecomposition => new(HoltWintersStartKind.ClassicalDecomposition, 0, 0, default);

    /// <summary>
    /// The level ℓ₀, trend b₀ and seasonal indices s(1−m) … s(0) are given before any actual (as a fitted state-space model
    /// estimates them). The forecaster is warm at once (<see cref="Forecaster.IsWarm"/> is true at
    /// <see cref="Forecaster.Count"/> 0); its first forecast is F(1) = ℓ₀ + φ·b₀ + s(1−m) (additive) or (ℓ₀ + φ·b₀)·s(1−m)
    /// (multiplicative).
    /// </summary>
    /// <param name="level">The start level ℓ₀; finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>, and above 0 for multiplicative seasonality.</param>
    /// <param name="trend">The start trend b₀ per period; finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>.</param>
    /// <param name="seasonalIndices">
    /// The m indices, the one for period 1 first (period t uses index (t − 1) mod m); each finite, of magnitude at most
    /// <see cref="NumericDomain.MaxMagnitude"/>, and above 0 for multiplicative seasonality. Copied; used as given (see the
    /// normalisation policy in the remarks). Their count must equal the season length, which
    /// <see cref="HoltWintersOptions"/> checks.
    /// </param>
    /// <returns>The start rule.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="seasonalIndices"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value is NaN, infinite or beyond <see cref="NumericDomain.MaxMagnitude"/>, or fewer than 2 or more than <see cref="HoltWintersOptions.MaxSeasonLength"/> indices are given.</exception>
    public static HoltWintersStart Given(double level, double trend, IReadOnlyList<double> seasonalIndices)
    {
        ArgumentNullException.ThrowIfNull(seasonalIndices);
        ThrowHelper.CheckInDomain(level, nameof(level), "the given start level");
        ThrowHelper.CheckInDomain(trend, nameof(trend), "the given start trend");
        if (seasonalIndices.Count is < 2 or > HoltWintersOptions.MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonalIndices), seasonalIndices.Count, "give one seasonal index per season position (2 to 100,000 of them)");
        }

        var copy = ImmutableArray.CreateBuilder<double>(seasonalIndices.Count);
        for (int i = 0; i < seasonalIndices.Count; i++)
        {
            ThrowHelper.CheckInDomain(seasonalIndices[i], nameof(seasonalIndices), string.Create(CultureInfo.InvariantCulture, $"given seasonal index {i + 1}"));
            copy.Add(seasonalIndices[i]);
        }

        return new HoltWintersStart(HoltWintersStartKind.Given, level, trend, copy.MoveToImmutable());
    }

    /// <summary>Which rule this is.</summary>
    public HoltWintersStartKind Kind { get; }

    /// <summary>The given level ℓ₀ for <see cref="HoltWintersStartKind.Given"/>; <see langword="null"/> otherwise.</summary>
    public double? Level => Kind == HoltWintersStartKind.Given ? _level : null;

    /// <summary>The given trend b₀ for <see cref="HoltWintersStartKind.Given"/>; <see langword="null"/> otherwise.</summary>
    public double? Trend => Kind == HoltWintersStartKind.Given ? _trend : null;

    /// <summary>The given seasonal indices (period 1's first) for <see cref="HoltWintersStartKind.Given"/>; empty otherwise.</summary>
    public ImmutableArray<double> SeasonalIndices => _indices.IsDefault ? [] : _indices;

    /// <summary>Equal when the kinds and every given number are equal (the indices element by element).</summary>
    /// <param name="other">The other start.</param>
    /// <returns>Whether both describe the same start.</returns>
    public bool Equals(HoltWintersStart other) =>
        Kind == other.Kind
        && _level.Equals(other._level)
        && _trend.Equals(other._trend)
        && SeasonalIndices.AsSpan().SequenceEqual(other.SeasonalIndices.AsSpan());

    /// <inheritdoc/>
    public override int GetHashCode()
    {
        var hash = default(HashCode);
        hash.Add(Kind);
        hash.Add(_level);
        hash.Add(_trend);
        foreach (double s in SeasonalIndices)
        {
            hash.Add(s);
        }

        return hash.ToHashCode();
    }

    /// <summary>A short label for the rule.</summary>
    /// <returns>The label.</returns>
    public override string ToString() => Kind switch
    {
        HoltWintersStartKind.ClassicalDecomposition => "classical decomposition",
        HoltWintersStartKind.Given => string.Create(CultureInfo.InvariantCulture, $"given level {_level}, trend {_trend}, {SeasonalIndices.Length} indices"),
        _ => "season means",
    };
}
