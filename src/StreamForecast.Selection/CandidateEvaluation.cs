using System.Collections.Immutable;
using StreamForecast.Forecasting;

namespace StreamForecast.Selection;

/// <summary>The backtest of one candidate method on one series: accuracy per horizon, tracking-signal behaviour and the ranking score.</summary>
/// <remarks>Immutable and safe to share across threads.</remarks>
public sealed class CandidateEvaluation
{
    internal CandidateEvaluation(
        int candidateIndex,
        ForecasterOptions method,
        ImmutableArray<HorizonAccuracy> horizons,
        OneStepSignals signals,
        double score,
        string? failure)
    {
        CandidateIndex = candidateIndex;
        Method = method;
        Horizons = horizons;
        Signals = signals;
        Score = score;
        Failure = failure;
        bool complete = failure is null && double.IsFinite(score);
        foreach (HorizonAccuracy h in horizons)
        {
            complete &= h.Count > 0 && h.UnscoredCount == 0;
        }

        IsComplete = complete;
    }

    /// <summary>The candidate's position in the list it was given in.</summary>
    public int CandidateIndex { get; }

    /// <summary>The candidate method.</summary>
    public ForecasterOptions Method { get; }

    /// <summary>The method's label (<see cref="ForecasterOptions.MethodName"/>).</summary>
    public string MethodName => Method.MethodName;

    /// <summary>The statistics of horizons 1 … H, in order (element h − 1 is horizon h).</summary>
    public ImmutableArray<HorizonAccuracy> Horizons { get; }

    /// <summary>The tracking-signal behaviour of the one-step errors.</summary>
    public OneStepSignals Signals { get; }

    /// <summary>
    /// The ranking score: the backtest's <see cref="BacktestOptions.Metric"/> averaged over horizons 1 … H; lower is better.
    /// NaN when a horizon has no scored forecast or the candidate failed.
    /// </summary>
    public double Score { get; }

    /// <summary>
    /// Why the candidate could not run over the whole history (the forecaster rejected an actual, for example a negative
    /// demand for an intermittent-demand method, or an error statistic overflowed); null when it ran.
    /// </summary>
    public string? Failure { get; }

    /// <summary>
    /// Whether the candidate forecast at every origin for every horizon, with a finite score and no failure. Only complete
    /// candidates are compared on equal terms; incomplete ones rank after them.
    /// </summary>
    public bool IsComplete { get; }

    /// <summary>The statistics of horizon <paramref name="horizon"/>.</summary>
    /// <param name="horizon">1 to H.</param>
    /// <returns>The horizon's statistics.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is outside 1 … H.</exception>
    public HorizonAccuracy AtHorizon(int horizon)
    {
        if (horizon < 1 || horizon > Horizons.Length)
        {
            Internal.SelectionThrowHelper.ThrowOutOfRange(nameof(horizon), horizon, $"the backtest scored horizons 1 to {Horizons.Length}");
        }

        return Horizons[horizon - 1];
    }

    /// <summary>A one-line summary: the method, its score and completeness.</summary>
    /// <returns>The summary.</returns>
    public override string ToString() =>
        string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{MethodName}: score {Score:G6}{(IsComplete ? string.Empty : " (incomplete)")}");
}
