using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary>One period of a chart: its start in the chart's zone, its actual, and the one-step forecast made for it.</summary>
/// <param name="Start">The period start as wall-clock time in the chart's zone (the x coordinate).</param>
/// <param name="Actual">The period's actual; NaN when there is none to draw (an imputed gap without a value).</param>
/// <param name="Forecast">The one-step forecast for the period with its interval (published with the previous period's update); NaN while warming up.</param>
/// <param name="Lower">The interval's lower bound, or NaN.</param>
/// <param name="Upper">The interval's upper bound, or NaN.</param>
internal readonly record struct ChartPoint(DateTime Start, double Actual, double Forecast, double Lower, double Upper)
{
    public bool HasInterval => double.IsFinite(Forecast) && double.IsFinite(Lower) && double.IsFinite(Upper);
}

/// <summary>An alert transition drawn on the actual of its period.</summary>
internal readonly record struct ChartMarker(DateTime Start, double Y, DriftTransitionKind Kind, DriftDirection Direction, int RuleIndex, string RuleName);

/// <summary>
/// What a chart of one series draws: the periods inside the window (each with its actual and the forecast and interval
/// made for it one period before), and the alert transitions of those periods. Built from the replay's updates, where a
/// restatement replaces the period's earlier update.
/// </summary>
internal sealed class ChartData
{
    private ChartData(List<ChartPoint> points, List<ChartMarker> markers, int periodsInSeries)
    {
        Points = points;
        Markers = markers;
        PeriodsInSeries = periodsInSeries;
    }

    /// <summary>The drawn periods, oldest first.</summary>
    public List<ChartPoint> Points { get; }

    /// <summary>The alert transitions of the drawn periods, oldest first.</summary>
    public List<ChartMarker> Markers { get; }

    /// <summary>How many periods the series has in all (the window may draw fewer).</summary>
    public int PeriodsInSeries { get; }

    /// <summary>Drawn periods whose interval reaches below zero.</summary>
    public int BandBelowZero => Points.Count(p => p.HasInterval && p.Lower < 0);

    /// <summary>Whether every drawn actual is zero or more (a count, a quantity sold).</summary>
    public bool ActualsNonNegative => Points.TrueForAll(p => !double.IsFinite(p.Actual) || p.Actual >= 0);

    public static ChartData Build(IEnumerable<ForecastUpdate<string>> updates, IEnumerable<DriftAlert<string>> alerts, ChartWindow window, TimeZoneInfo zone)
    {
        var byPeriod = new SortedDictionary<long, ForecastUpdate<string>>();
        foreach (ForecastUpdate<string> u in updates)
        {
            byPeriod[u.Period] = u; // the last published update of a period: a restatement replaces the first
        }

        var all = new List<(long Period, DateTimeOffset Start, ChartPoint Point)>(byPeriod.Count);
        ForecastPoint? previous = null;
        foreach (var (period, u) in byPeriod)
        {
            double actual = !u.IsImputed || double.IsFinite(u.Actual) ? u.Actual : double.NaN;
            (double value, double lower, double upper) = previous is { IsValid: true } p ? (p.Value, p.Lower, p.Upper) : (double.NaN, double.NaN, double.NaN);
            all.Add((period, u.PeriodStart, new ChartPoint(TimeZoneInfo.ConvertTime(u.PeriodStart, zone).DateTime, actual, value, lower, upper)));
            previous = u.Next;
        }

        var kept = window.Select(all, e => e.Start);
        var drawn = kept.ToDictionary(e => e.Period, e => e.Point);
        var markers = new List<ChartMarker>();
        foreach (DriftAlert<string> a in alerts.OrderBy(a => a.Period).ThenBy(a => a.RuleIndex))
        {
            if (drawn.TryGetValue(a.Period, out ChartPoint point) && double.IsFinite(point.Actual))
            {
                markers.Add(new ChartMarker(point.Start, point.Actual, a.Transition.Kind, a.Transition.Direction, a.RuleIndex, a.RuleName));
            }
        }

        return new ChartData([.. kept.Select(e => e.Point)], markers, all.Count);
    }
}
