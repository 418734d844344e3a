using System.CommandLine;
using System.Globalization;
using Spectre.Console;
using StreamForecast.Demo;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Streaming;

// The main demo: an invented chain of three bakeries ("Crumb Lane"), two years of daily sales per item.
// 1. Tune a method per series on the first year with SeriesTuner (fit on its first half, rolling-origin backtest on the rest).
// 2. (see EngineReplay) Replay the second year as timestamped sale events through the streaming engine, each series
//    running its tuned method, and show drift alerts in date order with the planted stories (see StoryTimeline).
// 3. (see DemoChart) Draw one series' replay — the Station Square cinnamon bun, whose demand shifts — as a PNG.
var smoke = new Option<bool>("--smoke") { Description = "Run a shortened version (used by CI); the output has the same shape." };
var seed = new Option<int>("--seed") { Description = "Seed for the invented data.", DefaultValueFactory = _ => 2026 };
var chart = new Option<string>("--chart")
{
    Description = "Where to write the chart PNG.",
    DefaultValueFactory = _ => Path.Combine(Path.GetTempPath(), "streamforecast-demo-station-square-cinnamon-bun.png"),
};
var root = new RootCommand("StreamForecast demo on an invented bakery chain. Forecasts and alerts are advisory.") { smoke, seed, chart };
root.SetAction(async (parse, cancellationToken) =>
{
    bool isSmoke = parse.GetValue(smoke);
    IReadOnlyList<BakerySeries> series = BakeryScenario.Generate(parse.GetValue(seed));
    const string chartKey = BakeryScenario.ShiftKey; // the series whose demand shifts in the second year
    if (isSmoke)
    {
        // A few series, and the two with a planted story: the shift and the promotion.
        series = [.. series.Take(3), .. series.Where(s => s.Key is chartKey or DemoSetup.PromotionKey)];
    }

    AnsiConsole.MarkupLine("[bold]StreamForecast demo[/]: Crumb Lane bakeries, {0} series of daily unit sales over {1} days (invented data).", series.Count, BakeryScenario.Days);
    AnsiConsole.MarkupLine("[grey]Forecasts and alerts are advisory: they need a person's judgement before stock or staff change.[/]");
    AnsiConsole.WriteLine();

    // Tune on the first year only: parameters are fitted on its first half and every candidate is backtested on the second.
    const int firstYear = BakeryScenario.Days / 2;
    var histories = series.Select(s => new KeyValuePair<string, double[]>(s.Key, s.Daily[..firstYear])).ToList();
    var options = new TuningOptions(seasonLength: 7, maxMovingAverageLength: 28, weightedLength: 7);
    var tuned = SeriesTuner.TuneMany(histories, options, cancellationToken);
    PrintFamilies(tuned);
    PrintTuned(tuned);

    var chosen = tuned.ToDictionary(t => t.Key, t => t.Value.Method, StringComparer.Ordinal);
    AnsiConsole.WriteLine();
    foreach (KnownEvent<string> known in DemoSetup.PromotionEvents())
    {
        AnsiConsole.MarkupLine(
            "Known event declared before the replay: [bold]{0}[/] for {1}, {2:yyyy-MM-dd} to {3:yyyy-MM-dd} (kept out of the error statistics, the drift rules and the model's learning).",
            Markup.Escape(known.Kind.Name), Markup.Escape(known.Key!), known.Start, known.End.AddDays(-1));
    }

    AnsiConsole.MarkupLine("[bold]Streaming replay[/]: both years as individual sale events, each series on its tuned method (the first year warms it up); second-year drift-alert transitions in date order, with the planted stories (>>) when they happen:");
    var replay = await EngineReplay.RunAsync(series, chosen, showFromDay: firstYear, Console.Out, chartKey);
    var counters = replay.Counters;
    AnsiConsole.MarkupLine(
        "Engine counters (both years): {0:N0} events, {1:N0} days closed, {2} duplicates ignored, {3} late sales restated a closed day, {4} too late, {5} alerts raised, {6} cleared.",
        counters.Observations, counters.PeriodsClosed, counters.Duplicates, counters.Restated, counters.Late, counters.AlertsRaised, counters.AlertsCleared);

    foreach (EventLift lift in replay.Lift)
    {
        AnsiConsole.MarkupLine(
            "Observed during {0}: {1} days, actual {2:N0} against {3:N0} forecast, lift {4:0.00}× (actual ÷ forecast), {5:+0.0;-0.0} units a day.",
            Markup.Escape(lift.Kind.Name), lift.Periods, lift.ActualTotal, lift.ForecastTotal, lift.Ratio, lift.MeanDifference);
    }

    string chartPath = Path.GetFullPath(parse.GetValue(chart)!);
    DemoChart.Save(chartPath, $"{chartKey} ({DemoFormat.Method(chosen[chartKey].MethodName)}): second year, one-step forecast with 80% interval", replay.ChartUpdates, replay.ChartAlerts);
    AnsiConsole.MarkupLine("Chart of {0}: {1}", Markup.Escape(chartKey), Markup.Escape(chartPath));
    return 0;
});

