using StreamForecast.Alerts;

namespace StreamForecast.Cli;

/// <summary>
/// Draws one series' <see cref="ChartData"/> as a PNG with ScottPlot: actual, the one-step forecast with its interval,
/// and alert transitions. The x axis is the period start in the chart's zone with ISO dates (<see cref="TimeTicks"/>); a
/// marker's shape gives the direction (▲ under-forecast: actuals above the forecast; ▼ over-forecast), its fill the
/// transition (filled raised, larger escalated, hollow cleared), its colour the rule, and each legend entry names the rule.
/// </summary>
internal static class SeriesChart
{
    public const int Width = 1400;

    public const int Height = 650;

    private static readonly ScottPlot.Color[] s_ruleColors =
        [ScottPlot.Colors.Red, ScottPlot.Colors.DarkOrange, ScottPlot.Colors.Purple, ScottPlot.Colors.Teal, ScottPlot.Colors.Brown];

    /// <summary>The labels of a chart: title, axis titles, and how the interval reads in the legend.</summary>
    public sealed record Labels(string Title, string XAxis, string YAxis, string Interval, string Forecast, string Actual);

    public static void Save(string path, ChartData data, Labels labels, TimeSpan periodLength)
    {
        var plot = new ScottPlot.Plot();
        double[] fx = [.. data.Points.Where(p => p.HasInterval).Select(p => p.Start.ToOADate())];
        bool thin = data.Points.Count > 200;
        if (fx.Length > 0)
        {
            var withInterval = data.Points.Where(p => p.HasInterval).ToList();
            double[] lower = [.. withInterval.Select(p => p.Lower)];
            double[] upper = [.. withInterval.Select(p => p.Upper)];
            double[] forecast = [.. withInterval.Select(p => p.Forecast)];
            var band = plot.Add.FillY(fx, lower, upper);
            band.FillColor = ScottPlot.Colors.SteelBlue.WithAlpha(0.25);
            band.LineWidth = 0;
            band.LegendText = labels.Interval;
            var line = plot.Add.ScatterLine(fx, forecast);
            line.Color = ScottPlot.Colors.SteelBlue;
            line.LineWidth = thin ? 1 : 1.5f;
            line.LegendText = labels.Forecast;
        }

        var actualPoints = data.Points.Where(p => double.IsFinite(p.Actual)).ToList();
        if (actualPoints.Count > 0)
        {
            double[] ax = [.. actualPoints.Select(p => p.Start.ToOADate())];
            double[] ay = [.. actualPoints.Select(p => p.Actual)];
            var actuals = plot.Add.ScatterLine(ax, ay);
            actuals.Color = ScottPlot.Colors.Black;
            actuals.LineWidth = thin ? 1 : 1.5f;
            actuals.LegendText = labels.Actual;
        }

        AddMarkers(plot, data);
        plot.Axes.AutoScale();
        if (data.ActualsNonNegative && data.BandBelowZero == 0)
        {
            // Nothing drawn is below zero (counts, a clipped interval): the y axis starts at 0 instead of a margin below it.
            ScottPlot.AxisLimits limits = plot.Axes.GetLimits();
            plot.Axes.SetLimitsY(Math.Max(limits.Bottom, -0.01 * limits.Top), limits.Top);
        }

        SetTimeAxis(plot, data, periodLength);
        plot.Title(labels.Title);
        plot.XLabel(labels.XAxis);
        plot.YLabel(labels.YAxis);
        plot.ShowLegend(ScottPlot.Edge.Bottom);
        try
        {
            plot.SavePng(path, Width, Height);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new UsageException($"{path}: cannot write the chart ({e.Message}).");
        }
    }

    private static void SetTimeAxis(ScottPlot.Plot plot, ChartData data, TimeSpan periodLength)
    {
        if (data.Points.Count == 0)
        {
            return;
        }

        DateTime first = data.Points[0].Start, last = data.Points[^1].Start;
        bool intraday = periodLength < TimeSpan.FromDays(1);
        TimeTicks.Step step = TimeTicks.Choose(first, last, periodLength, TimeTicks.MaxTicks(Width - 150, intraday));
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        foreach (DateTime tick in TimeTicks.Positions(first, last, step))
        {
            ticks.AddMajor(tick.ToOADate(), TimeTicks.Label(tick));
        }

        plot.Axes.Bottom.TickGenerator = ticks;
        double pad = Math.Max(periodLength.TotalDays / 2, (last - first).TotalDays * 0.01);
        // A tick on the last period would have half its label cut off at the right edge: leave room for it.
        double right = Math.Max(pad, (last - first).TotalDays * 0.045);
        plot.Axes.SetLimitsX(first.ToOADate() - pad, last.ToOADate() + right);
    }

    private static void AddMarkers(ScottPlot.Plot plot, ChartData data)
    {
        if (data.Markers.Count == 0)
        {
            return;
        }

        // Markers of several rules on one period would hide each other: each further rule sits a little further out.
        double low = data.Points.Select(p => Math.Min(p.Actual, p.HasInterval ? p.Lower : p.Actual)).Where(double.IsFinite).DefaultIfEmpty(0).Min();
        double high = data.Points.Select(p => Math.Max(p.Actual, p.HasInterval ? p.Upper : p.Actual)).Where(double.IsFinite).DefaultIfEmpty(1).Max();
        double nudge = 0.035 * Math.Max(high - low, 1e-9);
        foreach (var group in data.Markers.GroupBy(m => (m.RuleIndex, m.RuleName, m.Direction, m.Kind)).OrderBy(g => g.Key.RuleIndex).ThenBy(g => g.Key.Kind).ThenBy(g => g.Key.Direction))
        {
            var (rule, name, direction, kind) = group.Key;
            double sign = direction == DriftDirection.OverForecast ? -1 : 1;
            double[] xs = [.. group.Select(m => m.Start.ToOADate())];
            double[] ys = [.. group.Select(m => m.Y + (sign * nudge * (1 + rule)))];
            ScottPlot.Color color = s_ruleColors[rule % s_ruleColors.Length];
            var markers = plot.Add.Markers(xs, ys, ShapeOf(direction, kind), kind == DriftTransitionKind.Escalated ? 15 : 11, color);
            markers.LegendText = $"{KindText(kind)}, {DirectionText(direction)}: {name}";
        }
    }

    private static ScottPlot.MarkerShape ShapeOf(DriftDirection direction, DriftTransitionKind kind) => (direction, kind == DriftTransitionKind.Cleared) switch
    {
        (DriftDirection.UnderForecast, false) => ScottPlot.MarkerShape.FilledTriangleUp,
        (DriftDirection.UnderForecast, true) => ScottPlot.MarkerShape.OpenTriangleUp,
        (DriftDirection.OverForecast, false) => ScottPlot.MarkerShape.FilledTriangleDown,
        (DriftDirection.OverForecast, true) => ScottPlot.MarkerShape.OpenTriangleDown,
        (_, false) => ScottPlot.MarkerShape.FilledCircle,
        (_, true) => ScottPlot.MarkerShape.OpenCircle,
    };

    private static string KindText(DriftTransitionKind kind) => kind switch
    {
        DriftTransitionKind.Raised => "raised",
        DriftTransitionKind.Escalated => "escalated",
        DriftTransitionKind.Cleared => "cleared",
        _ => kind.ToString().ToLowerInvariant(),
    };

    private static string DirectionText(DriftDirection direction) => direction switch
    {
        DriftDirection.UnderForecast => "under-forecast (actuals above)",
        DriftDirection.OverForecast => "over-forecast (actuals below)",
        _ => "no direction",
    };
}
