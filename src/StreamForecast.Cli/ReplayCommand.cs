using System.CommandLine;
using System.Globalization;
using Spectre.Console;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Cli;

/// <summary><c>replay</c>: runs a CSV of observations through the engine, writes forecasts and alert transitions, prints a summary.</summary>
internal static class ReplayCommand
{
    public static Command Create(CommonOptions common)
    {
        var forecastsOut = new Option<string>("--forecasts-out") { Description = "Where to write the forecasts CSV.", DefaultValueFactory = _ => "forecasts.csv" };
        var alertsOut = new Option<string>("--alerts-out") { Description = "Where to write the alert transitions CSV.", DefaultValueFactory = _ => "alerts.csv" };
        var events = new Option<string?>("--events")
        {
            Description = "A CSV of known events (columns kind,start,end,scope; scope is all, group:NAME or series:KEY; same delimiter and time format as the input): their periods are marked, not scored and kept out of the drift rules and the model.",
        };
        var command = new Command("replay", "Replay observations through the streaming engine; write forecasts and alert transitions to CSV and print a summary per series.");
        common.Zone.Description = "The IANA time zone of day/week periods, of timestamps without an offset, and of the times written to the output files (ISO 8601 with this zone's offset).";
        common.Horizon.Description = "The furthest horizon forecast; above 1, forecasts.csv gets the horizon and at_horizon* columns (at 1 they would repeat next*).";
        common.AddInputOptions(command);
        foreach (Option option in new Option[] { common.Lateness, common.Method, common.Config, common.ForceCalendar, common.Rules, common.ReferenceMethod, common.Season, common.Horizon, common.Intervals, common.NonNegative, events, forecastsOut, alertsOut, common.FullPrecision })
        {
            command.Options.Add(option);
        }

        command.SetAction((parse, cancellationToken) => Cli.Guard(async () =>
        {
            CsvLayout layout = common.Layout(parse);
            ReplaySettings settings = SettingsOf(common, parse) with
            {
                Events = parse.GetValue(events) is { } eventsPath ? CsvEvents.Read(eventsPath, layout) : null,
            };
            CsvReadResult read = ProgressDisplay.Run("Reading", p => CsvObservations.Read(parse.GetValue(common.Input)!, layout, p));
            Output.ReportSkipped(read);
            ReplayResult result = await ProgressDisplay.RunAsync("Replaying", p => ReplayRunner.RunAsync(read.Rows, settings, p, cancellationToken)).ConfigureAwait(false);

            string forecastsPath = parse.GetValue(forecastsOut)!;
            string alertsPath = parse.GetValue(alertsOut)!;
            CsvValueFormat format = common.CsvFormatOf(parse);
            WriteForecasts(forecastsPath, result.Forecasts, format, settings.Horizon, MethodTexts(settings));
            WriteAlerts(alertsPath, result.Alerts, format);
            PrintSummary(result, format);
            EngineCounters c = result.Counters;
            AnsiConsole.MarkupLine(
                "Engine: {0}, {1} closed, {2}, {3:N0} late restated, {4:N0} too late, {5:N0} rejected, {6} refused, {7} raised, {8:N0} cleared.",
                Output.Count(c.Observations, "event"), Output.Count(c.PeriodsClosed, "period"), Output.Count(c.Duplicates, "duplicate"), c.Restated, c.Late,
                c.Rejected + c.Dropped, Output.Count(c.RejectedActuals, "period actual"), Output.Count(c.AlertsRaised, "alert"), c.AlertsCleared);
            foreach (EventLift lift in result.Lift)
            {
                AnsiConsole.MarkupLine(
                    "Known events, {0}: {1}, actual {2} against forecast {3}, lift {4} (actual ÷ forecast).",
                    Markup.Escape(lift.Kind.Name), Output.Count(lift.Periods, "period"), Output.F(lift.ActualTotal), Output.F(lift.ForecastTotal), Output.F(lift.Ratio));
            }

            foreach (SeriesFault<string> fault in result.Faults.Take(5))
            {
                AnsiConsole.MarkupLine("[yellow]Series fault[/] {0}: {1}", Markup.Escape(fault.Key), Markup.Escape(fault.Message));
            }

            AnsiConsole.MarkupLine("Wrote {0} ({1}) and {2} ({3}).",
                Markup.Escape(forecastsPath), Output.Count(result.Forecasts.Count, "forecast"), Markup.Escape(alertsPath), Output.Count(result.Alerts.Count, "alert transition"));
            Output.ReportDropped(read, result, layout.OnBadRow);
            return ExitCodes.Ok;
        }));
        return command;
    }

