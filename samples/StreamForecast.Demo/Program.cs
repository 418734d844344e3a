using System.CommandLine;
using System.Globalization;
using Spectre.Console;
using StreamForecast.Demo;

// The main demo: an invented chain of three bakeries ("Crumb Lane"), two years of daily sales per item.
// 1. Compare forecasting methods per series on the second year (one step ahead, scored as it happens).
// 2. (see EngineReplay) Replay the sales as timestamped events through the streaming engine and show drift alerts.
var smoke = new Option<bool>("--smoke") { Description = "Run a shortened version (used by CI); the output has the same shape." };
var seed = new Option<int>("--seed") { Description = "Seed for the invented data.", DefaultValueFactory = _ => 2026 };
var root = new RootCommand("StreamForecast demo on an invented bakery chain. Forecasts and alerts are advisory.") { smoke, seed };
root.SetAction(async (parse, cancellationToken) =>
{
    bool isSmoke = parse.GetValue(smoke);
    IReadOnlyList<BakerySeries> series = BakeryScenario.Generate(parse.GetValue(seed));
    if (isSmoke)
    {
        series = series.Take(4).ToList();
    }

    AnsiConsole.MarkupLine("[bold]StreamForecast demo[/]: Crumb Lane bakeries, {0} series of daily unit sales over {1} days (invented data).", series.Count, BakeryScenario.Days);
    AnsiConsole.MarkupLine("[grey]Forecasts and alerts are advisory: they need a person's judgement before stock or staff change.[/]");
    AnsiConsole.WriteLine();

    var classes = MethodComparison.Classify(series);
    var scores = MethodComparison.Run(series, evaluationStart: BakeryScenario.Days / 2);
    PrintMethodSummary(scores);
    PrintBestPerSeries(scores, classes);

    // Each series runs the method that scored best on it; replay the second year as sale events through the engine.
    var chosen = scores.GroupBy(s => s.Series).ToDictionary(
        g => g.Key,
        g => MethodComparison.Candidates.First(c => c.MethodName == g.OrderBy(s => s.Mase).First().Method),
        StringComparer.Ordinal);
    AnsiConsole.WriteLine();
    AnsiConsole.MarkupLine("[bold]Streaming replay[/]: the second year as individual sale events; drift-alert transitions as they are published:");
    var counters = await EngineReplay.RunAsync(series, chosen, fromDay: BakeryScenario.Days / 2, Console.Out);
    AnsiConsole.MarkupLine(
        "Engine counters: {0:N0} events, {1:N0} days closed, {2} duplicates ignored, {3} late sales restated a closed day, {4} too late, {5} alerts raised, {6} cleared.",
        counters.Observations, counters.PeriodsClosed, counters.Duplicates, counters.Restated, counters.Late, counters.AlertsRaised, counters.AlertsCleared);
    return 0;
});

if (Console.IsOutputRedirected)
{
    AnsiConsole.Profile.Width = 160; // a pipe or a CI log has no width of its own
}

return await root.Parse(args).InvokeAsync();

static void PrintMethodSummary(List<MethodScore> scores)
{
    var table = new Table().Title("One-step errors on the second year, averaged over series (lower is better)");
    table.AddColumns("Method", "mean MASE", "mean WAPE %", "mean |tracking signal|");
    foreach (var group in scores.GroupBy(s => s.Method).OrderBy(g => g.Average(s => s.Mase)))
    {
        table.AddRow(
            Markup.Escape(group.Key),
            F(group.Average(s => s.Mase)),
            F(group.Average(s => s.Wape)),
            F(group.Average(s => Math.Abs(s.TrackingSignal))));
    }

    AnsiConsole.Write(table);
}

static void PrintBestPerSeries(List<MethodScore> scores, Dictionary<string, StreamForecast.Classification.DemandClass> classes)
{
    var table = new Table().Title("Best method per series by MASE (scaled by the weekly seasonal naive error)");
    table.AddColumns("Series", "Demand class", "Best", "MASE", "Runner-up", "MASE");
    foreach (var group in scores.GroupBy(s => s.Series))
    {
        var ranked = group.OrderBy(s => s.Mase).ToList();
        table.AddRow(
            Markup.Escape(group.Key),
            classes[group.Key].ToString(),
            Markup.Escape(ranked[0].Method),
            F(ranked[0].Mase),
            Markup.Escape(ranked[1].Method),
            F(ranked[1].Mase));
    }

    AnsiConsole.Write(table);
}

static string F(double value) => double.IsFinite(value) ? value.ToString("0.000", CultureInfo.InvariantCulture) : "n/a";
