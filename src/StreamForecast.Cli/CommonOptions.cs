using System.CommandLine;
using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Cli;

/// <summary>
/// The options several commands share: the input CSV's layout, the period calendar, the method and the rules. Each command
/// gets an instance of its own, so a command can word an option's help for what the option does there (descriptions name
/// only options the command has; <c>UseFor*</c> set the wording of the commands that do not replay through the engine).
/// </summary>
internal sealed class CommonOptions
{
    public Argument<string> Input { get; } = new("input") { Description = "The observations CSV (a header row, then one row per event)." };

    public Option<string[]> Key { get; } = new("--key")
    {
        Description = "The key column(s); several are joined with '/' into one composite key.",
        DefaultValueFactory = _ => ["key"],
        AllowMultipleArgumentsPerToken = true,
    };

    public Option<string> Time { get; } = new("--time") { Description = "The timestamp column.", DefaultValueFactory = _ => "time" };

    public Option<string> Quantity { get; } = new("--quantity") { Description = "The quantity column.", DefaultValueFactory = _ => "quantity" };

    public Option<string?> EventId { get; } = new("--event-id") { Description = "An optional event-id column; repeated ids are counted once." };

    public Option<string> Delimiter { get; } = new("--delimiter") { Description = "The field delimiter (',', ';', 'tab' ...).", DefaultValueFactory = _ => "," };

    public Option<string[]> TimeFormat { get; } = new("--time-format")
    {
        Description = "The timestamp form(s) as .NET custom formats, read with the invariant culture, e.g. \"dd/MM/yyyy HH:mm\"; " +
            "repeat the option or separate formats with commas. Without it only ISO 8601 is read (2025-03-01, 2025-03-01T09:30, " +
            "2025-03-01 09:30:00+01:00); a day/month date such as 01/04/2025 or even 13/04/2025 is refused, since the order must not be guessed.",
        DefaultValueFactory = _ => [],
    };

    public Option<string> DecimalSeparator { get; } = new("--decimal-separator")
    {
        Description = "The quantity's decimal separator: '.' (default) or ','. With ',' the fields must be delimited by something else (--delimiter ';').",
        DefaultValueFactory = _ => ".",
    };

    public Option<long> MaxPeriods { get; } = new("--max-periods")
    {
        Description = "The most periods the rows may span from the earliest to the latest timestamp (every period between is closed); " +
            "a wider span is a data error naming both rows.",
        DefaultValueFactory = _ => 100_000,
    };

    public Option<BadRowMode> OnBadRow { get; } = new("--on-bad-row")
    {
        Description = "stop (default): stop at the first malformed row, naming file, line and column, and exit 2 when the engine drops any event " +
            "or period (too late, refused); skip: skip, count and report malformed rows, and count the dropped ones without failing.",
        DefaultValueFactory = _ => BadRowMode.Stop,
    };

    public Option<string> Period { get; } = new("--period")
    {
        Description = "The period: day or week (ISO weeks) in --zone, or a fixed interval such as 15m, 1h, 6h, 1d.",
        DefaultValueFactory = _ => "day",
    };

    public Option<string> Zone { get; } = new("--zone")
    {
        Description = "The IANA time zone of day/week periods and of timestamps without an offset.",
        DefaultValueFactory = _ => "UTC",
    };

    public Option<string> Lateness { get; } = new("--lateness") { Description = "How late an event may arrive and still count (e.g. 3h).", DefaultValueFactory = _ => "0s" };

    public Option<string> Method { get; } = new("--method")
    {
        Description = "The method of series not in --config: " + MethodSpec.Forms + ".",
        DefaultValueFactory = _ => "ses:0.2",
    };

    public Option<string?> Config { get; } = new("--config") { Description = "A method-configuration file written by 'tune'; its series run their tuned method." };

    public Option<bool> ForceCalendar { get; } = new("--force")
    {
        Description = "Use the --config file even though it was tuned on another period calendar than --period and --zone give (refused without it, exit 1).",
    };

