using System.Collections.Immutable;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// Options for online method selection (<see cref="MethodSelector"/>): the candidate methods run side by side, how recent
/// error is measured, and the hysteresis that keeps the published method from flapping.
/// </summary>
/// <remarks>Immutable and safe to share across threads. Validated at construction.</remarks>
public sealed record MethodSelectorOptions : ForecasterOptions
{
    /// <summary>The most candidates accepted.</summary>
    public const int MaxCandidates = 64;

    /// <summary>The default weight of the newest absolute error: 0.1 (common practice for a smoothed MAD).</summary>
    public const double DefaultErrorWeight = 0.1;

    /// <summary>The default relative margin a challenger must beat the incumbent by: 0.1 (10 %; library default).</summary>
    public const double DefaultMargin = 0.1;

    /// <summary>The default number of consecutive periods a challenger must lead by the margin: 3 (library default).</summary>
    public const int DefaultPeriodsToSwitch = 3;

    /// <summary>The default number of scored periods before a candidate's error counts: 5 (library default).</summary>
    public const int DefaultMinScoredPeriods = 5;

    private readonly ImmutableArray<ForecasterOptions> _candidates;
    private readonly ImmutableArray<string> _candidateNames;

    /// <summary>Creates method-selector options.</summary>
    /// <param name="candidates">
    /// The methods run side by side, 1 to <see cref="MaxCandidates"/>, none null. The order matters: before any error is known,
    /// the first candidate that can forecast is published, and ties go to the earlier candidate.
    /// </param>
    /// <param name="errorWeight">
    /// The weight w of the newest absolute one-step error in each candidate's recent error, 0 &lt; w ≤ 1: the first |e|, then
    /// S = w·|e| + (1 − w)·S, as <see cref="Tracking.ErrorTracker.SmoothedMad"/> is defined. Default 0.1.
    /// </param>
    /// <param name="margin">
    /// How much lower, relatively, a challenger's recent error must be than the incumbent's to count: S_challenger &lt;
    /// (1 − margin)·S_incumbent, 0 ≤ margin &lt; 1. Default 0.1.
    /// </param>
    /// <param name="periodsToSwitch">The consecutive periods the same challenger must lead by the margin before it is published, 1 to 10,000. Default 3.</param>
    /// <param name="minScoredPeriods">The scored periods a candidate needs before it can challenge or be challenged, 1 to 1,000,000. Default 5.</param>
    /// <exception cref="ArgumentNullException"><paramref name="candidates"/> is null.</exception>
    /// <exception cref="ArgumentException">There are no candidates, too many, or a null one.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A number is outside its stated range.</exception>
    public MethodSelectorOptions(
        IEnumerable<ForecasterOptions> candidates,
        double errorWeight = DefaultErrorWeight,
        double margin = DefaultMargin,
        int periodsToSwitch = DefaultPeriodsToSwitch,
        int minScoredPeriods = DefaultMinScoredPeriods)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        var list = candidates.ToImmutableArray();
        if (list.Length is < 1 or > MaxCandidates)
        {
            ThrowHelper.ThrowArgument(nameof(candidates), string.Create(CultureInfo.InvariantCulture,
                $"Give between 1 and {MaxCandidates} candidate methods; got {list.Length}."));
        }

        for (int i = 0; i < list.Length; i++)
        {
            if (list[i] is null)
            {
                ThrowHelper.ThrowArgument(nameof(candidates), string.Create(CultureInfo.InvariantCulture, $"Candidate {i} (counting from 0) is null."));
            }
        }

        if (!(errorWeight > 0 && errorWeight <= 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(errorWeight), errorWeight, "the error weight must be greater than 0 and at most 1");
        }

        if (!(margin >= 0 && margin < 1))
        {
            ThrowHelper.ThrowOutOfRange(nameof(margin), margin, "the margin must be at least 0 and below 1");
        }

        if (periodsToSwitch is < 1 or > 10_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(periodsToSwitch), periodsToSwitch, "switching needs between 1 and 10,000 consecutive periods");
        }

        if (minScoredPeriods is < 1 or > 1_000_000)
        {
            ThrowHelper.ThrowOutOfRange(nameof(minScoredPeriods), minScoredPeriods, "the scored periods before a candidate counts must be between 1 and 1,000,000");
        }

        for (int i = 0; i < list.Length; i++)
        {
            if (list[i] is MethodSelectorOptions)
            {
                ThrowHelper.ThrowArgument(nameof(candidates), string.Create(CultureInfo.InvariantCulture, $"Candidate {i} (counting from 0) is itself a method selector; give its candidates directly."));
            }
        }

        _candidates = list;
        _candidateNames = list.Select(static c => c.MethodName).ToImmutableArray();
        ErrorWeight = errorWeight;
        Margin = margin;
        PeriodsToSwitch = periodsToSwitch;
        MinScoredPeriods = minScoredPeriods;
    }

    /// <summary>The candidate methods, in order.</summary>
    public ImmutableArray<ForecasterOptions> Candidates => _candidates;

    /// <summary>The weight of the newest absolute error in the recent error.</summary>
    public double ErrorWeight { get; }

    /// <summary>The relative margin a challenger must beat the incumbent by.</summary>
    public double Margin { get; }

    /// <summary>The consecutive periods a challenger must lead by the margin.</summary>
    public int PeriodsToSwitch { get; }

    /// <summary>The scored periods before a candidate's error counts.</summary>
    public int MinScoredPeriods { get; }

    /// <summary>The candidates' method names, in order (computed once; a forecast update reports the selected one).</summary>
    public ImmutableArray<string> CandidateNames => _candidateNames;

    /// <inheritdoc/>
    public override string MethodName => "Best of (" + string.Join(" | ", _candidateNames) + ")";

    /// <summary>Creates a new selector for one series, with every candidate's forecaster empty.</summary>
    /// <returns>The selector.</returns>
    /// <remarks>Allocates the forecasters and the selector's buffers once; updates allocate nothing afterwards.</remarks>
    public MethodSelector CreateSelector() => new(this);

    /// <inheritdoc/>
    public override Forecaster CreateForecaster() => new MethodSelector(this);

    /// <summary>Equal when every setting is equal (the candidates element by element).</summary>
    /// <param name="other">The other options.</param>
    /// <returns>Whether both describe the same selection.</returns>
    public bool Equals(MethodSelectorOptions? other) =>
        other is not null
        && _candidates.SequenceEqual(other._candidates)
        && ErrorWeight.Equals(other.ErrorWeight)
        && Margin.Equals(other.Margin)
        && PeriodsToSwitch == other.PeriodsToSwitch
        && MinScoredPeriods == other.MinScoredPeriods;

    /// <inheritdoc/>
    public override int GetHashCode()
    {
        var hash = default(HashCode);
        foreach (ForecasterOptions candidate in _candidates)
        {
            hash.Add(candidate);
        }

        hash.Add(ErrorWeight);
        hash.Add(Margin);
        hash.Add(PeriodsToSwitch);
        hash.Add(MinScoredPeriods);
        return hash.ToHashCode();
    }
}
