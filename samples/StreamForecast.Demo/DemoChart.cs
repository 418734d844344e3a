using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Demo;

/// <summary>Draws one series' replay with ScottPlot: actual, the one-step forecast with its 80% interval, alert transitions.</summary>
internal static class DemoChart
{
    public static void Save(string path, string title, IReadOnlyList<ForecastUpdate<string>> updates, IReadOnlyList<DriftAlert<string>> alerts)
    {
        var byPeriod = new SortedDictionary<long, ForecastUpdate<string>>();
        foreach (ForecastUpdate<string> u in updates)
        {
            byPeriod[u.Period] = u; // a restatement replaces the period's first update
        }

        var xs = new List<double>();
        var actual = new List<double>();
        var fx = new List<double>();
        var forecast = new List<double>();
        var lower = new List<double>();
        var upper = new List<double>();
        var at = new Dictionary<long, (double X, double Y)>();
        ForecastPoint? previous = null;
        foreach (var (period, u) in byPeriod)
        {
            double x = u.PeriodStart.UtcDateTime.ToOADate();
            xs.Add(x);
            actual.Add(u.Actual);
            at[period] = (x, u.Actual);
            if (previous is { IsValid: true } p && double.IsFinite(p.Lower) && double.IsFinite(p.Upper))
            {
                fx.Add(x);
                forecast.Add(p.Value); // the forecast for this period was published with the previous period's update
                lower.Add(p.Lower); // already clipped at 0: the demo's series are declared non-negative
                upper.Add(p.Upper);
            }

            previous = u.Next;
        }

        var plot = new ScottPlot.Plot();
        var band = plot.Add.FillY(fx.ToArray(), lower.ToArray(), upper.ToArray());
        band.FillColor = ScottPlot.Colors.SteelBlue.WithAlpha(0.25);
        band.LineWidth = 0;
        band.LegendText = "80% interval";
        var line = plot.Add.ScatterLine(fx.ToArray(), forecast.ToArray());
        line.Color = ScottPlot.Colors.SteelBlue;
        line.LegendText = "forecast (one day ahead)";
        var sold = plot.Add.ScatterLine(xs.ToArray(), actual.ToArray());
        sold.Color = ScottPlot.Colors.Black;
        sold.LegendText = "units sold";
        Mark(plot, alerts, at, DriftTransitionKind.Raised, ScottPlot.MarkerShape.FilledTriangleUp, ScottPlot.Colors.Red, "alert raised");
        Mark(plot, alerts, at, DriftTransitionKind.Escalated, ScottPlot.MarkerShape.FilledDiamond, ScottPlot.Colors.DarkRed, "alert escalated");
        Mark(plot, alerts, at, DriftTransitionKind.Cleared, ScottPlot.MarkerShape.FilledCircle, ScottPlot.Colors.Green, "alert cleared");
        plot.Axes.DateTimeTicksBottom();
        plot.Title(title);
        plot.YLabel("units per day");
        plot.ShowLegend(ScottPlot.Alignment.UpperLeft);
        plot.SavePng(path, 1400, 600);
    }

    private static void Mark(
        ScottPlot.Plot plot, IReadOnlyList<DriftAlert<string>> alerts, Dictionary<long, (double X, double Y)> at,
        DriftTransitionKind kind, ScottPlot.MarkerShape shape, ScottPlot.Color color, string label)
    {
        var points = alerts.Where(a => a.Transition.Kind == kind && at.ContainsKey(a.Period)).Select(a => at[a.Period]).ToList();
        if (points.Count > 0)
        {
            plot.Add.Markers(points.Select(p => p.X).ToArray(), points.Select(p => p.Y).ToArray(), shape, 10, color).LegendText = label;
        }
    }
}
