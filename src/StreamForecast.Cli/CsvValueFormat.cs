using System.Globalization;

namespace StreamForecast.Cli;

/// <summary>
/// How times and numbers are written to the output CSV files. Times are ISO 8601 with the offset of <c>--zone</c> at that
/// instant (fixed-interval periods included), to the second: every calendar's periods start on a whole second (fixed
/// intervals are whole seconds from 1 s), so a fraction would only ever show zeros. Numbers have at most 6 significant digits and 12 decimals, never an exponent, and
/// keep every integer digit (1234567.8 is written 1234568); with <c>--full-precision</c> they are written in .NET's
/// shortest round-trip form ("R"), so reading them back gives the very same doubles. Not finite: an empty field.
/// </summary>
internal sealed class CsvValueFormat(TimeZoneInfo zone, bool fullPrecision)
{
    public const int SignificantDigits = 6;

    public const int MaxDecimals = 12;

    public string Time(DateTimeOffset time) => TimeZoneInfo.ConvertTime(time, zone).ToString("yyyy-MM-dd'T'HH:mm:sszzz", CultureInfo.InvariantCulture);

    public string Number(double value)
    {
        if (!double.IsFinite(value))
        {
            return string.Empty;
        }

        if (fullPrecision)
        {
            return value.ToString("R", CultureInfo.InvariantCulture);
        }

        return Rounded(value);
    }

    /// <summary>The default form: at most <see cref="SignificantDigits"/> significant digits and <see cref="MaxDecimals"/> decimals, no exponent.</summary>
    public static string Rounded(double value)
    {
        if (value == 0)
        {
            return "0";
        }

        int magnitude = (int)Math.Floor(Math.Log10(Math.Abs(value)));
        int decimals = Math.Clamp(SignificantDigits - 1 - magnitude, 0, MaxDecimals);
        double rounded = Math.Round(value, decimals, MidpointRounding.AwayFromZero);
        return rounded == 0 ? "0" : rounded.ToString("0.############", CultureInfo.InvariantCulture);
    }
}