    public Option<string[]> Rules { get; } = new("--rule")
    {
        Description = "Drift rule(s): cusum:h, trigg:limit, signal:limit (tracking signal). Append @reference to watch the reference " +
            "model's errors instead of the published model's (needs --reference-method), e.g. cusum:5@reference.",
        DefaultValueFactory = _ => ["cusum:5"],
        AllowMultipleArgumentsPerToken = true,
    };

    public Option<string?> ReferenceMethod { get; } = new("--reference-method")
    {
        Description = "A slower model run beside each series' method, never published; rules marked @reference watch its errors, " +
            "so a lasting shift the method quickly follows is still reported (once). A method (" + MethodSpec.Forms + "), or " +
            "slower[:scale] for a copy of each series' own method with its smoothing weights times scale (default 0.25; a moving " +
            "average's window lengthened to match). Default none.",
    };

    public Option<int> Season { get; } = new("--season") { Description = "The season length in periods (e.g. 7 for days in a week); 1 = none.", DefaultValueFactory = _ => 1 };

    public Option<int> Horizon { get; } = new("--horizon") { Description = "The furthest horizon forecast.", DefaultValueFactory = _ => 1 };

    public Option<string> Intervals { get; } = new("--intervals")
    {
        Description = "How the 80% intervals are formed: normal (from the error σ) or empirical (from each series' last 100 errors per horizon; normal until 20 exist).",
        DefaultValueFactory = _ => "normal",
    };

    public Option<bool> NonNegative { get; } = new("--non-negative")
    {
        Description = "The series cannot go below zero (counts, sales): clip forecasts and interval bounds at 0; errors are scored against the clipped forecast.",
    };

    /// <summary>Words the shared options for <c>tune</c>: no engine replay, no --config; the horizon is also backtested.</summary>
    public void UseForTuning()
    {
        Method.Description = "The default method, the baseline every candidate is compared with: " + MethodSpec.Forms + ".";
        Horizon.Description = "The furthest horizon forecast and backtested.";
        OnBadRow.Description = OnBadRowWithoutEngine;
    }

    /// <summary>Words the shared options for <c>calibrate</c>: no engine replay, no --config.</summary>
    public void UseForCalibration()
    {
        Method.Description = "The method whose errors the rule watches: " + MethodSpec.Forms + ".";
        OnBadRow.Description = OnBadRowWithoutEngine;
    }

    private const string OnBadRowWithoutEngine =
        "stop (default): stop at the first malformed row, naming file, line and column (exit 2); skip: skip, count and report malformed rows.";

    public Option<bool> FullPrecision { get; } = new("--full-precision")
    {
        Description = "Write numbers in the output CSV files in shortest round-trip form (every digit a double needs) instead of at most 6 significant digits and 12 decimals.",
    };

    /// <summary>How the output CSV files write times (in --zone) and numbers (--full-precision).</summary>
    public CsvValueFormat CsvFormatOf(ParseResult parse) =>
        new(ZoneOf(parse.GetValue(Zone)!), parse.GetValue(FullPrecision));

    public void AddInputOptions(Command command)
    {
        command.Arguments.Add(Input);
        foreach (Option option in new Option[] { Key, Time, Quantity, EventId, Delimiter, TimeFormat, DecimalSeparator, OnBadRow, Period, Zone, MaxPeriods })
        {
            command.Options.Add(option);
        }
    }

