using System.Collections.Immutable;
using StreamForecast.Classification;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Selection;

/// <summary>
/// The outcome of tuning one series: the chosen method, ready for the engine, with the backtest of every candidate and
/// their ranking.
/// </summary>
/// <remarks>Immutable and safe to share across threads.</remarks>
public sealed class TuningResult
{
    internal TuningResult(TuningOptions options, int firstOrigin, DemandClassification demand, BacktestReport backtest)
    {
        Options = options;
        FirstOrigin = firstOrigin;
        Demand = demand;
        Backtest = backtest;
    }

    /// <summary>The tuning settings.</summary>
    public TuningOptions Options { get; }

    /// <summary>The size of the fitting window, which is also the first backtest origin.</summary>
    public int FirstOrigin { get; }

    /// <summary>The demand class of the fitting window (<see cref="DemandClass.Undetermined"/> for histories with negative values).</summary>
    public DemandClassification Demand { get; }

    /// <summary>The backtest of every candidate (the default method first) and their ranking.</summary>
    public BacktestReport Backtest { get; }

    /// <summary>The candidates best first (the same as <see cref="BacktestReport.Ranking"/>).</summary>
    public ImmutableArray<CandidateEvaluation> Ranking => Backtest.Ranking;

    /// <summary>The chosen candidate: the best of the ranking.</summary>
    public CandidateEvaluation Chosen => Backtest.Best;

    /// <summary>The default method's evaluation (<see cref="TuningOptions.DefaultMethod"/>, candidate 0).</summary>
    public CandidateEvaluation Default => Backtest.Candidates[0];

    /// <summary>The chosen method, loadable as it is.</summary>
    public ForecasterOptions Method => Chosen.Method;

    /// <summary>Whether a method other than the default was chosen (it then scored strictly better, or the default was incomplete).</summary>
    public bool ImprovesOnDefault => !ReferenceEquals(Chosen, Default);

    /// <summary>Series options for the engine with the chosen method, the tuning's error-tracker settings and horizon, and every other setting at its default.</summary>
    /// <param name="calendar">How event times map to periods for this series.</param>
    /// <returns>The series options.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="calendar"/> is null.</exception>
    public SeriesOptions ToSeriesOptions(PeriodCalendar calendar)
    {
        ArgumentNullException.ThrowIfNull(calendar);
        return new SeriesOptions(Method, calendar, tracking: Options.Tracking, horizon: Options.Horizon);
    }

    /// <summary>A copy of <paramref name="template"/> with the chosen method in place of its own; every other setting (the reference method included) is kept.</summary>
    /// <param name="template">The series options to start from.</param>
    /// <returns>The series options.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="template"/> is null.</exception>
    public SeriesOptions ApplyTo(SeriesOptions template)
    {
        ArgumentNullException.ThrowIfNull(template);
        return new SeriesOptions(
            Method,
            template.Calendar,
            template.Lateness,
            template.Gaps,
            template.Tracking,
            template.Rules,
            template.Horizon,
            template.IntervalMultiplier,
            template.IdleTimeout,
            template.DuplicateWindow,
            template.MaxCatchUpPeriods,
            template.ReferenceMethod,
            template.EmpiricalIntervals,
            template.NonNegative);
    }
}
