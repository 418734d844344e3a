using System.CommandLine;
using Spectre.Console;
using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary><c>chart</c>: replays the chosen series through the engine and draws actual vs forecast, the interval and alert markers.</summary>
internal static class ChartCommand
{
    public static Command Create(CommonOptions common)
    {
        var series = new Option<string[]>("--series") { Description = "The series to draw (keys; composite parts joined with '/'); one PNG each.", Required = true, AllowMultipleArgumentsPerToken = true };
        var output = new Option<string>("--out") { Description = "The PNG path; with several series, '-<n>' is added before the extension.", DefaultValueFactory = _ => "chart.png" };
        var command = new Command("chart", "Draw a PNG of actual vs one-step forecast with its 80% prediction interval and the alert transitions, for chosen series.");
        common.AddInputOptions(command);
        foreach (Option option in new Option[] { series, common.Lateness, common.Method, common.Config, common.ForceCalendar, common.Rules, common.ReferenceMethod, common.Season, common.Horizon, common.Intervals, common.NonNegative, output })
        {
            command.Options.Add(option);
        }

        command.SetAction((parse, cancellationToken) => Cli.Guard(async () =>
        {
            ReplaySettings settings = ReplayCommand.SettingsOf(common, parse);
            string[] keys = parse.GetValue(series)!;
            CsvLayout layout = common.Layout(parse);
            CsvReadResult read = ProgressDisplay.Run("Reading", p => CsvObservations.Read(parse.GetValue(common.Input)!, layout, p));
            Output.ReportSkipped(read);
            var wanted = new HashSet<string>(keys, StringComparer.Ordinal);
            var rows = read.Rows.Where(r => wanted.Contains(r.Key)).ToList();
            string[] missing = [.. keys.Where(k => !rows.Exists(r => r.Key == k))];
            if (missing.Length > 0)
            {
                throw new DataException($"No rows for series {string.Join(", ", missing.Select(k => $"'{k}'"))} in the input.");
            }

            ReplayResult result = await ProgressDisplay.RunAsync("Replaying", p => ReplayRunner.RunAsync(rows, settings, p, cancellationToken)).ConfigureAwait(false);
            string path = parse.GetValue(output)!;
            for (int i = 0; i < keys.Length; i++)
            {
                string file = keys.Length == 1 ? path : Path.ChangeExtension(path, null) + "-" + (i + 1).ToString(System.Globalization.CultureInfo.InvariantCulture) + (Path.GetExtension(path) is { Length: > 0 } ext ? ext : ".png");
                var forecasts = result.Forecasts.Where(f => f.Key == keys[i]).ToList();
                var alerts = result.Alerts.Where(a => a.Key == keys[i]).ToList();
                SeriesChart.Save(file, keys[i], forecasts, alerts);
                AnsiConsole.MarkupLine("Wrote {0}: {1} ({2}, {3}).", Markup.Escape(file), Markup.Escape(keys[i]), Output.Count(forecasts.Select(f => f.Period).Distinct().Count(), "period"), Output.Count(alerts.Count, "alert transition"));
            }

            Output.ReportDropped(read, result, layout.OnBadRow);
            return ExitCodes.Ok;
        }));
        return command;
    }
}

/// <summary>Draws one series' replay as a PNG with ScottPlot.</summary>
internal static class SeriesChart
{
    public static void Save(string path, string title, IReadOnlyList<ForecastUpdate<string>> updates, IReadOnlyList<DriftAlert<string>> alerts)
    {
        // The last published update of each period (a restatement replaces the first).
        var byPeriod = new SortedDictionary<long, ForecastUpdate<string>>();
        foreach (ForecastUpdate<string> u in updates)
        {
            byPeriod[u.Period] = u;
        }

        var xs = new List<double>();
        var actual = new List<double>();
        var fx = new List<double>();
        var forecast = new List<double>();
        var lower = new List<double>();
        var upper = new List<double>();
        var actualAt = new Dictionary<long, (double X, double Y)>();
        ForecastPoint? previous = null;
        foreach (var (period, u) in byPeriod)
        {
            double x = u.PeriodStart.UtcDateTime.ToOADate();
            if (!u.IsImputed || double.IsFinite(u.Actual))
            {
                xs.Add(x);
                actual.Add(u.Actual);
                actualAt[period] = (x, u.Actual);
            }

            // The interval for this period is the one published with the previous period's "next" forecast.
            if (previous is { IsValid: true } p && double.IsFinite(p.Lower) && double.IsFinite(p.Upper))
            {
                fx.Add(x);
                forecast.Add(p.Value);
                lower.Add(p.Lower);
                upper.Add(p.Upper);
            }

            previous = u.Next;
        }

        var plot = new ScottPlot.Plot();
        if (fx.Count > 0)
        {
            var band = plot.Add.FillY(fx.ToArray(), lower.ToArray(), upper.ToArray());
            band.FillColor = ScottPlot.Colors.SteelBlue.WithAlpha(0.25);
            band.LegendText = "80% interval";
            band.LineWidth = 0;
            var line = plot.Add.ScatterLine(fx.ToArray(), forecast.ToArray());
            line.Color = ScottPlot.Colors.SteelBlue;
            line.LegendText = "forecast (one step)";
        }

        var actuals = plot.Add.ScatterLine(xs.ToArray(), actual.ToArray());
        actuals.Color = ScottPlot.Colors.Black;
        actuals.LegendText = "actual";
        AddMarkers(plot, alerts, actualAt, DriftTransitionKind.Raised, ScottPlot.MarkerShape.FilledTriangleUp, ScottPlot.Colors.Red, "alert raised");
        AddMarkers(plot, alerts, actualAt, DriftTransitionKind.Escalated, ScottPlot.MarkerShape.FilledDiamond, ScottPlot.Colors.DarkRed, "alert escalated");
        AddMarkers(plot, alerts, actualAt, DriftTransitionKind.Cleared, ScottPlot.MarkerShape.FilledCircle, ScottPlot.Colors.Green, "alert cleared");
        plot.Axes.DateTimeTicksBottom();
        plot.Title(title);
        plot.YLabel("quantity per period");
        plot.ShowLegend(ScottPlot.Alignment.UpperLeft);
        try
        {
            plot.SavePng(path, 1400, 600);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new UsageException($"{path}: cannot write the chart ({e.Message}).");
        }
    }

    private static void AddMarkers(
        ScottPlot.Plot plot, IReadOnlyList<DriftAlert<string>> alerts, Dictionary<long, (double X, double Y)> actualAt,
        DriftTransitionKind kind, ScottPlot.MarkerShape shape, ScottPlot.Color color, string label)
    {
        var points = alerts.Where(a => a.Transition.Kind == kind && actualAt.ContainsKey(a.Period)).Select(a => actualAt[a.Period]).ToList();
        if (points.Count == 0)
        {
            return;
        }

        var markers = plot.Add.Markers(points.Select(p => p.X).ToArray(), points.Select(p => p.Y).ToArray(), shape, 10, color);
        markers.LegendText = label;
    }
}