    public CsvLayout Layout(ParseResult parse)
    {
        string delimiter = DelimiterOf(parse.GetValue(Delimiter)!);
        var quantities = new QuantityReader(parse.GetValue(DecimalSeparator)!);
        if (quantities.Separator.ToString() == delimiter)
        {
            throw new UsageException($"--decimal-separator '{quantities.Separator}' is also the field delimiter; files with a decimal comma are usually delimited by ';' (--delimiter ';').");
        }

        long maxPeriods = parse.GetValue(MaxPeriods);
        if (maxPeriods < 1)
        {
            throw new UsageException($"--max-periods {maxPeriods}: give 1 or more.");
        }

        PeriodCalendar calendar = Calendar(parse);
        return new CsvLayout(
            parse.GetValue(Key)!,
            parse.GetValue(Time)!,
            parse.GetValue(Quantity)!,
            parse.GetValue(EventId),
            delimiter,
            parse.GetValue(OnBadRow),
            TimestampReader.Of(parse.GetValue(TimeFormat)!, ZoneOf(parse.GetValue(Zone)!), calendar),
            quantities,
            calendar,
            maxPeriods);
    }

    public PeriodCalendar Calendar(ParseResult parse)
    {
        string period = parse.GetValue(Period)!;
        TimeZoneInfo zone = ZoneOf(parse.GetValue(Zone)!);
        try
        {
            return period.ToLowerInvariant() switch
            {
                "day" => PeriodCalendar.Daily(zone),
                "week" => PeriodCalendar.IsoWeekly(zone),
                _ => PeriodCalendar.FixedInterval(DurationOf("--period", period)),
            };
        }
        catch (ArgumentException e)
        {
            throw new UsageException($"--period {period}: {Short(e.Message)}");
        }
    }

    public LatenessPolicy LatenessOf(ParseResult parse)
    {
        string text = parse.GetValue(Lateness)!;
        try
        {
            return new LatenessPolicy(DurationOf("--lateness", text));
        }
        catch (ArgumentException e)
        {
            throw new UsageException($"--lateness {text}: {Short(e.Message)}");
        }
    }

    public ForecasterOptions MethodOf(ParseResult parse) => MethodSpec.Parse(parse.GetValue(Method)!);

    public DriftRuleOptions[] RulesOf(ParseResult parse) => [.. parse.GetValue(Rules)!.Select(RuleOf)];

    /// <summary>
    /// The reference method of a series from its own method under --reference-method: none, one fixed method, or a slower
    /// copy of the series' method. Refuses rules that watch a reference when there is none.
    /// </summary>
    public Func<ForecasterOptions, ForecasterOptions?> ReferenceOf(ParseResult parse, IReadOnlyList<DriftRuleOptions> rules)
    {
        string? text = parse.GetValue(ReferenceMethod);
        if (text is null)
        {
            foreach (DriftRuleOptions rule in rules)
            {
                if (rule.Watches == WatchedModel.Reference)
                {
                    throw new UsageException($"--rule {rule.RuleName}@reference watches the reference model, but no --reference-method is given.");
                }
            }

            return static _ => null;
        }

        string trimmed = text.Trim();
        string[] parts = trimmed.Split(':', 2, StringSplitOptions.TrimEntries);
        if (parts[0].Equals("slower", StringComparison.OrdinalIgnoreCase))
        {
            double scale = ReferenceMethods.DefaultWeightScale;
            if (parts.Length == 2 && !(double.TryParse(parts[1], NumberStyles.Float, CultureInfo.InvariantCulture, out scale) && scale > 0 && scale <= 1))
            {
                throw new UsageException($"--reference-method {text}: the scale after 'slower:' must be a number above 0 and at most 1 (e.g. slower:0.25).");
            }

            return method =>
            {
                try
                {
                    return Forecasting.ReferenceMethods.Slower(method, scale);
                }
                catch (ArgumentException e)
                {
                    throw new UsageException($"--reference-method {text}: {Short(e.Message)}");
                }
            };
        }

        ForecasterOptions fixedMethod = MethodSpec.Parse(trimmed);
        return _ => fixedMethod;
    }

    public int SeasonOf(ParseResult parse)
    {
        int season = parse.GetValue(Season);
        return season >= 1 ? season : throw new UsageException($"--season {season}: the season length must be 1 or more.");
    }

    public int HorizonOf(ParseResult parse)
    {
        int horizon = parse.GetValue(Horizon);
        return horizon is >= 1 and <= 1000 ? horizon : throw new UsageException($"--horizon {horizon}: the horizon must be between 1 and 1,000.");
    }

