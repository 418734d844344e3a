using System.Globalization;
using System.Text.RegularExpressions;

namespace StreamForecast.Demo;

/// <summary>How the demo prints numbers inside method labels.</summary>
internal static partial class DemoFormat
{
    /// <summary>Significant digits of the numbers in a method label.</summary>
    public const int SignificantDigits = 4;

    /// <summary>
    /// A method label with every decimal number in it rounded to <see cref="SignificantDigits"/> significant digits
    /// (never an exponent): a parameter fitted by the optimiser ("0.0012318979910241764") reads like one from the grid
    /// ("0.0028"): HoltWinters(additive, m 7, 0.001232, 1, 0.1121, damping 0.9553).
    /// </summary>
    public static string Method(string label) =>
        DecimalNumber().Replace(label, m => Round(double.Parse(m.Value, CultureInfo.InvariantCulture)));

    /// <summary><paramref name="value"/> at <see cref="SignificantDigits"/> significant digits, trailing zeros dropped.</summary>
    public static string Round(double value)
    {
        if (value == 0 || !double.IsFinite(value))
        {
            return value.ToString(CultureInfo.InvariantCulture);
        }

        int decimals = Math.Clamp(SignificantDigits - 1 - (int)Math.Floor(Math.Log10(Math.Abs(value))), 0, 15);
        return Math.Round(value, decimals, MidpointRounding.AwayFromZero).ToString("0.###############", CultureInfo.InvariantCulture);
    }

    [GeneratedRegex(@"-?\d+\.\d+(?:[eE][-+]?\d+)?")]
    private static partial Regex DecimalNumber();
}
