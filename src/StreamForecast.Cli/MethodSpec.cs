using System.Globalization;
using StreamForecast.Forecasting;

namespace StreamForecast.Cli;

/// <summary>
/// The tool's short text form of a forecasting method, used by <c>--method</c> and in the method-configuration file.
/// </summary>
/// <remarks>
/// <para>Forms (numbers with '.' as the decimal point):</para>
/// <list type="bullet">
/// <item><description><c>naive</c>; <c>seasonal-naive:m</c> (seasonal naive, season length m)</description></item>
/// <item><description><c>ma:n</c> (moving average of n periods); <c>wma:w1,w2,…</c> (weights, most recent period first)</description></item>
/// <item><description><c>ses:alpha[,start]</c> with start <c>first</c> (default), <c>mean=k</c> or <c>given=l</c> (the level
/// before the first actual; <c>level=l</c>, the spelling of earlier versions, is read too)</description></item>
/// <item><description><c>holt:level,trend[,damping][,start]</c> with start <c>first2</c> (default), <c>diffs=d</c>, <c>trend=t</c> or <c>given=l;t</c></description></item>
/// <item><description><c>hw:m,add|mul,level,trend,seasonal[,damping[,startSeasons]][,start]</c> (Holt-Winters) with start
/// <c>means</c> (default: season means of the first seasons), <c>decomposition</c> (classical decomposition of the first
/// seasons) or <c>given=l;t;s1;…;sm</c> (level, trend and the m seasonal indices before the first actual)</description></item>
/// <item><description><c>hw2:m1,m2,add|mul,level,trend|none,cycle1,cycle2[,adjust]</c> (Holt-Winters with two seasonal cycles
/// m1 &lt; m2, such as 24 and 168 for hourly data; <c>none</c> for no trend; <c>adjust</c> the first-order error adjustment,
/// default 0)</description></item>
/// <item><description><c>croston:size[,interval]</c>, <c>sba:size[,interval]</c>, <c>tsb:probability,size</c></description></item>
/// <item><description><c>best:m1|m2|…[;weight=w,margin=x,switch=p,min=k]</c>: online selection among the candidate methods
/// (each in one of the forms above), publishing the one with the lowest recent error (<see cref="MethodSelectorOptions"/>)</description></item>
/// </list>
/// <para><see cref="Format"/> writes numbers in their shortest round-trip form, so <c>Parse(Format(m))</c> equals m.</para>
/// </remarks>
internal static class MethodSpec
{
    public const string Forms = "naive | seasonal-naive:m | ma:n | wma:w1,w2,... | ses:alpha[,first|mean=k|given=l] | holt:level,trend[,damping][,first2|diffs=d|trend=t|given=l;t] | hw:m,add|mul,level,trend,seasonal[,damping[,startSeasons]][,means|decomposition|given=l;t;s1;...;sm] | hw2:m1,m2,add|mul,level,trend|none,cycle1,cycle2[,adjust] | croston:size | sba:size | tsb:probability,size | best:m1|m2|...[;weight=w,margin=x,switch=p,min=k]";

    public static ForecasterOptions Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        string trimmed = text.Trim();
        if (trimmed.StartsWith("best:", StringComparison.OrdinalIgnoreCase))
        {
            return Best(text, trimmed[5..]);
        }