    public static ReplaySettings SettingsOf(CommonOptions common, ParseResult parse)
    {
        string? config = parse.GetValue(common.Config);
        PeriodCalendar calendar = common.Calendar(parse);
        IReadOnlyDictionary<string, ForecasterOptions> tuned = new Dictionary<string, ForecasterOptions>(StringComparer.Ordinal);
        if (config is not null)
        {
            tuned = MethodConfigFile.Load(config, out string? tunedOn);
            if (tunedOn is not null && !string.Equals(tunedOn, calendar.Name, StringComparison.Ordinal) && !parse.GetValue(common.ForceCalendar))
            {
                throw new UsageException(
                    $"{config} was tuned on the period calendar {tunedOn}, but this run uses {calendar.Name} (--period and --zone); " +
                    "its methods and parameters may not suit these periods. Tune again on these periods, give the same --period and --zone, or use --force.");
            }
        }

        DriftRuleOptions[] rules = common.RulesOf(parse);
        return new ReplaySettings(
            calendar, common.LatenessOf(parse), common.MethodOf(parse), tuned, rules, common.SeasonOf(parse), common.HorizonOf(parse),
            common.ReferenceOf(parse, rules), EmpiricalIntervals: common.IntervalsOf(parse), NonNegative: parse.GetValue(common.NonNegative));
    }

    /// <summary>
    /// Per key, a map from the label a forecast carries (<see cref="ForecasterOptions.MethodName"/>: the series' method or,
    /// under a selector, the candidate that made it) to that method's text form (<see cref="MethodSpec.Format"/>), which
    /// <c>--method</c> and methods.json accept.
    /// </summary>
    private static Func<string, string, string> MethodTexts(ReplaySettings settings)
    {
        static Dictionary<string, string> TextsOf(ForecasterOptions method)
        {
            var texts = new Dictionary<string, string>(StringComparer.Ordinal) { [method.MethodName] = MethodSpec.Format(method) };
            if (method is MethodSelectorOptions selector)
            {
                foreach (ForecasterOptions candidate in selector.Candidates)
                {
                    texts.TryAdd(candidate.MethodName, MethodSpec.Format(candidate));
                }
            }

            return texts;
        }

        Dictionary<string, string> byDefault = TextsOf(settings.DefaultMethod);
        var perKey = settings.TunedMethods.ToDictionary(kv => kv.Key, kv => TextsOf(kv.Value), StringComparer.Ordinal);
        return (key, label) => (perKey.TryGetValue(key, out var texts) ? texts : byDefault).TryGetValue(label, out string? text) ? text : label;
    }

