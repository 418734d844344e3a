using System.Collections.Immutable;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for the Holt-Winters seasonal method (triple exponential smoothing), additive or multiplicative,
/// optionally with a damped trend. With α the level weight, β the trend weight, γ the seasonal weight, φ the
/// damping, m the season length and s(t−m) the index of the same season one season back:
/// <para>Additive: ℓ(t) = α·(y(t) − s(t−m)) + (1−α)·(ℓ(t−1) + φ·b(t−1)); s(t) = γ·(y(t) − ℓ(t)) + (1−γ)·s(t−m);
/// F(t+h) = ℓ(t) + φ_h·b(t) + s(t+h−m(k+1)).</para>
/// <para>Multiplicative: ℓ(t) = α·y(t)/s(t−m) + (1−α)·(ℓ(t−1) + φ·b(t−1)); s(t) = γ·y(t)/ℓ(t) + (1−γ)·s(t−m);
/// F(t+h) = (ℓ(t) + φ_h·b(t))·s(t+h−m(k+1)).</para>
/// <para>Both: b(t) = β·(ℓ(t) − ℓ(t−1)) + (1−β)·φ·b(t−1); φ_h = φ + … + φʰ (h when φ = 1); k = ⌊(h−1)/m⌋.</para>
/// </summary>
/// <remarks>
/// <para><b>Sources and letters.</b> The seasonal equation uses the new level ℓ(t), as Winters (1960) and the
/// NIST/SEMATECH e-Handbook §6.4.3.5 do (NIST, multiplicative, from memory: S(t) = α·y(t)/I(t−L) + (1−α)(S(t−1) +
/// b(t−1)), b(t) = γ(S(t) − S(t−1)) + (1−γ)b(t−1), I(t) = β·y(t)/S(t) + (1−β)I(t−L); so NIST α = level weight,
/// NIST γ = trend weight, NIST β = seasonal weight). Hyndman &amp; Athanasopoulos, <i>Forecasting: Principles and
/// Practice</i> (1st ed.) §7.5 (from memory) write the seasonal equation with ℓ(t−1) + b(t−1) in place of ℓ(t) and
/// call the trend weight β*; for additive seasonality that is the same method with FPP's γ = seasonal weight ×
/// (1−α), for multiplicative seasonality the two forms differ slightly. The damped trend is Gardner &amp;
/// McKenzie's (FPP 1st ed. §7.4, from memory).</para>
/// <para><b>Start rule</b> (the default, <see cref="HoltWintersStart.SeasonMeans"/>; <see cref="Start"/> can choose a classical
/// decomposition of the first c seasons or given values instead, see <see cref="HoltWintersStart"/>; from the first c = <see cref="StartSeasons"/> whole seasons, NIST §6.4.3.5 formulas
/// from memory): A_p is the mean of season p; the start level is A₁ and the start trend (A₂ − A₁)/m, which is
/// NIST's (1/m)·Σᵢ (y(m+i) − y(i))/m and uses the first two seasons whatever c is; the start index of season
/// position i is the mean over the c seasons of y/A_p (multiplicative, as NIST) or y − A_p (additive, the same
/// rule with differences; common practice). These values are the state at period m (the classical convention
/// puts the start level A₁ at the end of season 1); the actuals m+1 … c·m then pass through the equations above,
/// as a batch run from period m+1 would. The forecaster is warm after c·m actuals, and every later actual updates
/// the state as it arrives.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record HoltWintersOptions : ForecasterOptions
{
    /// <summary>The largest season length accepted.</summary>
    public const int MaxSeasonLength = 100_000;

    /// <summary>The largest number of start seasons accepted.</summary>
    public const int MaxStartSeasons = 50;

    /// <summary>The largest start window (start seasons × season length) accepted.</summary>
    public const int MaxStartWindow = 1_000_000;

    /// <summary>Creates Holt-Winters options.</summary>
    /// <param name="seasonLength">The season length m in periods, 2 to <see cref="MaxSeasonLength"/>.</param>
    /// <param name="seasonality">Additive or multiplicative seasonal effects.</param>
    /// <param name="levelWeight">The level weight α (NIST α, FPP α), in (0, 1].</param>
    /// <param name="trendWeight">The trend weight (NIST γ, FPP β*), in [0, 1].</param>
    /// <param name="seasonalWeight">The seasonal weight (NIST β; Winters' form, see the remarks), in [0, 1].</param>
    /// <param name="damping">The damping φ, in (0, 1]; the default 1 is the undamped method.</param>
    /// <param name="startSeasons">
    /// The number of whole seasons c the start values come from, 2 (the default) to <see cref="MaxStartSeasons"/>,
    /// with c·m at most <see cref="MaxStartWindow"/>.
    /// </param>
    /// <param name="start">
    /// How the first level, trend and indices are set; the default is <see cref="HoltWintersStart.SeasonMeans"/> (the rule in
    /// the remarks). A given start needs exactly m indices, and for multiplicative seasonality a level and indices above 0; it
    /// takes no start seasons, so <paramref name="startSeasons"/> must stay 2.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A parameter is out of range or NaN.</exception>
    /// <exception cref="ArgumentException">A given start does not fit the season length, the seasonality or the start seasons.</exception>
    public HoltWintersOptions(
        int seasonLength,
        Seasonality seasonality,
        double levelWeight,
        double trendWeight,
        double seasonalWeight,
        double damping = 1.0,
        int startSeasons = 2,
        HoltWintersStart start = default)
    {
        if (seasonLength is < 2 or > MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonLength), seasonLength, "the season length m must be between 2 and 100,000 periods");
        }

        if (seasonality is not (Seasonality.Additive or Seasonality.Multiplicative))
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonality), seasonality, "the seasonality must be Additive or Multiplicative");
        }

        if (!(levelWeight > 0 && levelWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(levelWeight), levelWeight, "the level weight (alpha) must be greater than 0 and at most 1");
        }

        if (!(trendWeight >= 0 && trendWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(trendWeight), trendWeight, "the trend weight must be between 0 and 1");
        }

        if (!(seasonalWeight >= 0 && seasonalWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonalWeight), seasonalWeight, "the seasonal weight must be between 0 and 1");
        }

        if (!(damping > 0 && damping <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(damping), damping, "the damping (phi) must be greater than 0 and at most 1; 1 means no damping");
        }

        if (startSeasons is < 2 or > MaxStartSeasons)
        {
            ThrowHelper.ThrowOutOfRange(nameof(startSeasons), startSeasons, "the number of start seasons must be between 2 and 50");
        }

        if ((long)startSeasons * seasonLength > MaxStartWindow)
        {
            ThrowHelper.ThrowOutOfRange(nameof(startSeasons), startSeasons,
                string.Create(CultureInfo.InvariantCulture, $"start seasons × season length ({seasonLength}) must be at most 1,000,000 periods"));
        }

        if (start.Kind == HoltWintersStartKind.Given)
        {
            CheckGivenStart(start, seasonLength, seasonality, startSeasons);
        }
        else if (start.Kind != HoltWintersStartKind.SeasonMeans && start.Kind != HoltWintersStartKind.ClassicalDecomposition)
        {
            ThrowHelper.ThrowOutOfRange(nameof(start), start.Kind, "the start must be SeasonMeans, ClassicalDecomposition or Given");
        }

        SeasonLength = seasonLength;
        Seasonality = seasonality;
        LevelWeight = levelWeight;
        TrendWeight = trendWeight;
        SeasonalWeight = seasonalWeight;
        Damping = damping;
        StartSeasons = startSeasons;
        Start = start;
    }

    /// <summary>The season length m.</summary>
    public int SeasonLength { get; }

    /// <summary>Additive or multiplicative seasonal effects.</summary>
    public Seasonality Seasonality { get; }

    /// <summary>The level weight α in (0, 1].</summary>
    public double LevelWeight { get; }

    /// <summary>The trend weight in [0, 1] (NIST γ, FPP β*).</summary>
    public double TrendWeight { get; }

    /// <summary>The seasonal weight in [0, 1] (NIST β).</summary>
    public double SeasonalWeight { get; }

    /// <summary>The damping φ in (0, 1]; 1 means no damping.</summary>
    public double Damping { get; }

    /// <summary>The number of whole seasons c the start values come from; the forecaster is warm after c·m actuals.</summary>
    public int StartSeasons { get; }

    /// <summary>How the first level, trend and seasonal indices are set.</summary>
    public HoltWintersStart Start { get; }

    /// <summary>How many actuals the forecaster takes before its first forecast: c·m for a computed start, 0 for a given one.</summary>
    public int WarmUpLength => Start.Kind == HoltWintersStartKind.Given ? 0 : StartSeasons * SeasonLength;

    /// <inheritdoc/>
    public override string MethodName
    {
        get
        {
            string kind = Seasonality == Seasonality.Additive ? "additive" : "multiplicative";
            string damped = Damping == 1.0 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $", damping {Damping}");
            string start = StartSeasons == 2 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $", start {StartSeasons} seasons");
            if (Start.Kind != HoltWintersStartKind.SeasonMeans)
            {
                start += ", " + Start.ToString();
            }

            return string.Create(CultureInfo.InvariantCulture,
                $"HoltWinters({kind}, m {SeasonLength}, {LevelWeight}, {TrendWeight}, {SeasonalWeight}{damped}{start})");
        }
    }

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new HoltWinters(this);

    private static void CheckGivenStart(HoltWintersStart start, int seasonLength, Seasonality seasonality, int startSeasons)
    {
        if (start.SeasonalIndices.Length != seasonLength)
        {
            throw new ArgumentException(string.Create(CultureInfo.InvariantCulture,
                $"The given start has {start.SeasonalIndices.Length} seasonal indices; the season length is {seasonLength}, so give exactly {seasonLength}."), nameof(start));
        }

        if (startSeasons != 2)
        {
            throw new ArgumentException("A given start takes no start seasons; leave startSeasons at 2 (its default) or use a computed start.", nameof(startSeasons));
        }

        if (seasonality != Seasonality.Multiplicative)
        {
            return;
        }

        if (!(start.Level > 0))
        {
            throw new ArgumentException("Multiplicative seasonality needs a given start level above 0.", nameof(start));
        }

        ImmutableArray<double> indices = start.SeasonalIndices;
        for (int i = 0; i < indices.Length; i++)
        {
            if (!(indices[i] > 0))
            {
                throw new ArgumentException(string.Create(CultureInfo.InvariantCulture,
                    $"Multiplicative seasonality needs given seasonal indices above 0; index {i + 1} is {indices[i]}."), nameof(start));
            }
        }
    }
}
