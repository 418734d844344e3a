using System.CommandLine;
using Spectre.Console;
using StreamForecast.Cli;

// streamforecast-cli: StreamForecast from the command line. Commands: replay, tune, calibrate, chart.
if (Console.IsOutputRedirected)
{
    AnsiConsole.Profile.Width = 200; // a pipe or a log has no width of its own
}

var common = new CommonOptions();
var root = new RootCommand("streamforecast-cli: replay, tune, calibrate and chart StreamForecast series from CSV files. Forecasts and alerts are advisory. " + ExitCodes.HelpText)
{
    ReplayCommand.Create(common),
    TuneCommand.Create(common),
    CalibrateCommand.Create(common),
    ChartCommand.Create(common),
};
return await root.Parse(args).InvokeAsync();