    /// <summary>
    /// Writes forecasts.csv. <c>method</c> is the text form of the method that made the row's forecast (accepted by
    /// <c>--method</c>), <c>method_label</c> its display label. The <c>horizon</c> and <c>at_horizon*</c> columns are
    /// written only when a horizon beyond 1 was asked for (at horizon 1 they would repeat <c>next*</c>). <c>in_interval</c> is 1 when the period's actual fell inside
    /// the next-period interval published the period before, 0 outside, empty when there was none to score against.
    /// </summary>
    private static void WriteForecasts(string path, List<ForecastUpdate<string>> forecasts, CsvValueFormat format, int horizon, Func<string, string, string> methodText)
    {
        bool atHorizon = horizon > 1;
        string[] header =
        [
            "key", "period_start", "actual", "imputed", "forecast", "error", "next", "next_lower", "next_upper",
            .. atHorizon ? (string[])["horizon", "at_horizon", "at_horizon_lower", "at_horizon_upper"] : [],
            "mad", "tracking_signal", "trigg_signal", "method", "method_label", "restatement", "event", "next_interval_kind",
            .. atHorizon ? (string[])["at_horizon_interval_kind"] : [],
            "interval_coverage", "in_interval",
        ];
        var ordered = forecasts.OrderBy(f => f.Key, StringComparer.Ordinal).ThenBy(f => f.Period).ToList();
        var inside = InsideFlags(ordered);
        int row = 0;
        Output.WriteCsv(path, header, ordered, f =>
        [
            f.Key, format.Time(f.PeriodStart), format.Number(f.Actual), f.IsImputed ? "1" : "0",
            format.Number(f.ForecastForPeriod), format.Number(f.Error), format.Number(f.Next.Value), format.Number(f.Next.Lower), format.Number(f.Next.Upper),
            .. atHorizon ? (string[])[f.AtHorizon.Horizon.ToString(CultureInfo.InvariantCulture), format.Number(f.AtHorizon.Value), format.Number(f.AtHorizon.Lower), format.Number(f.AtHorizon.Upper)] : [],
            format.Number(f.Errors.Mad), format.Number(f.Errors.TrackingSignal), format.Number(f.Errors.TriggSignal), methodText(f.Key, f.Method), f.Method, f.IsRestatement ? "1" : "0", f.Event?.Name ?? string.Empty,
            KindOf(f.Next),
            .. atHorizon ? (string[])[KindOf(f.AtHorizon)] : [],
            format.Number(f.Next.Coverage), inside[row++],
        ]);
    }

    /// <summary>
    /// Per row of <paramref name="ordered"/> (by key, then period): "1" or "0" for whether the actual lay inside the
    /// next-period interval of the latest update of the period before (so a restated period is scored against what was
    /// published before it), or "" when that interval does not exist or is not finite.
    /// </summary>
    private static string[] InsideFlags(List<ForecastUpdate<string>> ordered)
    {
        var flags = new string[ordered.Count];
        for (int i = 0; i < ordered.Count; i++)
        {
            ForecastUpdate<string> u = ordered[i];
            flags[i] = string.Empty;
            for (int j = i - 1; j >= 0 && ordered[j].Key == u.Key && ordered[j].Period >= u.Period - 1; j--)
            {
                if (ordered[j].Period == u.Period - 1)
                {
                    ForecastPoint p = ordered[j].Next;
                    if (double.IsFinite(p.Lower) && double.IsFinite(p.Upper) && double.IsFinite(u.Actual))
                    {
                        flags[i] = u.Actual >= p.Lower && u.Actual <= p.Upper ? "1" : "0";
                    }

                    break; // the latest update of the period before: the rows are in period order, restatements after
                }
            }
        }

        return flags;
    }

    private static string KindOf(ForecastPoint point) => point.Kind == Tracking.IntervalKind.Empirical ? "empirical" : "normal";

    private static void WriteAlerts(string path, List<DriftAlert<string>> alerts, CsvValueFormat format)
    {
        string[] header = ["key", "period_start", "rule", "transition", "episode", "direction", "severity", "signal", "limit", "reason", "watched"];
        Output.WriteCsv(path, header, alerts.OrderBy(a => a.Key, StringComparer.Ordinal).ThenBy(a => a.Period), a =>
        [
            a.Key, format.Time(a.PeriodStart), a.RuleName, a.Transition.Kind.ToString(),
            a.Transition.EpisodeId.ToString(CultureInfo.InvariantCulture), a.Transition.Direction.ToString(), a.Transition.Severity.ToString(),
            format.Number(a.Transition.Signal), format.Number(a.Transition.Level), a.Transition.Reason.ToString(),
            a.Watched == WatchedModel.Reference ? "reference" : "published",
        ]);
    }

