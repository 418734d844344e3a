using System.CommandLine;
using Spectre.Console;
using StreamForecast.Cli;

// streamforecast-cli: StreamForecast from the command line. Commands: replay, tune, calibrate, chart.
if (Console.IsOutputRedirected)
{
    // A pipe or a log has no width of its own: COLUMNS when the caller sets it (e.g. COLUMNS=80), else 200.
    AnsiConsole.Profile.Width = int.TryParse(Environment.GetEnvironmentVariable("COLUMNS"), out int columns) && columns >= 40 ? columns : 200;
}

var root = new RootCommand("streamforecast-cli: replay, tune, calibrate and chart StreamForecast series from CSV files. Forecasts and alerts are advisory. " + ExitCodes.HelpText)
{
    ReplayCommand.Create(new CommonOptions()),
    TuneCommand.Create(new CommonOptions()),
    CalibrateCommand.Create(new CommonOptions()),
    ChartCommand.Create(new CommonOptions()),
};
return await root.Parse(args).InvokeAsync();
