using System.CommandLine;
using Spectre.Console;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Cli;

/// <summary><c>calibrate</c>: sets a drift rule's limit for one series and method with <see cref="LimitCalibrator"/>.</summary>
internal static class CalibrateCommand
{
    public static Command Create(CommonOptions common)
    {
        var series = new Option<string>("--series") { Description = "The series to calibrate on (its key; parts of a composite key joined with '/').", Required = true };
        var rule = new Option<string>("--calibrate-rule") { Description = "The rule whose limit is set: cusum:h, trigg:limit or signal:limit (the number is the starting template). To calibrate a rule that will watch a reference model, give that reference method as --method.", DefaultValueFactory = _ => "signal:4" };
        var target = new Option<double>("--target") { Description = "The target mean number of periods between false alarms.", DefaultValueFactory = _ => CalibrationOptions.DefaultTargetRunLength };
        var simulations = new Option<int>("--simulations") { Description = "Simulated streams per evaluation.", DefaultValueFactory = _ => CalibrationOptions.DefaultSimulations };
        var seed = new Option<int>("--seed") { Description = "The random seed (results are reproducible).", DefaultValueFactory = _ => 1 };
        var command = new Command("calibrate", "Set a drift rule's limit for one series and method so that false alarms come on average every --target periods; print the limit, the in-control run length and the delay to detect a step and a ramp.");
        common.UseForCalibration();
        common.AddInputOptions(command);
        foreach (Option option in new Option[] { series, common.Method, common.Season, rule, target, simulations, seed })
        {
            command.Options.Add(option);
        }

        command.SetAction((parse, cancellationToken) => Cli.Guard(() =>
        {
            var calendar = common.Calendar(parse);
            ForecasterOptions method = common.MethodOf(parse);
            DriftRuleOptions template = CommonOptions.RuleOf(parse.GetValue(rule)!);
            CalibrationOptions options;
            try
            {
                options = new CalibrationOptions(parse.GetValue(target), parse.GetValue(simulations), parse.GetValue(seed),
                    tracking: new Tracking.ErrorTrackerOptions(seasonLength: common.SeasonOf(parse)));
            }
            catch (ArgumentException e)
            {
                throw new UsageException(e.Message.Split(" (Parameter")[0]);
            }

            CsvReadResult read = ProgressDisplay.Run("Reading", p => CsvObservations.Read(parse.GetValue(common.Input)!, common.Layout(parse), p));
            Output.ReportSkipped(read);
            string key = parse.GetValue(series)!;
            var histories = SeriesHistories.Build(read, calendar, out _);
            double[] history = histories.FirstOrDefault(h => h.Key == key).Value
                ?? throw new DataException($"No series '{key}' in the input; keys found: {string.Join(", ", histories.Take(10).Select(h => h.Key))}{(histories.Count > 10 ? ", …" : string.Empty)}.");
            LimitCalibration c;
            try
            {
                c = LimitCalibrator.Calibrate(history, method, template, options);
            }
            catch (ArgumentException e)
            {
                throw new DataException($"Cannot calibrate on '{key}' ({Output.Count(history.Length, "period")}): {e.Message.Split(" (Parameter")[0]}");
            }

            var table = Output.NewTable($"{Markup.Escape(key)}: {Markup.Escape(method.MethodName)}, {Markup.Escape(template.GetType().Name.Replace("Options", string.Empty, StringComparison.Ordinal))}");
            table.AddColumns("Quantity", "Value");
            table.AddRow("Limit", Output.F(c.Limit, "0.000"));
            table.AddRow("Target reached", c.TargetReached ? "yes" : "no");
            table.AddRow("Target periods between false alarms", Output.F(options.TargetRunLength, "0"));
            table.AddRow("In-control run length (fresh streams)", $"{Output.F(c.InControl.Mean, "0.0")} ± {Output.F(c.InControl.StandardError, "0.0")} (median {Output.F(c.InControl.Median, "0")}, {c.InControl.Censored} censored)");
            table.AddRow($"Step of {Output.F(options.StepSize, "0.##")}σ: mean delay", $"{Output.F(c.Step.MeanDelay, "0.0")} periods ({c.Step.Detected}/{c.Step.Runs} detected, {Output.Count(c.Step.FalseAlarmsBeforeChange, "false alarm")} before)");
            table.AddRow($"Ramp of {Output.F(options.RampSlope, "0.##")}σ/period: mean delay", $"{Output.F(c.Ramp.MeanDelay, "0.0")} periods ({c.Ramp.Detected}/{c.Ramp.Runs} detected)");
            table.AddRow("Residuals", $"{c.ResidualCount} (σ {Output.F(c.ResidualStandardDeviation, "0.00")}, block length {c.BlockLength})");
            AnsiConsole.Write(table);
            return Task.FromResult(ExitCodes.Ok);
        }));
        return command;
    }
}