    private static void PrintSummary(ReplayResult result, CsvValueFormat format)
    {
        var raised = result.Alerts.Where(a => a.Transition.Kind == DriftTransitionKind.Raised).GroupBy(a => a.Key, StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Count(), StringComparer.Ordinal);
        double nominal = result.Forecasts.Count > 0 ? result.Forecasts[0].Next.Coverage : double.NaN;
        // At 80 columns ten columns collapse into slivers: a narrow console gets the same cells as two tables.
        bool narrow = Output.IsNarrow;
        string title = $"Series after the last period ({Output.F(100 * nominal, "0.#")}% interval); forecasts and alerts are advisory";
        var table = Output.NewTable(title);
        var errors = Output.NewTable("Method, error statistics and alerts per series");
        if (narrow)
        {
            table.AddColumns("Series", "Periods", "Last period", "Actual", "Next", "Interval");
            errors.AddColumns("Series", "Method", "MAD", "Tracking signal", "Alerts raised");
        }
        else
        {
            table.AddColumns("Series", "Method", "Periods", "Last period", "Actual", "Next", "Interval", "MAD", "Tracking signal", "Alerts raised");
        }

        var coverage = Output.NewTable("Next-period interval coverage: each actual against the interval published the period before");
        coverage.AddColumns("Series", "Interval kind now", "Actuals inside");
        long allInside = 0, allScored = 0;
        foreach (var group in result.Forecasts.GroupBy(f => f.Key, StringComparer.Ordinal).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            ForecastUpdate<string> last = group.MaxBy(f => f.Period);
            (long inside, long scored) = Covered(group);
            allInside += inside;
            allScored += scored;
            string key = Markup.Escape(group.Key), method = Markup.Escape(last.Method);
            string periods = group.Select(f => f.Period).Distinct().Count().ToString("N0", CultureInfo.InvariantCulture);
            string lastPeriod = format.Time(last.PeriodStart)[..16].Replace('T', ' ');
            string interval = $"{Output.F(last.Next.Lower)} – {Output.F(last.Next.Upper)}";
            string alerts = raised.GetValueOrDefault(group.Key).ToString(CultureInfo.InvariantCulture);
            if (narrow)
            {
                table.AddRow(key, periods, lastPeriod, Output.F(last.Actual), Output.F(last.Next.Value), interval);
                errors.AddRow(key, method, Output.F(last.Errors.Mad), Output.F(last.Errors.TrackingSignal), alerts);
            }
            else
            {
                table.AddRow(key, method, periods, lastPeriod, Output.F(last.Actual), Output.F(last.Next.Value), interval, Output.F(last.Errors.Mad), Output.F(last.Errors.TrackingSignal), alerts);
            }

            coverage.AddRow(key, KindOf(last.Next), CoverageText(inside, scored));
        }

        AnsiConsole.Write(table);
        if (narrow)
        {
            AnsiConsole.Write(errors);
        }

        AnsiConsole.Write(coverage);
        AnsiConsole.MarkupLine("Next-period intervals: {0} actuals inside the interval published the period before (nominal {1}%).",
            CoverageText(allInside, allScored), Output.F(100 * nominal, "0.#"));
    }

    /// <summary>
    /// Out-of-sample coverage of one series' next-period intervals: each actual against the interval published with the
    /// previous period's update (restatements replace the earlier update of their period).
    /// </summary>
    private static (long Inside, long Scored) Covered(IEnumerable<ForecastUpdate<string>> updates)
    {
        var byPeriod = new SortedDictionary<long, ForecastUpdate<string>>();
        foreach (ForecastUpdate<string> u in updates)
        {
            byPeriod[u.Period] = u;
        }

        long inside = 0, scored = 0;
        ForecastUpdate<string>? previous = null;
        foreach (ForecastUpdate<string> u in byPeriod.Values)
        {
            if (previous is { } p && p.Period == u.Period - 1 && double.IsFinite(p.Next.Lower) && double.IsFinite(p.Next.Upper))
            {
                scored++;
                inside += u.Actual >= p.Next.Lower && u.Actual <= p.Next.Upper ? 1 : 0;
            }

            previous = u;
        }

        return (inside, scored);
    }

    private static string CoverageText(long inside, long scored) =>
        scored == 0 ? "n/a" : string.Create(CultureInfo.InvariantCulture, $"{100.0 * inside / scored:0.0}% of {scored:N0}");
}