    /// <summary>The empirical-interval settings of --intervals, or null for normal intervals.</summary>
    public EmpiricalIntervalOptions? IntervalsOf(ParseResult parse) => parse.GetValue(Intervals)!.Trim().ToLowerInvariant() switch
    {
        "normal" => null,
        "empirical" => new EmpiricalIntervalOptions(),
        string other => throw new UsageException($"--intervals {other}: use normal or empirical."),
    };

    public static DriftRuleOptions RuleOf(string text)
    {
        string ruleText = text;
        WatchedModel watches = WatchedModel.Published;
        int at = text.IndexOf('@', StringComparison.Ordinal);
        if (at >= 0)
        {
            ruleText = text[..at];
            watches = text[(at + 1)..].Trim().ToLowerInvariant() switch
            {
                "reference" => WatchedModel.Reference,
                "published" => WatchedModel.Published,
                _ => throw new UsageException($"--rule {text}: after '@' give reference or published (whose errors the rule watches)."),
            };
        }

        string[] parts = ruleText.Split(':', 2, StringSplitOptions.TrimEntries);
        if (parts.Length != 2 || !double.TryParse(parts[1], NumberStyles.Float, CultureInfo.InvariantCulture, out double level))
        {
            throw new UsageException($"--rule {text}: use cusum:h, trigg:limit or signal:limit, optionally followed by @reference.");
        }

        try
        {
            DriftRuleOptions rule = parts[0].ToLowerInvariant() switch
            {
                "cusum" => new CusumRuleOptions(decisionInterval: level),
                "trigg" => new TriggSignalRuleOptions(limit: level),
                "signal" => new TrackingSignalRuleOptions(limit: level),
                _ => throw new UsageException($"--rule {text}: '{parts[0]}' is not a rule; use cusum, trigg or signal."),
            };
            return watches == WatchedModel.Published ? rule : rule with { Watches = watches };
        }
        catch (ArgumentException e)
        {
            throw new UsageException($"--rule {text}: {Short(e.Message)}");
        }
    }

    public static TimeSpan DurationOf(string option, string text)
    {
        string t = text.Trim().ToLowerInvariant();
        if (TimeSpan.TryParse(t, CultureInfo.InvariantCulture, out TimeSpan span) && t.Contains(':', StringComparison.Ordinal))
        {
            return span;
        }

        int unitStart = t.Length;
        while (unitStart > 0 && char.IsLetter(t[unitStart - 1]))
        {
            unitStart--;
        }

        if (double.TryParse(t[..unitStart], NumberStyles.Float, CultureInfo.InvariantCulture, out double amount) && amount >= 0)
        {
            switch (t[unitStart..])
            {
                case "s": return TimeSpan.FromSeconds(amount);
                case "m": return TimeSpan.FromMinutes(amount);
                case "h": return TimeSpan.FromHours(amount);
                case "d": return TimeSpan.FromDays(amount);
            }
        }

        throw new UsageException($"{option} {text}: not a duration; use a number with s, m, h or d (e.g. 15m, 3h) or hh:mm:ss.");
    }

    private static string DelimiterOf(string text) => text.ToLowerInvariant() switch
    {
        "tab" or "\\t" => "\t",
        "" => throw new UsageException("--delimiter: give a delimiter such as ',', ';' or tab."),
        _ => text,
    };

    public static TimeZoneInfo ZoneOf(string id)
    {
        try
        {
            return TimeZoneInfo.FindSystemTimeZoneById(id);
        }
        catch (Exception e) when (e is TimeZoneNotFoundException or InvalidTimeZoneException)
        {
            throw new UsageException($"--zone {id}: not a known IANA time zone (e.g. UTC, Europe/Dublin, America/New_York).");
        }
    }

    private static string Short(string message)
    {
        int end = message.IndexOf(" (Parameter", StringComparison.Ordinal);
        return end < 0 ? message : message[..end];
    }
}
