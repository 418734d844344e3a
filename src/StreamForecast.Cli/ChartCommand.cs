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
        var from = new Option<string?>("--from")
        {
            Description = "Draw only periods starting at or after this date or time in --zone (e.g. 2025-05-12 or 2025-05-12T06:00); the whole series is still replayed.",
        };
        var to = new Option<string?>("--to")
        {
            Description = "Draw only periods starting up to this date (the whole day) or time in --zone; the whole series is still replayed.",
        };
        var last = new Option<int?>("--last") { Description = "Draw only the last N periods of each series (not with --from/--to); the whole series is still replayed." };
        var command = new Command("chart", "Draw a PNG of actual vs one-step forecast with its 80% prediction interval and the alert transitions, for chosen series.");
        common.AddInputOptions(command);
        foreach (Option option in new Option[] { series, common.Lateness, common.Method, common.Config, common.ForceCalendar, common.Rules, common.ReferenceMethod, common.Season, common.Horizon, common.Intervals, common.NonNegative, from, to, last, output })
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

            TimeZoneInfo zone = CommonOptions.ZoneOf(parse.GetValue(common.Zone)!);
            ChartWindow window = ChartWindow.Parse(parse.GetValue(from), parse.GetValue(to), parse.GetValue(last), zone, settings.Calendar);
            ReplayResult result = await ProgressDisplay.RunAsync("Replaying", p => ReplayRunner.RunAsync(rows, settings, p, cancellationToken)).ConfigureAwait(false);
            string path = parse.GetValue(output)!;
            string perPeriod = $"{parse.GetValue(common.Quantity)} per {PeriodNoun(settings.Calendar)}";
            for (int i = 0; i < keys.Length; i++)
            {
                string file = keys.Length == 1 ? path : Path.ChangeExtension(path, null) + "-" + (i + 1).ToString(System.Globalization.CultureInfo.InvariantCulture) + (Path.GetExtension(path) is { Length: > 0 } ext ? ext : ".png");
                var forecasts = result.Forecasts.Where(f => f.Key == keys[i]).ToList();
                var alerts = result.Alerts.Where(a => a.Key == keys[i]).ToList();
                ChartData data = ChartData.Build(forecasts, alerts, window, zone);
                if (data.Points.Count == 0)
                {
                    throw new DataException($"No periods of '{keys[i]}' in the window ({window.Describe(zone)}); its {Output.Count(data.PeriodsInSeries, "period")} run from {Day(forecasts.Min(f => f.PeriodStart), zone)} to {Day(forecasts.Max(f => f.PeriodStart), zone)}.");
                }

                double nominal = forecasts.Count > 0 ? forecasts[0].Next.Coverage : double.NaN;
                string interval = $"{(double.IsFinite(nominal) ? Output.F(100 * nominal, "0.#") : "80")}% interval{(settings.NonNegative ? " (clipped at 0, --non-negative)" : string.Empty)}";
                string shown = data.Points.Count == data.PeriodsInSeries ? string.Empty : $", {Day(data.Points[0].Start)} to {Day(data.Points[^1].Start)}";
                SeriesChart.Save(file, data, new SeriesChart.Labels(
                    $"{keys[i]}: actual and one-step forecast{shown}", $"period start ({zone.Id})", perPeriod, interval, "forecast (one period ahead)", "actual"), settings.Calendar.NominalLength);
                AnsiConsole.MarkupLine(
                    "Wrote {0}: {1} ({2}, {3}).",
                    Markup.Escape(file), Markup.Escape(keys[i]),
                    data.Points.Count == data.PeriodsInSeries ? Output.Count(data.PeriodsInSeries, "period") : string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{data.Points.Count:N0} of {Output.Count(data.PeriodsInSeries, "period")}{Markup.Escape(shown)}"),
                    Output.Count(data.Markers.Count, "alert transition"));
                if (!settings.NonNegative && data.ActualsNonNegative && data.BandBelowZero > 0)
                {
                    AnsiConsole.MarkupLine("  The interval reaches below 0 in {0} though no actual is negative; --non-negative clips forecasts and intervals at 0.", Output.Count(data.BandBelowZero, "period"));
                }

                if (window.IsAll && data.PeriodsInSeries > LongSeries)
                {
                    AnsiConsole.MarkupLine("  {0} in one chart are hard to read; --last N or --from/--to draws a window of them.", Output.Count(data.PeriodsInSeries, "period"));
                }
            }

            Output.ReportDropped(read, result, layout.OnBadRow);
            return ExitCodes.Ok;
        }));
        return command;
    }

    /// <summary>Above this many periods the chart command suggests a window.</summary>
    internal const int LongSeries = 400;

    private static string Day(DateTimeOffset time, TimeZoneInfo zone) => Day(TimeZoneInfo.ConvertTime(time, zone).DateTime);

    private static string Day(DateTime local) => TimeTicks.Label(local);

    /// <summary>The period in words for the y axis: day, week, hour, 15 min.</summary>
    internal static string PeriodNoun(StreamForecast.Periods.PeriodCalendar calendar)
    {
        TimeSpan length = calendar.NominalLength;
        return calendar.Kind switch
        {
            StreamForecast.Periods.PeriodKind.Daily => "day",
            StreamForecast.Periods.PeriodKind.IsoWeekly => "week",
            _ when length == TimeSpan.FromDays(1) => "day (UTC)",
            _ when length == TimeSpan.FromHours(1) => "hour",
            _ when length == TimeSpan.FromMinutes(1) => "minute",
            _ when length.Ticks % TimeSpan.TicksPerHour == 0 => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{length.TotalHours:0} h"),
            _ when length.Ticks % TimeSpan.TicksPerMinute == 0 => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{length.TotalMinutes:0} min"),
            _ => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{length.TotalSeconds:0} s"),
        };
    }
}
