using System.Globalization;
using StreamForecast.Forecasting;

namespace StreamForecast.Cli;

/// <summary>
/// The tool's short text form of a forecasting method, used by <c>--method</c> and in the method-configuration file.
/// </summary>
/// <remarks>
/// <para>Forms (numbers with '.' as the decimal point):</para>
/// <list type="bullet">
/// <item><description><c>naive</c>; <c>snaive:m</c> (seasonal naive, season length m)</description></item>
/// <item><description><c>ma:n</c> (moving average of n periods); <c>wma:w1,w2,…</c> (weights, most recent period first)</description></item>
/// <item><description><c>ses:alpha[,start]</c> with start <c>first</c> (default), <c>mean=k</c> or <c>level=x</c></description></item>
/// <item><description><c>holt:level,trend[,damping][,start]</c> with start <c>first2</c> (default), <c>diffs=d</c>, <c>trend=t</c> or <c>given=l;t</c></description></item>
/// <item><description><c>hw:m,add|mul,level,trend,seasonal[,damping[,startSeasons]]</c> (Holt-Winters)</description></item>
/// <item><description><c>croston:size[,interval]</c>, <c>sba:size[,interval]</c>, <c>tsb:probability,size</c></description></item>
/// </list>
/// <para><see cref="Format"/> writes numbers in their shortest round-trip form, so <c>Parse(Format(m))</c> equals m.</para>
/// </remarks>
internal static class MethodSpec
{
    public const string Forms = "naive | snaive:m | ma:n | wma:w1,w2,... | ses:alpha | holt:level,trend[,damping] | hw:m,add|mul,level,trend,seasonal[,damping] | croston:size | sba:size | tsb:probability,size";

    public static ForecasterOptions Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        string trimmed = text.Trim();
        int colon = trimmed.IndexOf(':', StringComparison.Ordinal);
        string name = (colon < 0 ? trimmed : trimmed[..colon]).ToLowerInvariant();
        string[] args = colon < 0 ? [] : trimmed[(colon + 1)..].Split(',', StringSplitOptions.TrimEntries);
        try
        {
            return name switch
            {
                "naive" when args.Length == 0 => new NaiveOptions(),
                "snaive" when args.Length == 1 => new NaiveOptions(Int(args[0])),
                "ma" when args.Length == 1 => new MovingAverageOptions(Int(args[0])),
                "wma" when args.Length >= 1 => new WeightedMovingAverageOptions(args.Select(Num).ToArray()),
                "ses" when args.Length is 1 or 2 => new ExponentialSmoothingOptions(Num(args[0]), args.Length == 2 ? LevelStartOf(args[1]) : default),
                "holt" when args.Length is >= 2 and <= 4 => Holt(args),
                "hw" when args.Length is >= 5 and <= 7 => new HoltWintersOptions(
                    Int(args[0]), SeasonalityOf(args[1]), Num(args[2]), Num(args[3]), Num(args[4]),
                    args.Length >= 6 ? Num(args[5]) : 1.0, args.Length == 7 ? Int(args[6]) : 2),
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
        NaiveOptions n => $"snaive:{I(n.SeasonLength)}",
        MovingAverageOptions m => $"ma:{I(m.Length)}",
        WeightedMovingAverageOptions w => "wma:" + string.Join(",", w.Weights.Select(D)),
        ExponentialSmoothingOptions s => $"ses:{D(s.Alpha)}" + LevelStartText(s.Start),
        HoltOptions h => $"holt:{D(h.LevelWeight)},{D(h.TrendWeight)},{D(h.Damping)}" + HoltStartText(h.Start),
        HoltWintersOptions hw => $"hw:{I(hw.SeasonLength)},{(hw.Seasonality == Seasonality.Additive ? "add" : "mul")},{D(hw.LevelWeight)},{D(hw.TrendWeight)},{D(hw.SeasonalWeight)},{D(hw.Damping)},{I(hw.StartSeasons)}",
        CrostonOptions c => $"{(c.Variant == CrostonVariant.SyntetosBoylan ? "sba" : "croston")}:{D(c.SizeWeight)},{D(c.IntervalWeight)}",
        TsbOptions t => $"tsb:{D(t.ProbabilityWeight)},{D(t.SizeWeight)}",
        _ => throw new NotSupportedException($"The method {method.MethodName} has no text form in this tool."),
    };

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

    private static LevelStart LevelStartOf(string text) => text switch
    {
        "first" => LevelStart.FirstActual,
        _ when text.StartsWith("mean=", StringComparison.Ordinal) => LevelStart.MeanOfFirst(Int(text[5..])),
        _ when text.StartsWith("level=", StringComparison.Ordinal) => LevelStart.Given(Num(text[6..])),
        _ => throw new UsageException($"'{text}' is not a level start; use first, mean=k or level=x."),
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
        LevelStartKind.Given => $",level={D(start.Level!.Value)}",
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