        int colon = trimmed.IndexOf(':', StringComparison.Ordinal);
        string name = (colon < 0 ? trimmed : trimmed[..colon]).ToLowerInvariant();
        string[] args = colon < 0 ? [] : trimmed[(colon + 1)..].Split(',', StringSplitOptions.TrimEntries);
        try
        {
            return name switch
            {
                "naive" when args.Length == 0 => new NaiveOptions(),
                "seasonal-naive" when args.Length == 1 => new NaiveOptions(Int(args[0])),
                "ma" when args.Length == 1 => new MovingAverageOptions(Int(args[0])),
                "wma" when args.Length >= 1 => new WeightedMovingAverageOptions(args.Select(Num).ToArray()),
                "ses" when args.Length is 1 or 2 => new ExponentialSmoothingOptions(Num(args[0]), args.Length == 2 ? LevelStartOf(args[1]) : default),
                "holt" when args.Length is >= 2 and <= 4 => Holt(args),
                "hw" when args.Length is >= 5 and <= 8 => HoltWinters(text, args),
                "hw2" when args.Length is 7 or 8 => new TwoSeasonHoltWintersOptions(
                    Int(args[0]), Int(args[1]), SeasonalityOf(args[2]), Num(args[3]), args[4] == "none" ? null : Num(args[4]),
                    Num(args[5]), Num(args[6]), args.Length == 8 ? Num(args[7]) : 0),
                "croston" when args.Length is 1 or 2 => new CrostonOptions(Num(args[0]), args.Length == 2 ? Num(args[1]) : null),
                "sba" when args.Length is 1 or 2 => new CrostonOptions(Num(args[0]), args.Length == 2 ? Num(args[1]) : null, CrostonVariant.SyntetosBoylan),
                "tsb" when args.Length == 2 => new TsbOptions(Num(args[0]), Num(args[1])),
                _ => throw new UsageException($"'{text}' is not a method; use one of: {Forms}."),
            };
        }
        catch (ArgumentException e)
        {
            throw new UsageException($"'{text}': {FirstLine(e.Message)}");
        }
    }

    public static string Format(ForecasterOptions method) => method switch
    {
        NaiveOptions { SeasonLength: 1 } => "naive",
        NaiveOptions n => $"seasonal-naive:{I(n.SeasonLength)}",
        MovingAverageOptions m => $"ma:{I(m.Length)}",
        WeightedMovingAverageOptions w => "wma:" + string.Join(",", w.Weights.Select(D)),
        ExponentialSmoothingOptions s => $"ses:{D(s.Alpha)}" + LevelStartText(s.Start),
        HoltOptions h => $"holt:{D(h.LevelWeight)},{D(h.TrendWeight)},{D(h.Damping)}" + HoltStartText(h.Start),
        HoltWintersOptions hw => $"hw:{I(hw.SeasonLength)},{(hw.Seasonality == Seasonality.Additive ? "add" : "mul")},{D(hw.LevelWeight)},{D(hw.TrendWeight)},{D(hw.SeasonalWeight)},{D(hw.Damping)},{I(hw.StartSeasons)}"
            + HoltWintersStartText(hw.Start),
        TwoSeasonHoltWintersOptions h2 => $"hw2:{I(h2.ShortCycle)},{I(h2.LongCycle)},{(h2.Seasonality == Seasonality.Additive ? "add" : "mul")},{D(h2.LevelWeight)},"
            + $"{(h2.TrendWeight is double beta ? D(beta) : "none")},{D(h2.ShortCycleWeight)},{D(h2.LongCycleWeight)},{D(h2.ErrorAdjustment)}",
        CrostonOptions c => $"{(c.Variant == CrostonVariant.SyntetosBoylan ? "sba" : "croston")}:{D(c.SizeWeight)},{D(c.IntervalWeight)}",
        TsbOptions t => $"tsb:{D(t.ProbabilityWeight)},{D(t.SizeWeight)}",
        MethodSelectorOptions b => "best:" + string.Join("|", b.Candidates.Select(Format))
            + $";weight={D(b.ErrorWeight)},margin={D(b.Margin)},switch={I(b.PeriodsToSwitch)},min={I(b.MinScoredPeriods)}",
        _ => throw new NotSupportedException($"The method {method.MethodName} has no text form in this tool."),
    };

    private static MethodSelectorOptions Best(string text, string body)
    {
        int semicolon = body.IndexOf(';', StringComparison.Ordinal);
        string[] candidates = (semicolon < 0 ? body : body[..semicolon]).Split('|', StringSplitOptions.TrimEntries);
        var methods = new List<ForecasterOptions>(candidates.Length);
        foreach (string candidate in candidates)
        {
            if (candidate.StartsWith("best:", StringComparison.OrdinalIgnoreCase))
            {
                throw new UsageException($"'{text}': a best: selection cannot hold another best: selection.");
            }

            methods.Add(Parse(candidate));
        }

        double weight = MethodSelectorOptions.DefaultErrorWeight, margin = MethodSelectorOptions.DefaultMargin;
        int toSwitch = MethodSelectorOptions.DefaultPeriodsToSwitch, min = MethodSelectorOptions.DefaultMinScoredPeriods;
        if (semicolon >= 0)
        {
            foreach (string setting in body[(semicolon + 1)..].Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries))
            {
                int equals = setting.IndexOf('=', StringComparison.Ordinal);
                string key = equals < 0 ? setting : setting[..equals];
                string value = equals < 0 ? string.Empty : setting[(equals + 1)..];
                switch (key)
                {
                    case "weight": weight = Num(value); break;
                    case "margin": margin = Num(value); break;
                    case "switch": toSwitch = Int(value); break;
                    case "min": min = Int(value); break;
                    default: throw new UsageException($"'{text}': '{setting}' is not a selection setting; use weight=w, margin=x, switch=p or min=k.");
                }
            }
        }

        try
        {
            return new MethodSelectorOptions(methods, weight, margin, toSwitch, min);
        }
        catch (ArgumentException e)
        {
            throw new UsageException($"'{text}': {FirstLine(e.Message)}");
        }
    }

    private static HoltOptions Holt(string[] args)
    {
        double damping = 1.0;
        HoltStart start = default;
        for (int i = 2; i < args.Length; i++)
        {
            if (args[i].Length > 0 && char.IsLetter(args[i][0]))
            {
                start = HoltStartOf(args[i]);
            }
            else
            {
                damping = Num(args[i]);
            }
        }

        return new HoltOptions(Num(args[0]), Num(args[1]), damping, start);
    }

    private static HoltWintersOptions HoltWinters(string text, string[] args)
    {
        int count = args.Length;
        HoltWintersStart start = default;
        if (args[^1].Length > 0 && char.IsLetter(args[^1][0]))
        {
            try
            {
                start = HoltWintersStartOf(args[^1]);
            }
            catch (UsageException e)
            {
                throw new UsageException($"'{text}': {e.Message}");
            }

            count--;
        }

        if (count is < 5 or > 7)
        {
            throw new UsageException($"'{text}' has {count} numbers before the start; use hw:m,add|mul,level,trend,seasonal[,damping[,startSeasons]][,start].");
        }

        return new HoltWintersOptions(
            Int(args[0]), SeasonalityOf(args[1]), Num(args[2]), Num(args[3]), Num(args[4]),
            count >= 6 ? Num(args[5]) : 1.0, count == 7 ? Int(args[6]) : 2, start);
    }

    private static HoltWintersStart HoltWintersStartOf(string text)
    {
        if (text == "means")
        {
            return HoltWintersStart.SeasonMeans;
        }

        if (text == "decomposition")
        {
            return HoltWintersStart.ClassicalDecomposition;
        }

        string[] given = text.StartsWith("given=", StringComparison.Ordinal) ? text[6..].Split(';') : [];
        return given.Length >= 4
            ? HoltWintersStart.Given(Num(given[0]), Num(given[1]), given[2..].Select(Num).ToArray())
            : throw new UsageException($"'{text}' is not a Holt-Winters start; use means, decomposition or given=l;t;s1;...;sm.");
    }

    private static string HoltWintersStartText(HoltWintersStart start) => start.Kind switch
    {
        HoltWintersStartKind.ClassicalDecomposition => ",decomposition",
        HoltWintersStartKind.Given => $",given={D(start.Level!.Value)};{D(start.Trend!.Value)};" + string.Join(";", start.SeasonalIndices.Select(D)),
        _ => string.Empty,
    };

    private static LevelStart LevelStartOf(string text) => text switch
    {
        "first" => LevelStart.FirstActual,
        _ when text.StartsWith("mean=", StringComparison.Ordinal) => LevelStart.MeanOfFirst(Int(text[5..])),
        _ when text.StartsWith("given=", StringComparison.Ordinal) => LevelStart.Given(Num(text[6..])),
        _ when text.StartsWith("level=", StringComparison.Ordinal) => LevelStart.Given(Num(text[6..])), // earlier versions' spelling
        _ => throw new UsageException($"'{text}' is not a level start; use first, mean=k or given=l."),
    };

    private static HoltStart HoltStartOf(string text)
    {
        if (text == "first2")
        {
            return HoltStart.FirstTwoActuals;
        }

        if (text.StartsWith("diffs=", StringComparison.Ordinal))
        {
            return HoltStart.MeanOfFirstDifferences(Int(text[6..]));
        }

        if (text.StartsWith("trend=", StringComparison.Ordinal))
        {
            return HoltStart.FirstActualAndTrend(Num(text[6..]));
        }

        string[] given = text.StartsWith("given=", StringComparison.Ordinal) ? text[6..].Split(';') : [];
        return given.Length == 2
            ? HoltStart.Given(Num(given[0]), Num(given[1]))
            : throw new UsageException($"'{text}' is not a Holt start; use first2, diffs=d, trend=t or given=l;t.");
    }

    private static string LevelStartText(LevelStart start) => start.Kind switch
    {
        LevelStartKind.MeanOfFirst => $",mean={I(start.WarmUpLength)}",
        LevelStartKind.Given => $",given={D(start.Level!.Value)}",
        _ => string.Empty,
    };

    private static string HoltStartText(HoltStart start) => start.Kind switch
    {
        HoltStartKind.MeanOfFirstDifferences => $",diffs={I(start.Differences!.Value)}",
        HoltStartKind.FirstActualAndTrend => $",trend={D(start.Trend!.Value)}",
        HoltStartKind.Given => $",given={D(start.Level!.Value)};{D(start.Trend!.Value)}",
        _ => string.Empty,
    };

    private static Seasonality SeasonalityOf(string text) => text switch
    {
        "add" => Seasonality.Additive,
        "mul" => Seasonality.Multiplicative,
        _ => throw new UsageException($"'{text}' is not a seasonality; use add or mul."),
    };

    private static int Int(string text) =>
        int.TryParse(text, NumberStyles.Integer, CultureInfo.InvariantCulture, out int value)
            ? value
            : throw new UsageException($"'{text}' is not a whole number.");

    private static double Num(string text) =>
        double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double value)
            ? value
            : throw new UsageException($"'{text}' is not a number (use '.' as the decimal point).");

    private static string I(int value) => value.ToString(CultureInfo.InvariantCulture);

    private static string D(double value) => value.ToString("R", CultureInfo.InvariantCulture);

    private static string FirstLine(string message)
    {
        int end = message.IndexOf(" (Parameter", StringComparison.Ordinal);
        return end < 0 ? message : message[..end];
    }
}
