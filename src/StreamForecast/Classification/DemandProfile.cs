using StreamForecast.Internal;

namespace StreamForecast.Classification;

/// <summary>
/// Classifies a streaming demand series: takes one period's demand at a time with <see cref="Add"/> and gives the same
/// <see cref="DemandClassification"/> as <see cref="DemandClassifier.Classify(ReadOnlySpan{double})"/> on everything
/// added so far.
/// </summary>
/// <remarks>
/// <para><b>Cost.</b> O(1) and allocation-free per <see cref="Add"/> and per <see cref="Classify()"/>: the profile keeps
/// counts, the positions of the first and last demand, and the mean and sum of squared deviations of the non-zero
/// sizes by Welford's single-pass algorithm (numerically stable; no stored history).</para>
/// <para><b>Warm-up.</b> The class is <see cref="DemandClass.Undetermined"/> until two periods with demand have been
/// added.</para>
/// <para><b>Bad input.</b> NaN, infinities and negative demand are rejected with
/// <see cref="ArgumentOutOfRangeException"/>; the profile is left unchanged.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class DemandProfile
{
    private DemandMoments _moments;

    /// <summary>The number of periods added, with or without demand.</summary>
    public long Periods => _moments.Periods;

    /// <summary>The number of periods added with non-zero demand.</summary>
    public long DemandPeriods => _moments.DemandPeriods;

    /// <summary>Adds the demand of the period that just closed.</summary>
    /// <param name="demand">The period's demand: finite and zero or more.</param>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="demand"/> is NaN, infinite or negative. The profile is unchanged.
    /// </exception>
    /// <remarks>O(1), allocation-free. Not thread-safe.</remarks>
    public void Add(double demand)
    {
        if (!double.IsFinite(demand))
        {
            ThrowHelper.ThrowNonFiniteActual(demand, nameof(demand));
        }

        if (demand < 0)
        {
            ThrowHelper.ThrowOutOfRange(nameof(demand), demand, "demand must be zero or more; the profile is unchanged");
        }

        _moments.Add(demand);
    }

    /// <summary>Classifies the demand added so far with the published cut-offs (<see cref="DemandClassifierOptions.Default"/>).</summary>
    /// <returns>The classification; <see cref="DemandClass.Undetermined"/> with fewer than two demand periods.</returns>
    /// <remarks>O(1), allocation-free; does not change the profile.</remarks>
    public DemandClassification Classify() => _moments.Classify(DemandClassifierOptions.Default);

    /// <summary>Classifies the demand added so far with the given cut-offs.</summary>
    /// <param name="options">The cut-offs.</param>
    /// <returns>The classification; <see cref="DemandClass.Undetermined"/> with fewer than two demand periods.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    /// <remarks>O(1), allocation-free; does not change the profile.</remarks>
    public DemandClassification Classify(DemandClassifierOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        return _moments.Classify(options);
    }

    /// <summary>Forgets every period added: the profile is as if just created.</summary>
    public void Reset() => _moments = default;
}
