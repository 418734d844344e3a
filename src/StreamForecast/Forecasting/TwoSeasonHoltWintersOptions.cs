using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for Holt-Winters with two seasonal cycles (the trade calls it double seasonal Holt-Winters; Taylor 2003,
/// Journal of the Operational Research Society 54:799–805), for intraday data with a daily and a weekly cycle. With α the
/// level weight, β the trend weight, δ the short-cycle weight, ω the long-cycle weight, m₁ &lt; m₂ the cycle lengths,
/// d the short-cycle and w the long-cycle indices:
/// <para>Multiplicative: ℓ(t) = α·y(t)/(d(t−m₁)·w(t−m₂)) + (1−α)·(ℓ(t−1) + b(t−1));
/// d(t) = δ·y(t)/(ℓ(t)·w(t−m₂)) + (1−δ)·d(t−m₁); w(t) = ω·y(t)/(ℓ(t)·d(t−m₁)) + (1−ω)·w(t−m₂);
/// F(t+h) = (ℓ(t) + h·b(t))·d·w, each index the latest one of the period's position in its cycle.</para>
/// <para>Additive: the same with differences: ℓ(t) = α·(y(t) − d(t−m₁) − w(t−m₂)) + (1−α)·(ℓ(t−1) + b(t−1));
/// d(t) = δ·(y(t) − ℓ(t) − w(t−m₂)) + (1−δ)·d(t−m₁); w(t) = ω·(y(t) − ℓ(t) − d(t−m₁)) + (1−ω)·w(t−m₂);
/// F(t+h) = ℓ(t) + h·b(t) + d + w.</para>
/// <para>Both: b(t) = β·(ℓ(t) − ℓ(t−1)) + (1−β)·b(t−1), or b ≡ 0 without a trend. With the error adjustment λ, the
/// forecast adds λʰ·e(t), where e(t) = y(t) − F(t) is the last one-step error of the forecast <i>without</i> the
/// adjustment (a first-order autoregression of the errors); the adjustment never enters the smoothing equations.</para>
/// </summary>
/// <remarks>
/// <para><b>Sources.</b> The equations are Taylor's (2003) as recalled <i>from memory</i>, without the paper at hand; they are
/// Winters' equations (see <see cref="HoltWintersOptions"/>) with a second index in every ratio. With ω = 0 and neutral
/// long-cycle indices (1 multiplicative, 0 additive) they are exactly <see cref="HoltWintersOptions"/> with season m₁ and
/// no damping, which the tests check bit for bit.</para>
/// <para><b>Cycles.</b> The equations need only m₁ &lt; m₂; m₂ is usually a whole multiple of m₁ (24 and 168 for hourly
/// data), and any other pair is accepted.</para>
/// <para><b>Start rule</b> (ours, a plain decomposition of the first two long cycles; not taken from the paper): the
/// Holt-Winters start of <see cref="HoltWintersOptions"/> with season m₂ and two start seasons gives the level A₁, the
/// trend (A₂ − A₁)/m₂ (0 without a trend) and one combined index c(j) per position j of the long cycle; the short-cycle
/// index of position i is the mean of c(j) over the positions j ≡ i (mod m₁), and the long-cycle index of position j is
/// c(j)/d(j mod m₁) (multiplicative) or c(j) − d(j mod m₁) (additive). These are the state at period m₂; the actuals
/// m₂+1 … 2·m₂ then pass through the equations. The forecaster is warm after 2·m₂ actuals.</para>
/// <para>Immutable and thread-safe. Validated at construction.</para>
/// </remarks>
public sealed record TwoSeasonHoltWintersOptions : ForecasterOptions
{
    /// <summary>Creates options for Holt-Winters with two seasonal cycles.</summary>
    /// <param name="shortCycle">The shorter cycle m₁ in periods (24 for the day in hourly data), 2 or more and below <paramref name="longCycle"/>.</param>
    /// <param name="longCycle">
    /// The longer cycle m₂ in periods (168 for the week in hourly data), above <paramref name="shortCycle"/> and at most
    /// <see cref="HoltWintersOptions.MaxSeasonLength"/>.
    /// </param>
    /// <param name="seasonality">Additive or multiplicative seasonal effects (both cycles alike).</param>
    /// <param name="levelWeight">The level weight α, in (0, 1].</param>
    /// <param name="trendWeight">The trend weight β, in [0, 1]; null means no trend component (b ≡ 0).</param>
    /// <param name="shortCycleWeight">The short-cycle weight δ, in [0, 1].</param>
    /// <param name="longCycleWeight">The long-cycle weight ω, in [0, 1].</param>
    /// <param name="errorAdjustment">
    /// The first-order error adjustment λ, in (−1, 1); 0 (the default) means no adjustment.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A parameter is out of range or NaN.</exception>
    public TwoSeasonHoltWintersOptions(
        int shortCycle,
        int longCycle,
        Seasonality seasonality,
        double levelWeight,
        double? trendWeight,
        double shortCycleWeight,
        double longCycleWeight,
        double errorAdjustment = 0)
    {
        if (shortCycle < 2 || shortCycle >= HoltWintersOptions.MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(shortCycle), shortCycle, "the short cycle m1 must be between 2 and 99,999 periods");
        }

        if (longCycle <= shortCycle || longCycle > HoltWintersOptions.MaxSeasonLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(longCycle), longCycle, "the long cycle m2 must be longer than the short cycle and at most 100,000 periods");
        }

        if (seasonality is not (Seasonality.Additive or Seasonality.Multiplicative))
        {
            ThrowHelper.ThrowOutOfRange(nameof(seasonality), seasonality, "the seasonality must be Additive or Multiplicative");
        }

        if (!(levelWeight > 0 && levelWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(levelWeight), levelWeight, "the level weight (alpha) must be greater than 0 and at most 1");
        }

        if (trendWeight is double beta && !(beta >= 0 && beta <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(trendWeight), beta, "the trend weight must be between 0 and 1, or null for no trend");
        }

        CheckWeight(shortCycleWeight, nameof(shortCycleWeight), "the short-cycle weight must be between 0 and 1");
        CheckWeight(longCycleWeight, nameof(longCycleWeight), "the long-cycle weight must be between 0 and 1");
        if (!(errorAdjustment > -1 && errorAdjustment < 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(errorAdjustment), errorAdjustment, "the error adjustment must be above -1 and below 1; 0 means none");
        }

        ShortCycle = shortCycle;
        LongCycle = longCycle;
        Seasonality = seasonality;
        LevelWeight = levelWeight;
        TrendWeight = trendWeight;
        ShortCycleWeight = shortCycleWeight;
        LongCycleWeight = longCycleWeight;
        ErrorAdjustment = errorAdjustment;
    }

    /// <summary>The shorter cycle m₁ in periods.</summary>
    public int ShortCycle { get; }

    /// <summary>The longer cycle m₂ in periods; the forecaster is warm after 2·m₂ actuals.</summary>
    public int LongCycle { get; }

    /// <summary>Additive or multiplicative seasonal effects.</summary>
    public Seasonality Seasonality { get; }

    /// <summary>The level weight α in (0, 1].</summary>
    public double LevelWeight { get; }

    /// <summary>The trend weight β in [0, 1], or null when the method has no trend component.</summary>
    public double? TrendWeight { get; }

    /// <summary>The short-cycle weight δ in [0, 1].</summary>
    public double ShortCycleWeight { get; }

    /// <summary>The long-cycle weight ω in [0, 1].</summary>
    public double LongCycleWeight { get; }

    /// <summary>The first-order error adjustment λ in (−1, 1); 0 means none.</summary>
    public double ErrorAdjustment { get; }

    /// <inheritdoc/>
    public override string MethodName
    {
        get
        {
            string kind = Seasonality == Seasonality.Additive ? "additive" : "multiplicative";
            string trend = TrendWeight is double beta ? beta.ToString(CultureInfo.InvariantCulture) : "no trend";
            string adjust = ErrorAdjustment == 0 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $", error adjustment {ErrorAdjustment}");
            return string.Create(CultureInfo.InvariantCulture,
                $"TwoSeasonHoltWinters({kind}, m {ShortCycle} and {LongCycle}, {LevelWeight}, {trend}, {ShortCycleWeight}, {LongCycleWeight}{adjust})");
        }
    }

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new TwoSeasonHoltWinters(this);

    private static void CheckWeight(double weight, string name, string allowed)
    {
        if (!(weight >= 0 && weight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(name, weight, allowed);
        }
    }
}
