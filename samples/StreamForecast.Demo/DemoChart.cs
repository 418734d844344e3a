using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Demo;

/// <summary>
/// Draws one series' replay with ScottPlot: units sold, the one-day-ahead forecast with its 80% interval (clipped at 0:
/// the demo's series are declared non-negative), the day the planted shift begins, and the alert transitions. Dates are
/// ISO (a tick on the first of each month), in the bakeries' time zone. A marker's shape gives the alert's direction
/// (▲ under-forecast: sales above the forecast; ▼ over-forecast), its fill the transition (filled raised, larger
/// escalated, hollow cleared), its colour the rule; each legend entry names the rule.
/// </summary>
internal static class DemoChart
{
    private static readonly ScottPlot.Color[] s_ruleColors = [ScottPlot.Colors.Red, ScottPlot.Colors.DarkOrange, ScottPlot.Colors.Purple];

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
            double x = X(u.PeriodStart);
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
        band.LegendText = "80% interval (clipped at 0)";
        var line = plot.Add.ScatterLine(fx.ToArray(), forecast.ToArray());
        line.Color = ScottPlot.Colors.SteelBlue;
        line.LegendText = "forecast (one day ahead)";
        var sold = plot.Add.ScatterLine(xs.ToArray(), actual.ToArray());
        sold.Color = ScottPlot.Colors.Black;
        sold.LegendText = "units sold";
        if (byPeriod.Count > 0 && byPeriod.Values.First().Key == BakeryScenario.ShiftKey)
        {
            var shift = plot.Add.VerticalLine(X(DemoSetup.DayStart(BakeryScenario.ShiftStart)));
            shift.Color = ScottPlot.Colors.Gray;
            shift.LinePattern = ScottPlot.LinePattern.Dashed;
            shift.LegendText = "the planted shift begins (an office opens next door)";
        }

        foreach (var group in alerts.Where(a => at.ContainsKey(a.Period)).GroupBy(a => (a.RuleIndex, a.RuleName, a.Transition.Direction, a.Transition.Kind)).OrderBy(g => g.Key.RuleIndex).ThenBy(g => g.Key.Kind))
        {
            var (rule, name, direction, kind) = group.Key;
            double nudge = (direction == DriftDirection.OverForecast ? -1 : 1) * 3 * (1 + rule); // rules on one day stay apart
            double[] mx = [.. group.Select(a => at[a.Period].X)];
            double[] my = [.. group.Select(a => at[a.Period].Y + nudge)];
            var markers = plot.Add.Markers(mx, my, Shape(direction, kind), kind == DriftTransitionKind.Escalated ? 15 : 11, s_ruleColors[rule % s_ruleColors.Length]);
            string towards = direction == DriftDirection.OverForecast ? "over-forecast (sales below)" : "under-forecast (sales above)";
            markers.LegendText = $"{kind.ToString().ToLowerInvariant()}, {towards}: {name.Split('(')[0]}";
        }

        var ticks = new ScottPlot.TickGenerators.NumericManual();
        if (byPeriod.Count > 0)
        {
            DateTime first = Local(byPeriod.Values.First().PeriodStart), last = Local(byPeriod.Values.Last().PeriodStart);
            for (var month = new DateTime(first.Year, first.Month, 1).AddMonths(first.Day == 1 ? 0 : 1); month <= last; month = month.AddMonths(1))
            {
                ticks.AddMajor(month.ToOADate(), month.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture));
            }
        }

        plot.Axes.Bottom.TickGenerator = ticks;
        plot.Title(title);
        plot.XLabel($"day ({DemoSetup.Zone.Id})");
        plot.YLabel("units per day");
        plot.ShowLegend(ScottPlot.Edge.Bottom);
        plot.SavePng(path, 1400, 650);
    }

    private static DateTime Local(DateTimeOffset time) => TimeZoneInfo.ConvertTime(time, DemoSetup.Zone).DateTime;

    private static double X(DateTimeOffset time) => Local(time).ToOADate();

    private static ScottPlot.MarkerShape Shape(DriftDirection direction, DriftTransitionKind kind) => (direction == DriftDirection.OverForecast, kind == DriftTransitionKind.Cleared) switch
    {
        (false, false) => ScottPlot.MarkerShape.FilledTriangleUp,
        (false, true) => ScottPlot.MarkerShape.OpenTriangleUp,
        (true, false) => ScottPlot.MarkerShape.FilledTriangleDown,
        (true, true) => ScottPlot.MarkerShape.OpenTriangleDown,
    };
}
