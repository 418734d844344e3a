using System.Globalization;

namespace StreamForecast.Cli;

/// <summary>
/// Reads the quantity column: a number with the decimal separator given (<c>--decimal-separator</c>, '.' by default),
/// an optional sign and exponent, no thousands separators, finite and within ±<see cref="NumericDomain.MaxMagnitude"/>.
/// </summary>
/// <remarks>
/// A value that would read only with the other separator is refused with a message naming the option, never guessed:
/// with '.' as the separator "1,234" could be 1.234 or 1234. Immutable; thread-safe.
/// </remarks>
internal sealed class QuantityReader
{
    private readonly NumberFormatInfo _format;
    private readonly NumberFormatInfo _other;

    /// <summary>Creates a reader for '.' or ','.</summary>
    /// <exception cref="UsageException"><paramref name="separator"/> is neither '.' nor ','.</exception>
    public QuantityReader(string separator)
    {
        if (separator is not ("." or ","))
        {
            throw new UsageException($"--decimal-separator '{separator}': give '.' (the default) or ','.");
        }

        Separator = separator[0];
        _format = FormatWith(separator);
        _other = FormatWith(separator == "." ? "," : ".");
    }

    /// <summary>The decimal separator.</summary>
    public char Separator { get; }

    /// <summary>Reads <paramref name="text"/>; on failure <paramref name="problem"/> says why and what to do.</summary>
    public bool TryRead(string text, out double quantity, out string? problem)
    {
        problem = null;
        if (!double.TryParse(text, NumberStyles.Float, _format, out quantity) || !double.IsFinite(quantity))
        {
            string shown = Shorten(text);
            problem = double.TryParse(text, NumberStyles.Float, _other, out double other) && double.IsFinite(other)
                ? $"'{shown}' is written with '{(Separator == '.' ? ',' : '.')}' as the decimal separator, but it is '{Separator}' here; pass --decimal-separator '{(Separator == '.' ? ',' : '.')}' if the file is written that way (with --delimiter ';' when it is ',')."
                : $"'{shown}' is not a finite number (a sign, digits, '{Separator}' as the decimal separator, an optional exponent; no thousands separators).";
            return false;
        }

        if (!NumericDomain.Contains(quantity))
        {
            problem = string.Create(CultureInfo.InvariantCulture, $"'{Shorten(text)}' is outside ±{NumericDomain.MaxMagnitude:0.#e0}, the largest magnitude StreamForecast accepts (NumericDomain.MaxMagnitude).");
            return false;
        }

        return true;
    }

    private static NumberFormatInfo FormatWith(string separator)
    {
        var format = (NumberFormatInfo)CultureInfo.InvariantCulture.NumberFormat.Clone();
        format.NumberDecimalSeparator = separator;
        format.NumberGroupSeparator = separator == "," ? "." : ",";
        return NumberFormatInfo.ReadOnly(format);
    }

    private static string Shorten(string text) => text.Length <= 40 ? text : text[..40] + "…";
}
