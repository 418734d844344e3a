using System.CommandLine;
using Spectre.Console;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;

namespace StreamForecast.Cli;

/// <summary><c>tune</c>: tunes every series of a CSV with <see cref="SeriesTuner.TuneMany{TKey}"/>, prints the ranking, writes the configuration file.</summary>
internal static class TuneCommand
{
    public static Command Create(CommonOptions common)
    {
        var output = new Option<string>("--out") { Description = "Where to write the method configuration (JSON).", DefaultValueFactory = _ => "methods.json" };
        var top = new Option<int>("--top") { Description = "How many candidates of each ranking to print.", DefaultValueFactory = _ => 5 };
        var fraction = new Option<double>("--training-fraction") { Description = "The share of each history used to fit parameters; the rest is backtested.", DefaultValueFactory = _ => 0.5 };
        var fitStarts = new Option<bool>("--fit-starts") { Description = "Also fit Holt-Winters start values (level, trend, seasonal indices): at the fitted weights for every variant, with the weights for the leading one; slower, and the backtest keeps whichever forecasts better." };
        var force = new Option<bool>("--force") { Description = "Replace the --out file if it exists already (without it an existing file is refused, exit 2)." };
        var metric = new Option<RankingMetric>("--metric") { Description = "The ranking statistic: Rmse (default) or Mad.", DefaultValueFactory = _ => RankingMetric.Rmse };
        var command = new Command("tune", "Fit and backtest candidate methods per series (rolling origin, out of sample); print each ranking and write the chosen methods to a configuration file for replay and chart.");
        common.UseForTuning();
        common.AddInputOptions(command);
        foreach (Option option in new Option[] { common.Method, common.Season, common.Horizon, fraction, metric, fitStarts, top, output, force })
        {
            command.Options.Add(option);
        }

        command.SetAction((parse, cancellationToken) => Cli.Guard(() =>
        {
            string path = parse.GetValue(output)!;
            if (File.Exists(path) && !parse.GetValue(force))
            {
                throw new DataException($"{path} exists already; tune does not replace a method configuration unless --force is given (or choose another --out).");
            }

            PeriodCalendar calendar = common.Calendar(parse);
            int season = common.SeasonOf(parse);
            ForecasterOptions defaultMethod = common.MethodOf(parse);
            TuningOptions options;
            try
            {
                options = new TuningOptions(defaultMethod, common.HorizonOf(parse), season, parse.GetValue(fraction), metric: parse.GetValue(metric), fitStartValues: parse.GetValue(fitStarts))
                {
                    // Fixed-length periods shorter than a day make the day and the week cycles known: two-cycle candidates.
                    PeriodLength = calendar.Kind == PeriodKind.FixedInterval ? calendar.NominalLength : null,
                };
            }
            catch (ArgumentException e)
            {
                throw new UsageException(e.Message.Split(" (Parameter")[0]);
            }

            CsvReadResult read = ProgressDisplay.Run("Reading", p => CsvObservations.Read(parse.GetValue(common.Input)!, common.Layout(parse), p));
            Output.ReportSkipped(read);
            var histories = SeriesHistories.Build(read, calendar, out _);
            // Tuned in chunks of keys (each chunk in parallel) so the progress bar can move; every key's result depends only
            // on its own history, so chunking changes nothing in the results.
            var results = ProgressDisplay.Run("Tuning", progress =>
            {
                progress.Start(histories.Count);
                var all = new List<KeyValuePair<string, TuningResult>>(histories.Count);
                int chunk = Math.Max(16, 4 * Environment.ProcessorCount);
                for (int i = 0; i < histories.Count; i += chunk)
                {
                    all.AddRange(SeriesTuner.TuneMany(histories.GetRange(i, Math.Min(chunk, histories.Count - i)), options, cancellationToken));
                    progress.Report(all.Count);
                }

                return all;
            });
            int shown = Math.Max(1, parse.GetValue(top));
            var file = new MethodConfigFile { Calendar = calendar.Name, SeasonLength = season };
            foreach (var (key, result) in results)
            {
                Print(key, result, shown, histories.First(h => h.Key == key).Value.Length);
                file.Series.Add(new MethodConfigFile.SeriesEntry
                {
                    Key = key,
                    Method = MethodSpec.Format(result.Method),
                    Label = result.Method.MethodName,
                    Metric = options.Metric.ToString(),
                    Score = double.IsFinite(result.Chosen.Score) ? result.Chosen.Score : null,
                    ImprovesOnDefault = result.ImprovesOnDefault,
                });
            }

            file.Save(path);
            AnsiConsole.MarkupLine("Wrote {0}: {1} series, {2} tuned away from the default {3}.",
                Markup.Escape(path), results.Count, results.Count(r => r.Value.ImprovesOnDefault), Markup.Escape(defaultMethod.MethodName));
            return Task.FromResult(ExitCodes.Ok);
        }));
        return command;
    }

    private static void Print(string key, TuningResult result, int top, int periods)
    {
        string title = $"{Markup.Escape(key)}: {Output.Count(periods, "period")}, fitted on {result.FirstOrigin}, demand class {result.Demand.Class}";
        var table = Output.NewTable(Output.IsNarrow ? title + "; one step ahead (h=1), covered by an 80% normal interval" : title);
        if (Output.IsNarrow)
        {
            table.AddColumns("Rank", "Method", "Score", "MAD", "RMSE", "MASE", "Bias", "Covered");
        }
        else
        {
            table.AddColumns("Rank", "Method", "Score", "MAD (h=1)", "RMSE (h=1)", "MASE (h=1)", "Bias (h=1)", "Covered, 80% normal (h=1)");
        }

        int rank = 0;
        foreach (CandidateEvaluation candidate in result.Ranking.Take(top))
        {
            rank++;
            HorizonAccuracy h1 = candidate.AtHorizon(1);
            string name = Markup.Escape(candidate.MethodName) + (ReferenceEquals(candidate, result.Default) ? " (default)" : string.Empty);
            table.AddRow(rank.ToString(System.Globalization.CultureInfo.InvariantCulture), rank == 1 ? $"[bold]{name}[/]" : name,
                Output.F(candidate.Score, "0.000"), Output.F(h1.Mad, "0.000"), Output.F(h1.Rmse, "0.000"), Output.F(h1.Mase, "0.000"), Output.F(h1.Bias, "0.000"),
                double.IsFinite(h1.Coverage) ? Output.F(100 * h1.Coverage, "0.0") + "%" : "n/a");
        }

        AnsiConsole.Write(table);
    }
}
