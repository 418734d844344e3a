using System.Globalization;
using System.Text.Json;

namespace StreamForecast.Cli.Tests;

/// <summary>Runs the real streamforecast-cli executable on small invented CSV files, including malformed ones.</summary>
public sealed class CommandLineToolTests : IDisposable
{
    private static readonly string[] s_keyColumns = ["--key", "shop", "item", "--time", "sold_at", "--quantity", "units"];
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    private static string[] Args(params string[] args) => [.. args.Take(2), .. s_keyColumns, .. args.Skip(2)];

    [Fact]
    public void Help_Root_ListsCommandsAndExitCodes()
    {
        ToolResult result = _tool.Run("--help");

        Assert.True(result.ExitCode == 0, result.ToString());
        foreach (string command in new[] { "replay", "tune", "calibrate", "chart", "Exit codes: 0 ok; 1 usage error", "2 data error" })
        {
            Assert.Contains(command, result.Output, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Replay_NaiveMethod_ForecastEqualsPreviousDailyTotal()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 20));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--event-id", "sale_id", "--method", "naive"));

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("east/bun", result.Output, StringComparison.Ordinal);
        Assert.Contains("Read 160 rows", result.Output, StringComparison.Ordinal);

        // Plain recomputation from the input: daily totals per composite key (two sale events a day).
        var totals = new Dictionary<(string, string), double>();
        foreach (string line in File.ReadLines(_tool.PathOf("sales.csv")).Skip(1))
        {
            string[] f = line.Split(',');
            var k = ($"{f[0]}/{f[1]}", f[2][..10]);
            totals[k] = totals.GetValueOrDefault(k) + double.Parse(f[3], CultureInfo.InvariantCulture);
        }

        string[] header = File.ReadLines(_tool.PathOf("forecasts.csv")).First().Split(',');
        var rows = File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1).Select(l => l.Split(',')).ToList();
        Assert.Equal(4 * 20, rows.Count);
        int key = Array.IndexOf(header, "key"), start = Array.IndexOf(header, "period_start"), actual = Array.IndexOf(header, "actual"), forecast = Array.IndexOf(header, "forecast");
        int checkedRows = 0;
        foreach (string[] row in rows)
        {
            string day = row[start][..10];
            Assert.Equal(totals[(row[key], day)], double.Parse(row[actual], CultureInfo.InvariantCulture));
            string previous = DateTime.Parse(day, CultureInfo.InvariantCulture).AddDays(-1).ToString("yyyy-MM-dd", CultureInfo.InvariantCulture);
            if (totals.TryGetValue((row[key], previous), out double yesterday))
            {
                Assert.Equal(yesterday, double.Parse(row[forecast], CultureInfo.InvariantCulture));
                checkedRows++;
            }
        }

