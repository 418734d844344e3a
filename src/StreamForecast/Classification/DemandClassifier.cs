using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Classification;

/// <summary>
/// Classifies a demand series as smooth, erratic, intermittent or lumpy after Syntetos, Boylan &amp; Croston (2005,
/// Journal of the Operational Research Society 56:495–503), and suggests forecasting methods for each class.
/// </summary>
/// <remarks>
/// <para><b>Statistics (conventions of this library).</b> Let the series have n periods with non-zero demand, at
/// positions t₁ &lt; t₂ &lt; … &lt; tₙ, with sizes y₁ … yₙ.</para>
/// <list type="bullet">
/// <item><description>ADI, the average inter-demand interval, is the mean of the n − 1 intervals between consecutive
/// demand periods, (tₙ − t₁)/(n − 1). The zeros before the first demand and after the last one are not counted:
/// they are intervals cut off by the start and end of the data, whose true length is unknown. A series with demand
/// in every period has ADI 1.</description></item>
/// <item><description>CV² is the sample variance of the sizes (divisor n − 1, the unbiased estimator) divided by the
/// square of their mean. Zero demand is not a size.</description></item>
/// <item><description>Both need n ≥ 2; with fewer demand periods the class is <see cref="DemandClass.Undetermined"/>
/// and both statistics are NaN.</description></item>
/// <item><description>Cut-offs are inclusive on the upper side: ADI ≥ 1.32 is infrequent (intermittent or lumpy),
/// CV² ≥ 0.49 is variable (erratic or lumpy).</description></item>
/// </list>
/// <para><b>Thread safety.</b> All members are static and thread-safe.</para>
/// </remarks>
public static class DemandClassifier
{
    /// <summary>Classifies a whole demand series with the published cut-offs.</summary>
    /// <param name="demand">One demand per period, oldest first: finite and zero or more.</param>
    /// <returns>The classification; <see cref="DemandClass.Undetermined"/> with fewer than two demand periods.</returns>
    /// <exception cref="ArgumentOutOfRangeException">A value is NaN, infinite or negative.</exception>
    /// <remarks>O(n), allocation-free.</remarks>
    public static DemandClassification Classify(ReadOnlySpan<double> demand) => Classify(demand, DemandClassifierOptions.Default);

    /// <summary>Classifies a whole demand series with the given cut-offs.</summary>
    /// <param name="demand">One demand per period, oldest first: finite and zero or more.</param>
    /// <param name="options">The cut-offs.</param>
    /// <returns>The classification; <see cref="DemandClass.Undetermined"/> with fewer than two demand periods.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value is NaN, infinite or negative.</exception>
    /// <remarks>O(n), allocation-free.</remarks>
    public static DemandClassification Classify(ReadOnlySpan<double> demand, DemandClassifierOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var moments = default(DemandMoments);
        for (int i = 0; i < demand.Length; i++)
        {
            double y = demand[i];
            if (!(y >= 0) || double.IsPositiveInfinity(y))
            {
                ThrowHelper.ThrowOutOfRange(nameof(demand), y, string.Create(CultureInfo.InvariantCulture, $"demand {i} (counting from 0) must be finite and zero or more"));
            }

            moments.Add(y);
        }

        return moments.Classify(options);
    }

    /// <summary>Forecasting methods commonly used for a demand class.</summary>
    /// <param name="demandClass">The class.</param>
    /// <returns>
    /// Smooth: <see cref="SuggestedMethods.ExponentialSmoothing"/> and <see cref="SuggestedMethods.Croston"/>.
    /// Erratic: <see cref="SuggestedMethods.SyntetosBoylan"/>. Intermittent and lumpy:
    /// <see cref="SuggestedMethods.SyntetosBoylan"/> and <see cref="SuggestedMethods.Tsb"/>. Undetermined:
    /// <see cref="SuggestedMethods.None"/>.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="demandClass"/> is not a defined class.</exception>
    /// <remarks>
    /// Advice, not a rule: this is common practice. Syntetos, Boylan &amp; Croston (2005) set their cut-offs where
    /// Croston's method and its Syntetos–Boylan correction trade places, with Croston ahead for smooth demand and the
    /// correction ahead in the other three classes (from memory); ordinary exponential smoothing is the usual choice
    /// for smooth demand, and TSB where an item may stop selling, since its forecast decays.
    /// </remarks>
    public static SuggestedMethods SuggestMethods(DemandClass demandClass) => demandClass switch
    {
        DemandClass.Undetermined => SuggestedMethods.None,
        DemandClass.Smooth => SuggestedMethods.ExponentialSmoothing | SuggestedMethods.Croston,
        DemandClass.Erratic => SuggestedMethods.SyntetosBoylan,
        DemandClass.Intermittent or DemandClass.Lumpy => SuggestedMethods.SyntetosBoylan | SuggestedMethods.Tsb,
        _ => throw new ArgumentOutOfRangeException(nameof(demandClass), demandClass,
            "The demand class must be Undetermined, Smooth, Erratic, Intermittent or Lumpy."),
    };
}
