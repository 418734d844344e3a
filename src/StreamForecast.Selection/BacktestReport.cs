using System.Collections.Immutable;

namespace StreamForecast.Selection;

/// <summary>The backtest of a list of candidate methods on one series, with the candidates ranked.</summary>
/// <remarks>
/// <para><b>Ranking.</b> Complete candidates (<see cref="CandidateEvaluation.IsComplete"/>) come first, by
/// <see cref="CandidateEvaluation.Score"/> ascending; then incomplete candidates with a finite score, by score; then
/// candidates without a finite score. Ties keep the order the candidates were given in, so putting a default method
/// first makes it win ties.</para>
/// <para>Immutable and safe to share across threads.</para>
/// </remarks>
public sealed class BacktestReport
{
    internal BacktestReport(BacktestOptions options, int seriesLength, double naiveScale, ImmutableArray<CandidateEvaluation> candidates)
    {
        Options = options;
        SeriesLength = seriesLength;
        NaiveScale = naiveScale;
        Candidates = candidates;
        var ranking = candidates.ToBuilder();
        ranking.Sort(CompareRank);
        Ranking = ranking.ToImmutable();
    }

    /// <summary>The backtest settings.</summary>
    public BacktestOptions Options { get; }

    /// <summary>The number of actuals in the history.</summary>
    public int SeriesLength { get; }

    /// <summary>
    /// The MASE scale: the in-sample mean absolute error of the seasonal naive forecast (season length
    /// <see cref="BacktestOptions.SeasonLength"/>) over the whole history, as <see cref="Tracking.ErrorTracker.NaiveScale"/>
    /// computes it; NaN for a history of m actuals or fewer.
    /// </summary>
    public double NaiveScale { get; }

    /// <summary>The evaluations in the order the candidates were given.</summary>
    public ImmutableArray<CandidateEvaluation> Candidates { get; }

    /// <summary>The evaluations best first (see the remarks on <see cref="BacktestReport"/>).</summary>
    public ImmutableArray<CandidateEvaluation> Ranking { get; }

    /// <summary>The best evaluation (the first of <see cref="Ranking"/>).</summary>
    public CandidateEvaluation Best => Ranking[0];

    /// <summary>Orders two evaluations by rank.</summary>
    internal static int CompareRank(CandidateEvaluation? x, CandidateEvaluation? y)
    {
        if (ReferenceEquals(x, y))
        {
            return 0;
        }

        if (x is null || y is null)
        {
            return x is null ? 1 : -1;
        }

        int group = Group(x).CompareTo(Group(y));
        if (group != 0)
        {
            return group;
        }

        int score = double.IsFinite(x.Score) && double.IsFinite(y.Score) ? x.Score.CompareTo(y.Score) : 0;
        return score != 0 ? score : x.CandidateIndex.CompareTo(y.CandidateIndex);
    }

    private static int Group(CandidateEvaluation e) => e.IsComplete ? 0 : double.IsFinite(e.Score) ? 1 : 2;
}