        Assert.Equal(4 * 19, checkedRows);
        Assert.StartsWith("key,period_start,rule,transition", File.ReadLines(_tool.PathOf("alerts.csv")).First(), StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_RuleOnReferenceModel_AlertsNameTheWatchedModel()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv());

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", "ses:0.8", "--reference-method", "slower", "--rule", "cusum:5@reference", "cusum:5", "--zone", "Europe/Dublin"));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] lines = [.. File.ReadLines(_tool.PathOf("alerts.csv"))];
        Assert.EndsWith(",reason,watched", lines[0], StringComparison.Ordinal);
        Assert.Contains(lines, a => a.StartsWith("east/bun,", StringComparison.Ordinal) && a.Contains(",Raised,", StringComparison.Ordinal) && a.EndsWith(",reference", StringComparison.Ordinal));
        Assert.All(lines.Skip(1), a => Assert.True(a.EndsWith(",reference", StringComparison.Ordinal) || a.EndsWith(",published", StringComparison.Ordinal), a));
    }

    [Fact]
    public void Replay_RuleOnReferenceWithoutReferenceMethod_IsAUsageError()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 20));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--rule", "cusum:5@reference"));

        Assert.True(result.ExitCode == 1, result.ToString());
        Assert.Contains("--reference-method", result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
        Assert.Equal(1, _tool.Run(Args("replay", "sales.csv", "--rule", "cusum:5@nobody")).ExitCode);
        Assert.Equal(1, _tool.Run(Args("replay", "sales.csv", "--reference-method", "slower:2")).ExitCode);
    }

    [Fact]
    public void Replay_DemandShift_RaisesAlertForShiftedSeriesOnly()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv());

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", "ma:7", "--rule", "cusum:5", "--zone", "Europe/Dublin"));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] alerts = [.. File.ReadLines(_tool.PathOf("alerts.csv")).Skip(1)];
        Assert.Contains(alerts, a => a.StartsWith("east/bun,", StringComparison.Ordinal) && a.Contains(",Raised,", StringComparison.Ordinal));
        Assert.Contains(alerts, a => a.StartsWith("east/bun,2025-04-2", StringComparison.Ordinal) || a.StartsWith("east/bun,2025-05", StringComparison.Ordinal));
        Assert.DoesNotContain(alerts, a => a.StartsWith("east/bun,2025-03", StringComparison.Ordinal) || a.StartsWith("east/bun,2025-04-0", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("naive", "Naive")]
    [InlineData("seasonal-naive:7", "SeasonalNaive(7)")]
    [InlineData("ma:5", "MA(5)")]
    [InlineData("ses:0.3", "SES(0.3)")]
    [InlineData("croston:0.1", "Croston(0.1)")]
    [InlineData("tsb:0.1,0.2", "TSB(0.1, 0.2)")]
    [InlineData("hw2:2,7,add,0.3,none,0.1,0.1", "TwoSeasonHoltWinters(additive, m 2 and 7, 0.3, no trend, 0.1, 0.1)")]
    [InlineData("hw2:2,7,mul,0.3,0.05,0.1,0.1,0.5", "TwoSeasonHoltWinters(multiplicative, m 2 and 7, 0.3, 0.05, 0.1, 0.1, error adjustment 0.5)")]
    public void Replay_MethodText_RunsThatMethod(string method, string label)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 21));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", method));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] header = File.ReadLines(_tool.PathOf("forecasts.csv")).First().Split(',');
        int column = Array.IndexOf(header, "method");
        Assert.All(File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1), line => Assert.Contains(label, line, StringComparison.Ordinal));
        Assert.True(column >= 0);
    }

    [Theory]
    [InlineData("hw:7,add,0.3,0.1,0.2", "HoltWinters(additive, m 7, 0.3, 0.1, 0.2)")]
    [InlineData("hw:7,add,0.3,0.1,0.2,1,2,means", "HoltWinters(additive, m 7, 0.3, 0.1, 0.2)")]
    [InlineData("hw:7,add,0.3,0.1,0.2,0.9,3,decomposition", "HoltWinters(additive, m 7, 0.3, 0.1, 0.2, damping 0.9, start 3 seasons, classical decomposition)")]
    [InlineData("hw:7,mul,0.3,0.1,0.2,given=10;0;1;1;1;1;1;1;1", "HoltWinters(multiplicative, m 7, 0.3, 0.1, 0.2, given level 10, trend 0, 7 indices)")]
    public void Replay_HoltWintersStartText_RunsThatStart(string method, string label)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 35));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", method));

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.All(File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1), line => Assert.Contains(label, line, StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("ses:0.2,given=30", "SES(0.2, level 30)")]
    [InlineData("ses:0.2,level=30", "SES(0.2, level 30)")] // the spelling of earlier versions is still read
    [InlineData("ses:0.2,mean=3", "SES(0.2, mean of 3)")]
    [InlineData("holt:0.3,0.1,0.9,given=30;0.5", "Holt(0.3, 0.1, damping 0.9, level 30, trend 0.5)")]
    public void Replay_SmoothingStartText_RunsThatStart(string method, string label)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 21));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", method));

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.All(File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1), line => Assert.Contains(label, line, StringComparison.Ordinal));
    }

    [Fact]
    public void Replay_ConfigWithGivenStarts_EachSeriesRunsItsStart()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 21));
        _tool.Write("methods.json", """
            {"format": "streamforecast-methods", "version": 1, "series": [
              {"key": "east/bun", "method": "ses:0.2,given=30"},
              {"key": "west/bun", "method": "holt:0.3,0.1,given=30;0.5"}]}
            """);

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--config", "methods.json"));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] forecasts = [.. File.ReadLines(_tool.PathOf("forecasts.csv"))];
        Assert.Contains(forecasts, line => line.StartsWith("east/bun,", StringComparison.Ordinal) && line.Contains("SES(0.2, level 30)", StringComparison.Ordinal));
        Assert.Contains(forecasts, line => line.StartsWith("west/bun,", StringComparison.Ordinal) && line.Contains("Holt(0.3, 0.1, level 30, trend 0.5)", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("ses:0.2,given=")]
    [InlineData("ses:0.2,given=NaN")]
    [InlineData("ses:0.2,given=1e16")]
    [InlineData("holt:0.3,0.1,given=30")]
    [InlineData("holt:0.3,0.1,given=30;1e16")]
    public void Replay_BadSmoothingStartText_IsAUsageError(string method)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", method));

        Assert.Equal(1, result.ExitCode);
    }

    [Theory]
    [InlineData("hw:7,add,0.3,0.1,0.2,given=10;0;1")]
    [InlineData("hw:7,add,0.3,0.1,0.2,1,3,given=10;0;1;-1;0;0;0;0;0")]
    [InlineData("hw:7,mul,0.3,0.1,0.2,given=10;0;1;1;1;1;1;1;0")]
    [InlineData("hw:7,add,0.3,0.1,0.2,sideways")]
    [InlineData("hw:7,add,0.3,0.1,0.2,1,2,3,decomposition")]
    public void Replay_BadHoltWintersStartText_IsAUsageError(string method)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", method));

        Assert.Equal(1, result.ExitCode);
        Assert.Contains(method, result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_BestOfTextForm_ReportsTheSelectedCandidateOnEveryForecast()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 40));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", "best:naive|ma:3;min=2,switch=1,margin=0"));

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] lines = [.. File.ReadLines(_tool.PathOf("forecasts.csv"))];
        string[] header = lines[0].Split(',');
        int column = Array.IndexOf(header, "method_label"), text = Array.IndexOf(header, "method");
        Assert.True(column >= 0 && text >= 0, lines[0]);
        var labels = lines.Skip(1).Select(l => l.Split(',')[column]).ToHashSet();
        Assert.Subset(new HashSet<string> { "Naive", "MA(3)" }, labels);
        Assert.Contains("Naive", labels); // the first candidate warm is published first
        // The method column holds the candidate's text form, which --method accepts.
        var pairs = lines.Skip(1).Select(l => l.Split(',')).Select(r => (r[text], r[column])).ToHashSet();
        Assert.Subset(new HashSet<(string, string)> { ("naive", "Naive"), ("ma:3", "MA(3)") }, pairs);
    }

    [Theory]
    [InlineData("best:naive|best:ma:3")]
    [InlineData("best:naive|ma:3;speed=2")]
    [InlineData("best:naive;margin=1.5")]
    public void Replay_BadBestOfTextForm_IsAUsageError(string method)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--method", method));

        Assert.Equal(1, result.ExitCode);
        Assert.Contains(method, result.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("0s", "3.5", "1 too late")]
    [InlineData("2h", "4", "0 too late")]
    public void Replay_HourlyPeriodsWithLateEvent_LatenessDecidesWhetherItCounts(string lateness, string firstHour, string lateCount)
    {
        // The last event (02:30+02:00 = 00:30Z) arrives after one from 01:05Z: it belongs to hour 00. With skip, a dropped
        // late event is counted without failing the run (with stop it exits 2: see CommandLineInputTests).
        _tool.Write("meter.csv", "device,time,kwh\nm1,2025-06-01T00:10:00Z,1.5\nm1,2025-06-01T00:50:00Z,2\nm1,2025-06-01T01:05:00Z,4\nm1,2025-06-01T02:30:00+02:00,0.5\n");

        ToolResult result = _tool.Run("replay", "meter.csv", "--key", "device", "--quantity", "kwh", "--period", "1h", "--method", "naive", "--lateness", lateness, "--on-bad-row", "skip");

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains(lateCount, result.Output, StringComparison.Ordinal);
        string[] rows = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1)];
        Assert.Equal(2, rows.Length);
        Assert.StartsWith($"m1,2025-06-01T00:00:00+00:00,{firstHour},", rows[0], StringComparison.Ordinal);
        Assert.StartsWith($"m1,2025-06-01T01:00:00+00:00,4,0,{firstHour},", rows[1], StringComparison.Ordinal); // naive: the previous hour
    }

    [Fact]
    public void Tune_HourlyPeriods_ConsidersTwoCyclesAndReplaysTheWrittenMethod()
    {
        // Invented sensor counts, 35 days of hours: a daily shape, quieter weekends (a weekly cycle), mild noise.
        var random = new Random(5);
        var csv = new System.Text.StringBuilder("device,time,count\n");
        var start = new DateTime(2025, 6, 2, 0, 0, 0, DateTimeKind.Utc);
        for (int t = 0; t < 35 * 24; t++)
        {
            int hour = t % 24, day = t / 24 % 7;
            double mean = (day >= 5 ? 30 : 60) * (1 + (0.8 * Math.Sin(Math.PI * hour / 24))) + (day < 5 && hour == 9 ? 40 : 0);
            csv.Append(CultureInfo.InvariantCulture, $"g1,{start.AddHours(t):yyyy-MM-ddTHH:mm:ss}Z,{Math.Round(mean + ((random.NextDouble() - 0.5) * 10))}\n");
        }

        _tool.Write("hours.csv", csv.ToString());

        ToolResult tune = _tool.Run("tune", "hours.csv", "--key", "device", "--quantity", "count", "--period", "1h", "--season", "24", "--top", "100", "--out", "methods.json");

        Assert.True(tune.ExitCode == 0, tune.ToString());
        Assert.Contains("TwoSeasonHoltWinters(", tune.Output, StringComparison.Ordinal);
        using JsonDocument config = JsonDocument.Parse(File.ReadAllText(_tool.PathOf("methods.json")));
        string method = config.RootElement.GetProperty("series")[0].GetProperty("method").GetString()!;
        string label = config.RootElement.GetProperty("series")[0].GetProperty("label").GetString()!;
        ToolResult replay = _tool.Run("replay", "hours.csv", "--key", "device", "--quantity", "count", "--period", "1h", "--config", "methods.json");
        Assert.True(replay.ExitCode == 0, replay.ToString());
        Assert.Contains(File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1), line => line.Contains(label, StringComparison.Ordinal));
        Assert.StartsWith("hw2:24,168,", method, StringComparison.Ordinal); // the two-cycle method wins on this data
    }

    [Fact]
    public void Replay_SemicolonDelimiterGiven_ReadsFile()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10, delimiter: ';'));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--delimiter", ";"));

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Read 80 rows", result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_WrongDelimiter_ExitsTwoAndSuggestsDelimiter()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 10, delimiter: ';'));

        ToolResult result = _tool.Run(Args("replay", "sales.csv"));

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("sales.csv, line 1: no column named 'shop'", result.Error, StringComparison.Ordinal);
        Assert.Contains("--delimiter", result.Error, StringComparison.Ordinal);
        AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_MissingColumn_ExitsTwoNamingColumn()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 5));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--event-id", "receipt"));

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("no column named 'receipt'", result.Error, StringComparison.Ordinal);
        AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_BadNumberStopMode_ExitsTwoNamingFileLineAndColumn()
    {
        _tool.Write("bad.csv", "shop,item,sold_at,units\ne,bun,2025-03-03T09:00:00,4\ne,bun,2025-03-04T09:00:00,4,5x\ne,bun,2025-03-05T09:00:00,four\n");

        ToolResult result = _tool.Run(Args("replay", "bad.csv"));

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("bad.csv, line 4, column 4 ('units'): 'four' is not a finite number", result.Error, StringComparison.Ordinal);
        Assert.Contains("--on-bad-row skip", result.Error, StringComparison.Ordinal);
        AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_BadRowsSkipMode_ExitsZeroAndReportsCount()
    {
        _tool.Write("bad.csv", "shop,item,sold_at,units\ne,bun,2025-03-03T09:00:00,4\ne,bun,2025-03-04T09:00:00,four\ne,bun,yesterday,3\ne,bun\ne,bun,2025-03-05T09:00:00,6\n");

        ToolResult result = _tool.Run(Args("replay", "bad.csv", "--on-bad-row", "skip"));

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Read 2 rows", result.Output, StringComparison.Ordinal);
        Assert.Contains("Skipped 3 malformed rows", result.Output, StringComparison.Ordinal);
        Assert.Contains("line 3, column 4 ('units')", result.Output, StringComparison.Ordinal);
        Assert.Contains("line 4, column 3 ('sold_at')", result.Output, StringComparison.Ordinal);
        Assert.Contains("line 5: the row has 2 fields", result.Output, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--method", "bogus:1")]
    [InlineData("--method", "ses:1.5")]
    [InlineData("--zone", "Mars/Olympus")]
    [InlineData("--period", "fortnightly")]
    [InlineData("--rule", "cusum:-1")]
    public void Replay_BadOptionValue_ExitsOneWithoutStackTrace(string option, string value)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 5));

        ToolResult result = _tool.Run(Args("replay", "sales.csv", option, value));

        Assert.True(result.ExitCode == 1, result.ToString());
        Assert.Contains("streamforecast-cli: usage error", result.Error, StringComparison.Ordinal);
        AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_MissingFile_ExitsTwo()
    {
        ToolResult result = _tool.Run("replay", "nowhere.csv");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("nowhere.csv: file not found", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Tune_FitStartsThenReplayWithConfig_ReadsBackEveryTunedMethod()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv());

        ToolResult tune = _tool.Run(Args("tune", "sales.csv", "--season", "7", "--fit-starts", "--out", "methods.json", "--top", "40"));

        Assert.True(tune.ExitCode == 0, tune.ToString());
        Assert.Contains("given level", tune.Output, StringComparison.Ordinal); // fitted-start candidates are ranked
        using JsonDocument config = JsonDocument.Parse(File.ReadAllText(_tool.PathOf("methods.json")));
        var labels = config.RootElement.GetProperty("series").EnumerateArray()
            .ToDictionary(s => s.GetProperty("key").GetString()!, s => s.GetProperty("label").GetString()!);

        ToolResult replay = _tool.Run(Args("replay", "sales.csv", "--season", "7", "--config", "methods.json"));

        // Every tuned method, fitted starts included, is read back from its text form and runs under the same label.
        Assert.True(replay.ExitCode == 0, replay.ToString());
        string[] forecasts = [.. File.ReadLines(_tool.PathOf("forecasts.csv"))];
        Assert.All(labels, pair => Assert.Contains(forecasts, line => line.StartsWith(pair.Key + ",", StringComparison.Ordinal) && line.Contains(pair.Value, StringComparison.Ordinal)));
    }

    [Fact]
    public void Tune_ThenReplayWithConfig_EachSeriesRunsItsTunedMethod()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv());

        ToolResult tune = _tool.Run(Args("tune", "sales.csv", "--season", "7", "--out", "methods.json", "--top", "3"));

        Assert.True(tune.ExitCode == 0, tune.ToString());
        Assert.Contains("Rank", tune.Output, StringComparison.Ordinal);
        using JsonDocument config = JsonDocument.Parse(File.ReadAllText(_tool.PathOf("methods.json")));
        Assert.Equal("streamforecast-methods", config.RootElement.GetProperty("format").GetString());
        Assert.Equal(1, config.RootElement.GetProperty("version").GetInt32());
        var labels = config.RootElement.GetProperty("series").EnumerateArray()
            .ToDictionary(s => s.GetProperty("key").GetString()!, s => s.GetProperty("label").GetString()!);
        Assert.Equal(["east/bun", "east/tart", "west/bun", "west/tart"], labels.Keys.Order(StringComparer.Ordinal));

        ToolResult replay = _tool.Run(Args("replay", "sales.csv", "--season", "7", "--config", "methods.json"));

        Assert.True(replay.ExitCode == 0, replay.ToString());
        string[] header = File.ReadLines(_tool.PathOf("forecasts.csv")).First().Split(',');
        int key = Array.IndexOf(header, "key"), method = Array.IndexOf(header, "method_label"), text = Array.IndexOf(header, "method");
        var texts = config.RootElement.GetProperty("series").EnumerateArray()
            .ToDictionary(s => s.GetProperty("key").GetString()!, s => s.GetProperty("method").GetString()!);
        int checkedRows = 0;
        using (var reader = new Microsoft.VisualBasic.FileIO.TextFieldParser(_tool.PathOf("forecasts.csv")) { Delimiters = [","], HasFieldsEnclosedInQuotes = true })
        {
            reader.ReadFields(); // the header
            while (reader.ReadFields() is { } row)
            {
                Assert.Equal(labels[row[key]], row[method]);
                Assert.Equal(texts[row[key]], row[text]); // the text form methods.json holds: round-trips through --method
                checkedRows++;
            }
        }

        Assert.True(checkedRows > 0);

        Assert.All(labels.Values, label => Assert.Contains(label, replay.Output, StringComparison.Ordinal));
    }

    [Theory]
    [InlineData("{\"format\":\"streamforecast-methods\",\"version\":2,\"series\":[]}", "version 2 is not supported")]
    [InlineData("{\"format\":\"other\",\"version\":1,\"series\":[]}", "not a streamforecast-methods file")]
    [InlineData("{\"format\":\"streamforecast-methods\",\"version\":1,\"series\":[{\"key\":\"e/bun\",\"method\":\"ma:0\"}]}", "series 'e/bun'")]
    [InlineData("not json", "not a valid configuration file")]
    public void Replay_BadConfigFile_ExitsOne(string content, string expected)
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 5));
        _tool.Write("methods.json", content);

        ToolResult result = _tool.Run(Args("replay", "sales.csv", "--config", "methods.json"));

        Assert.True(result.ExitCode == 1, result.ToString());
        Assert.Contains(expected, result.Error, StringComparison.Ordinal);
        AssertNoStackTrace(result);
    }

    [Fact]
    public void Calibrate_MovingAverage_PrintsLimitRunLengthAndDelays()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 120, shiftDay: 1000));

        ToolResult result = _tool.Run(Args("calibrate", "sales.csv", "--series", "west/tart", "--method", "ma:7", "--calibrate-rule", "signal:4", "--target", "50", "--simulations", "100"));

        Assert.True(result.ExitCode == 0, result.ToString());
        foreach (string text in new[] { "west/tart: MA(7)", "Limit", "Target reached", "In-control run length", "mean delay" })
        {
            Assert.Contains(text, result.Output, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Calibrate_UnknownSeries_ExitsTwo()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv(days: 30));

        ToolResult result = _tool.Run(Args("calibrate", "sales.csv", "--series", "north/pie"));

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("No series 'north/pie'", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Chart_ShiftedSeries_WritesNonEmptyPng()
    {
        _tool.Write("sales.csv", ToolRunner.SalesCsv());

        ToolResult result = _tool.Run(Args("chart", "sales.csv", "--series", "east/bun", "--method", "ma:7", "--out", "bun.png"));

        Assert.True(result.ExitCode == 0, result.ToString());
        byte[] png = File.ReadAllBytes(_tool.PathOf("bun.png"));
        Assert.True(png.Length > 1000, $"the chart has {png.Length} bytes");
        Assert.Equal(new byte[] { 0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A }, png[..8]); // the PNG signature (PNG specification §5.2)
        Assert.Contains("alert transitions", result.Output, StringComparison.Ordinal);
    }

    private static void AssertNoStackTrace(ToolResult result) => ToolRunner.AssertNoStackTrace(result);
}