if (Console.IsOutputRedirected)
{
    AnsiConsole.Profile.Width = 160; // a pipe or a CI log has no width of its own
}

return await root.Parse(args).InvokeAsync();

static void PrintFamilies(IReadOnlyList<KeyValuePair<string, TuningResult>> tuned)
{
    // Each family's best candidate per series (fitted parameters differ per series), scored one step ahead out of sample.
    var table = new Table().Title("Backtest on the first year's second half, best candidate of each family averaged over series (lower is better)");
    table.AddColumns("Family", "mean MASE (h=1)", "mean RMSE (h=1)", "chosen for");
    var rows = tuned
        .SelectMany(t => t.Value.Ranking.Where(c => c.IsComplete).GroupBy(c => Family(c.Method)).Select(g => (Series: t.Key, Family: g.Key, Best: g.First(), Chosen: ReferenceEquals(g.First(), t.Value.Chosen))))
        .GroupBy(r => r.Family)
        .Select(g => (Family: g.Key, Mase: g.Average(r => r.Best.AtHorizon(1).Mase), Rmse: g.Average(r => r.Best.AtHorizon(1).Rmse), Chosen: g.Count(r => r.Chosen), Series: g.Count()))
        .OrderBy(r => r.Mase);
    foreach (var r in rows)
    {
        table.AddRow(Markup.Escape(r.Family), F(r.Mase), F(r.Rmse), $"{r.Chosen} of {r.Series}");
    }

    AnsiConsole.Write(table);
}

static void PrintTuned(IReadOnlyList<KeyValuePair<string, TuningResult>> tuned)
{
    var table = new Table().Title("Tuned method per series, ranked by one-step RMSE in the backtest (MASE: scaled by the weekly seasonal naive error)");
    table.AddColumns("Series", "Demand class", "Chosen", "RMSE", "MASE", "Runner-up", "RMSE", "Default SES(0.2) RMSE");
    foreach (var (key, result) in tuned)
    {
        CandidateEvaluation runnerUp = result.Ranking.Length > 1 ? result.Ranking[1] : result.Chosen;
        table.AddRow(
            Markup.Escape(key),
            result.Demand.Class.ToString(),
            Markup.Escape(DemoFormat.Method(result.Method.MethodName)),
            F(result.Chosen.AtHorizon(1).Rmse),
            F(result.Chosen.AtHorizon(1).Mase),
            Markup.Escape(DemoFormat.Method(runnerUp.MethodName)),
            F(runnerUp.AtHorizon(1).Rmse),
            F(result.Default.AtHorizon(1).Rmse));
    }

    AnsiConsole.Write(table);
}

static string Family(ForecasterOptions method) => method switch
{
    NaiveOptions { SeasonLength: 1 } => "naive",
    NaiveOptions => "seasonal naive",
    MovingAverageOptions => "moving average",
    WeightedMovingAverageOptions => "weighted moving average",
    ExponentialSmoothingOptions => "exponential smoothing",
    HoltOptions { Damping: < 1 } => "Holt, damped",
    HoltOptions => "Holt",
    HoltWintersOptions { Seasonality: Seasonality.Multiplicative } => "Holt-Winters, multiplicative",
    HoltWintersOptions => "Holt-Winters, additive",
    CrostonOptions { Variant: CrostonVariant.SyntetosBoylan } => "SBA",
    CrostonOptions => "Croston",
    TsbOptions => "TSB",
    _ => method.MethodName,
};

static string F(double value) => double.IsFinite(value) ? value.ToString("0.000", CultureInfo.InvariantCulture) : "n/a";
