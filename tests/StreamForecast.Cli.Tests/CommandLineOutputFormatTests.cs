using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;

namespace StreamForecast.Cli.Tests;

/// <summary>Output CSV times are written in --zone to the second; numbers at 6 significant digits unless --full-precision.</summary>
public sealed partial class CommandLineOutputFormatTests : IDisposable
{
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    /// <summary>Invented hourly counts of one sensor: about 10 an hour for 40 hours, then about 30.</summary>
    private static string HourlyStepCsv()
    {
        var csv = new StringBuilder("device,time,count\n");
        for (int h = 0; h < 60; h++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"g1,{new DateTime(2025, 6, 1).AddHours(h):yyyy-MM-ddTHH:mm}:00Z,{10 + (h % 3) - 1 + (h >= 40 ? 20 : 0)}\n");
        }

        return csv.ToString();
    }

    [Fact]
    public void Replay_HourlyPeriodsInZone_WritesPeriodStartsWithTheZonesOffsetOnEachSideOfTheClockChange()
    {
        // The clocks in Berlin go forward at 01:00 UTC on 30 March 2025, from UTC+1 to UTC+2 (IANA time zone database,
        // common practice): the hour from 00:00Z is 01:00+01:00, the next one 03:00+02:00.
        _tool.Write("meter.csv", "device,time,kwh\nm1,2025-03-30T00:30:00Z,1.5\nm1,2025-03-30T01:30:00Z,2\n");

        ToolResult result = _tool.Run("replay", "meter.csv", "--key", "device", "--quantity", "kwh", "--period", "1h", "--zone", "Europe/Berlin", "--method", "naive");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] rows = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1)];
        Assert.Equal(2, rows.Length);
        Assert.StartsWith("m1,2025-03-30T01:00:00+01:00,1.5,0,", rows[0], StringComparison.Ordinal);
        Assert.StartsWith("m1,2025-03-30T03:00:00+02:00,2,0,1.5,", rows[1], StringComparison.Ordinal);
        Assert.Contains("2025-03-30 03:00", result.Output, StringComparison.Ordinal); // the summary's last period, in the zone too
    }

    [Fact]
    public void Replay_HourlyAlertsInZone_WritesPeriodStartsWithTheZonesOffsetAndNoFraction()
    {
        _tool.Write("step.csv", HourlyStepCsv());

        ToolResult result = _tool.Run("replay", "step.csv", "--key", "device", "--quantity", "count", "--period", "1h", "--zone", "Asia/Kolkata", "--method", "ma:5", "--rule", "cusum:5");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] alerts = [.. File.ReadLines(_tool.PathOf("alerts.csv")).Skip(1)];
        Assert.NotEmpty(alerts);
        var forecastStarts = File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1).Select(l => l.Split(',')[1]).ToHashSet(StringComparer.Ordinal);
        Assert.Contains("2025-06-01T05:30:00+05:30", forecastStarts); // 00:00Z in India Standard Time, UTC+5:30 (IANA, common practice)
        foreach (string alert in alerts)
        {
            string start = alert.Split(',')[1];
            Assert.Matches(IsoSecondsWithOffset(), start);
            Assert.EndsWith("+05:30", start, StringComparison.Ordinal);
            Assert.Contains(start, forecastStarts);
        }
    }

    [Fact]
    public void Replay_DefaultPrecision_SixSignificantDigitsAndFullPrecisionRoundTrips()
    {
        _tool.Write("step.csv", HourlyStepCsv());
        string[] args = ["replay", "step.csv", "--key", "device", "--quantity", "count", "--period", "1h", "--method", "ses:0.3"];

        ToolResult rounded = _tool.Run(args);
        string[] roundedLines = [.. File.ReadLines(_tool.PathOf("forecasts.csv"))];
        ToolResult full = _tool.Run([.. args, "--full-precision"]);
        string[] fullLines = [.. File.ReadLines(_tool.PathOf("forecasts.csv"))];

        Assert.True(rounded.ExitCode == 0, rounded.ToString());
        Assert.True(full.ExitCode == 0, full.ToString());
        Assert.Equal(roundedLines.Length, fullLines.Length);
        string[] header = roundedLines[0].Split(',');
        int[] numeric = [.. new[] { "actual", "forecast", "error", "next", "next_lower", "next_upper", "mad", "tracking_signal", "trigg_signal" }.Select(c => Array.IndexOf(header, c))];
        Assert.DoesNotContain(-1, numeric);
        int longer = 0;
        for (int i = 1; i < roundedLines.Length; i++)
        {
            string[] r = roundedLines[i].Split(','), f = fullLines[i].Split(',');
            foreach (int c in numeric)
            {
                Assert.Equal(r[c].Length == 0, f[c].Length == 0);
                if (f[c].Length == 0)
                {
                    continue;
                }

                double exact = double.Parse(f[c], CultureInfo.InvariantCulture);
                Assert.Equal(f[c], exact.ToString("R", CultureInfo.InvariantCulture)); // full precision: the shortest round-trip text
                Assert.Matches(PlainNumber(), r[c]); // no exponent
                Assert.True(SignificantDigits(r[c]) <= 6, r[c]);
                // Rounded to 6 significant digits: within half a unit of the 6th digit of the exact value.
                double unit = Math.Pow(10, Math.Floor(Math.Log10(Math.Abs(exact))) - 5);
                Assert.True(Math.Abs(double.Parse(r[c], CultureInfo.InvariantCulture) - exact) <= (unit / 2) * (1 + 1e-9), $"{r[c]} for {f[c]}");
                longer += SignificantDigits(f[c].TrimStart('-')) > 6 ? 1 : 0;
            }
        }

        Assert.True(longer > 100, $"only {longer} values needed more than 6 digits: the check says little"); // SES(0.3) forecasts are long decimals
    }

    [Fact]
    public void Replay_DefaultPrecision_KeepsEveryIntegerDigitOfLargeValues()
    {
        _tool.Write("big.csv", "device,time,count\ng1,2025-06-01T00:00:00Z,123456789\ng1,2025-06-01T01:00:00Z,123456789.25\n");

        ToolResult result = _tool.Run("replay", "big.csv", "--key", "device", "--quantity", "count", "--period", "1h", "--method", "naive");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] rows = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1)];
        Assert.StartsWith("g1,2025-06-01T00:00:00+00:00,123456789,0,", rows[0], StringComparison.Ordinal);
        Assert.StartsWith("g1,2025-06-01T01:00:00+00:00,123456789,0,123456789,0.25,", rows[1], StringComparison.Ordinal); // the actual's .25 is past its 6th digit; the error keeps it
    }

    private static int SignificantDigits(string number) =>
        number.TrimStart('-').Replace(".", string.Empty, StringComparison.Ordinal).TrimStart('0').TrimEnd('0').Length;

    [GeneratedRegex(@"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}[+-]\d{2}:\d{2}$")]
    private static partial Regex IsoSecondsWithOffset();

    [GeneratedRegex(@"^-?\d+(\.\d{1,12})?$")]
    private static partial Regex PlainNumber();
}
