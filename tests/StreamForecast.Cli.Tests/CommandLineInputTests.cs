namespace StreamForecast.Cli.Tests;

/// <summary>
/// Runs the real streamforecast-cli executable on invented CSV files at the edges of what it reads: timestamps at the ends
/// of the calendar, RFC 4180 quoting, quantities beyond the accepted magnitude, day/month dates, decimal commas and
/// events the engine drops. Every data problem must exit 2 naming file, line and column; nothing may pass silently.
/// </summary>
public sealed class CommandLineInputTests : IDisposable
{
    private const string Header = "shop,item,sold_at,units\n";
    private static readonly string[] s_columns = ["--key", "shop", "item", "--time", "sold_at", "--quantity", "units"];
    private readonly ToolRunner _tool = new();

    public void Dispose() => _tool.Dispose();

    private ToolResult Replay(string file, params string[] options) => _tool.Run(["replay", file, .. s_columns, .. options]);

    [Theory]
    [InlineData("9999-12-31T23:00:00", "day", "UTC", "is outside the range the period calendar Daily(UTC) supports")]
    [InlineData("9999-12-31T23:30:00", "1h", "UTC", "is outside the range the period calendar FixedInterval(01:00:00) supports")]
    [InlineData("9999-12-31T23:00:00-05:00", "1h", "UTC", "outside the years 1 to 9999 once its offset is applied")]
    [InlineData("9999-12-31T23:00:00", "1h", "America/New_York", "read in --zone America/New_York (UTC-0")]
    public void Replay_Year9999Timestamp_ExitsTwoNamingFileLineAndColumn(string time, string period, string zone, string expected)
    {
        _tool.Write("far.csv", Header + "e,bun,2025-03-03T09:00:00,4\ne,bun," + time + ",4\n");

        ToolResult result = Replay("far.csv", "--period", period, "--zone", zone);

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("streamforecast-cli: data error: far.csv, line 3, column 3 ('sold_at'): ", result.Error, StringComparison.Ordinal);
        Assert.Contains(expected, result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
    }

    [Theory]
    [InlineData("0001-01-01T00:00:00", "day", "UTC", "is outside the range the period calendar Daily(UTC) supports")]
    [InlineData("0001-01-01T00:00:00+01:00", "1h", "UTC", "outside the years 1 to 9999 once its offset is applied")]
    [InlineData("0001-01-01T00:00:00", "1h", "Europe/Berlin", "read in --zone Europe/Berlin (UTC+00:")]
    public void Replay_Year1Timestamp_ExitsTwoNamingFileLineAndColumn(string time, string period, string zone, string expected)
    {
        _tool.Write("early.csv", Header + "e,bun," + time + ",4\ne,bun,2025-03-03T09:00:00,4\n");

        ToolResult result = Replay("early.csv", "--period", period, "--zone", zone);

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("streamforecast-cli: data error: early.csv, line 2, column 3 ('sold_at'): ", result.Error, StringComparison.Ordinal);
        Assert.Contains(expected, result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_Year1InHourlyPeriods_ExitsTwoNamingBothEndsOfTheSpan()
    {
        // Year 1 is inside the hourly calendar, but replaying it would close every hour up to 2025 (about 17.7 million).
        _tool.Write("early.csv", Header + "e,bun,0001-01-01T00:00:00,4\ne,bun,2025-03-03T09:00:00,4\n");

        ToolResult result = Replay("early.csv", "--period", "1h");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("early.csv: the rows span 17,743,498 periods of FixedInterval(01:00:00), from line 2, column 3 ('sold_at')", result.Error, StringComparison.Ordinal);
        Assert.Contains("to line 3, column 3 ('sold_at')", result.Error, StringComparison.Ordinal);
        Assert.Contains("--max-periods", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_QuotedFieldsWithLineBreaksAndDoubledQuotes_ReadsThemAndNamesLaterLinesByTheFile()
    {
        // RFC 4180 §2 rules 6 and 7: a quoted field may hold line breaks, commas and doubled quotes. The note of row 1
        // spans lines 2-3 and the note of row 4 lines 6-8, so the bad rows are on lines 5 and 9 of the file.
        _tool.Write("notes.csv",
            "shop,item,sold_at,units,note\n" +
            "e,bun,2025-03-03T09:00:00,4,\"first line\nsecond line with \"\"quotes\"\"\"\n" +
            "\"e\",\"b,\"\"n\"\"\",2025-03-04T09:00:00,5,plain\n" +
            "e,bun,2025-03-05T09:00:00,four,x\n" +
            "e,bun,2025-03-06T09:00:00,6,\"a\nb\nc\"\n" +
            "e,bun,2025-03-07T09:00:00,,x\n");

        ToolResult stop = Replay("notes.csv");
        ToolResult skip = Replay("notes.csv", "--on-bad-row", "skip");

        Assert.True(stop.ExitCode == 2, stop.ToString());
        Assert.Contains("notes.csv, line 5, column 4 ('units'): 'four' is not a finite number", stop.Error, StringComparison.Ordinal);
        Assert.True(skip.ExitCode == 0, skip.ToString());
        Assert.Contains("Read 3 rows", skip.Output, StringComparison.Ordinal);
        Assert.Contains("Skipped 2 malformed rows", skip.Output, StringComparison.Ordinal);
        Assert.Contains("notes.csv, line 5, column 4 ('units')", skip.Output, StringComparison.Ordinal);
        Assert.Contains("notes.csv, line 9, column 4 ('units')", skip.Output, StringComparison.Ordinal);
        string[] keys = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1).Select(l => l.StartsWith('"') ? l[..(l.IndexOf("\",", StringComparison.Ordinal) + 1)] : l[..l.IndexOf(',', StringComparison.Ordinal)]).Distinct()];
        Assert.Equal(["\"e/b,\"\"n\"\"\"", "e/bun"], keys.Order(StringComparer.Ordinal)); // the key 'e/b,"n"' written back as RFC 4180
    }

    [Fact]
    public void Replay_UnclosedQuote_ExitsTwoNamingTheLineWhereTheRecordStarts()
    {
        _tool.Write("open.csv", Header + "e,bun,2025-03-03T09:00:00,4\n\"e,bun,2025-03-04T09:00:00,4\ne,bun,2025-03-05T09:00:00,4\n");

        ToolResult result = Replay("open.csv");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("open.csv, line 3: a quoted field that starts in this record is never closed", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_UnclosedQuoteInLargeFile_ExitsTwoAtTheRecordSizeLimit()
    {
        // Past 1 MiB an open quote is not followed to the end of the file.
        _tool.Write("open.csv", Header + "e,bun,2025-03-03T09:00:00,4\n\"e,bun,2025-03-04T09:00:00,4\n" + string.Concat(Enumerable.Repeat("e,bun,2025-03-05T09:00:00,4\n", 50_000)));

        ToolResult result = Replay("open.csv");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("open.csv, line 3: the CSV cannot be read from here", result.Error, StringComparison.Ordinal);
        Assert.Contains("closing quote", result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
    }

    [Theory]
    [InlineData("1e308")]
    [InlineData("-2e15")]
    [InlineData("1000000000000001")]
    public void Replay_QuantityBeyondMaxMagnitudeStopMode_ExitsTwoNamingFileLineAndColumn(string quantity)
    {
        _tool.Write("big.csv", Header + "e,bun,2025-03-03T09:00:00,4\ne,bun,2025-03-04T09:00:00," + quantity + "\ne,bun,2025-03-05T09:00:00,4\n");

        ToolResult result = Replay("big.csv");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains($"big.csv, line 3, column 4 ('units'): '{quantity}' is outside ±1e15", result.Error, StringComparison.Ordinal);
        ToolRunner.AssertNoStackTrace(result);
    }

    [Fact]
    public void Replay_QuantityBeyondMaxMagnitudeSkipMode_CountsListsAndReportsItRejected()
    {
        // The case: a day of 1e308 rows used to vanish from forecasts.csv with exit 0 and "0 rejected".
        _tool.Write("big.csv", Header + "e,bun,2025-03-03T09:00:00,4\ne,bun,2025-03-04T09:00:00,1e308\ne,bun,2025-03-04T10:00:00,1e308\ne,bun,2025-03-05T09:00:00,4\n");

        ToolResult result = Replay("big.csv", "--on-bad-row", "skip");

        Assert.True(result.ExitCode == 0, result.ToString());
        Assert.Contains("Read 2 rows", result.Output, StringComparison.Ordinal);
        Assert.Contains("Skipped 2 malformed rows", result.Output, StringComparison.Ordinal);
        Assert.Contains("big.csv, line 3, column 4 ('units'): '1e308' is outside ±1e15", result.Output, StringComparison.Ordinal);
        Assert.Contains("big.csv, line 4, column 4 ('units')", result.Output, StringComparison.Ordinal);
        Assert.Contains("Rejected in total: 2 (2 malformed rows skipped when reading;", result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Tune_PeriodTotalBeyondMaxMagnitude_ExitsTwoNamingTheRowThatCrossesIt()
    {
        // Each quantity is within ±1e15, but the day's total is not.
        _tool.Write("sum.csv", Header + "e,bun,2025-03-03T09:00:00,6e14\ne,bun,2025-03-03T10:00:00,6e14\ne,bun,2025-03-04T09:00:00,4\n");

        ToolResult result = _tool.Run(["tune", "sum.csv", .. s_columns]);

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("sum.csv, line 3, column 4 ('units'): this row takes the total of 'e/bun'", result.Error, StringComparison.Ordinal);
        Assert.Contains("outside ±1e15", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_AmbiguousDayMonthDateWithoutFormat_ExitsTwoAskingForTheFormat()
    {
        _tool.Write("dmy.csv", Header + "e,bun,01/04/2025 09:00,4\n");

        ToolResult result = Replay("dmy.csv");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("dmy.csv, line 2, column 3 ('sold_at'): '01/04/2025 09:00' is ambiguous: day first it is April 1, month first January 4", result.Error, StringComparison.Ordinal);
        Assert.Contains("--time-format", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_UnambiguousDayFirstDateWithoutFormat_IsStillRefused()
    {
        // 13/04/2025 can only be day first, but the order is never decided from one value: other rows may be ambiguous.
        _tool.Write("dmy.csv", Header + "e,bun,13/04/2025 09:00,4\n");

        ToolResult result = Replay("dmy.csv");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("dmy.csv, line 2, column 3 ('sold_at'): '13/04/2025 09:00' is not ISO 8601", result.Error, StringComparison.Ordinal);
        Assert.Contains("--time-format", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DayFirstFileWithTimeFormat_ReadsEachHourOnceDayFirst()
    {
        // The case: 48 hourly rows of 1-2 April 2025, day first; read month first they became 768 closed hours.
        var text = new System.Text.StringBuilder(Header);
        for (int h = 0; h < 48; h++)
        {
            text.Append(System.Globalization.CultureInfo.InvariantCulture, $"e,bun,{1 + (h / 24):00}/04/2025 {h % 24:00}:30,{h}\n");
        }

        _tool.Write("dmy.csv", text.ToString());

        ToolResult result = Replay("dmy.csv", "--period", "1h", "--time-format", "dd/MM/yyyy HH:mm");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] rows = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1)];
        Assert.Equal(48, rows.Length);
        Assert.StartsWith("e/bun,2025-04-01T00:00:00+00:00,0,", rows[0], StringComparison.Ordinal);
        Assert.StartsWith("e/bun,2025-04-02T23:00:00+00:00,47,", rows[^1], StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("Europe/Dublin")]
    [InlineData("America/New_York")]
    public void Replay_LocalTimeShownTwiceWhenClocksGoBack_RefusedOnlyWhenItsPeriodDependsOnTheReading(string zone)
    {
        // The clocks go back at 02:00 local on 26 October 2025 in Dublin and on 2 November 2025 in New York (IANA time
        // zone database, common practice): 01:30 is shown twice, an hour apart.
        string day = zone == "Europe/Dublin" ? "2025-10-26" : "2025-11-02";
        _tool.Write("fold.csv", Header + $"e,bun,{day} 00:30,1\ne,bun,{day} 01:30,2\ne,bun,{day} 03:30,3\n");

        ToolResult hourly = Replay("fold.csv", "--zone", zone, "--period", "1h");
        ToolResult daily = Replay("fold.csv", "--zone", zone);

        Assert.True(hourly.ExitCode == 2, hourly.ToString());
        Assert.Contains($"fold.csv, line 3, column 3 ('sold_at'): '{day} 01:30' occurs twice in --zone {zone}", hourly.Error, StringComparison.Ordinal);
        Assert.True(daily.ExitCode == 0, daily.ToString()); // both readings are in the same local day
        Assert.Contains("Read 3 rows", daily.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_SeveralTimeFormats_ReadsRowsInEitherForm()
    {
        _tool.Write("mixed.csv", Header + "e,bun,03/04/2025 09:15,4\ne,bun,04/04/2025,5\n");

        ToolResult result = Replay("mixed.csv", "--time-format", "dd/MM/yyyy HH:mm,dd/MM/yyyy");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] rows = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1)];
        Assert.StartsWith("e/bun,2025-04-03T00:00:00+00:00,4,", rows[0], StringComparison.Ordinal);
        Assert.StartsWith("e/bun,2025-04-04T00:00:00+00:00,5,", rows[1], StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("HH:mm", "must give the year, month and day")]
    [InlineData("dd/MM", "must give the year, month and day")]
    [InlineData("q", "not a valid .NET custom date and time format")]
    public void Replay_TimeFormatThatCannotFixTheDate_ExitsOne(string format, string expected)
    {
        _tool.Write("dmy.csv", Header + "e,bun,01/04/2025 09:00,4\n");

        ToolResult result = Replay("dmy.csv", "--time-format", format);

        Assert.True(result.ExitCode == 1, result.ToString());
        Assert.Contains(expected, result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DecimalCommaWithSeparatorOption_ReadsQuantities()
    {
        _tool.Write("comma.csv", "shop;item;sold_at;units\ne;bun;2025-03-03;3,5\ne;bun;2025-03-04;-1,25e1\n");

        ToolResult result = Replay("comma.csv", "--delimiter", ";", "--decimal-separator", ",", "--method", "naive");

        Assert.True(result.ExitCode == 0, result.ToString());
        string[] rows = [.. File.ReadLines(_tool.PathOf("forecasts.csv")).Skip(1)];
        Assert.StartsWith("e/bun,2025-03-03T00:00:00+00:00,3.5,", rows[0], StringComparison.Ordinal);
        Assert.StartsWith("e/bun,2025-03-04T00:00:00+00:00,-12.5,0,3.5,", rows[1], StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DecimalCommaWithoutSeparatorOption_ExitsTwoNamingTheOption()
    {
        _tool.Write("comma.csv", "shop;item;sold_at;units\ne;bun;2025-03-03;3,5\n");

        ToolResult result = Replay("comma.csv", "--delimiter", ";");

        Assert.True(result.ExitCode == 2, result.ToString());
        Assert.Contains("comma.csv, line 2, column 4 ('units'): '3,5' is written with ',' as the decimal separator", result.Error, StringComparison.Ordinal);
        Assert.Contains("--decimal-separator ','", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DecimalCommaWithCommaDelimiter_ExitsOneSuggestingSemicolons()
    {
        _tool.Write("comma.csv", Header + "e,bun,2025-03-03,\"3,5\"\n");

        ToolResult result = Replay("comma.csv", "--decimal-separator", ",");

        Assert.True(result.ExitCode == 1, result.ToString());
        Assert.Contains("--delimiter ';'", result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_TooLateEventStopMode_WritesOutputsCountsItAndExitsTwo()
    {
        // The 1 March sale arrives after 4 March has been seen: with no lateness allowed its day is closed, and it is dropped.
        _tool.Write("late.csv", Header + "e,bun,2025-03-03T09:00:00,1\ne,bun,2025-03-04T09:00:00,1\ne,bun,2025-03-01T09:00:00,5\n");

        ToolResult stop = Replay("late.csv");
        ToolResult skip = Replay("late.csv", "--on-bad-row", "skip");

        Assert.True(stop.ExitCode == 2, stop.ToString());
        Assert.Contains("Rejected in total: 1 (0 malformed rows skipped when reading; 1 event too late", stop.Output, StringComparison.Ordinal);
        Assert.Contains("late.csv: the engine dropped 1 event or period (1 event too late for --lateness", stop.Error, StringComparison.Ordinal);
        Assert.True(File.Exists(_tool.PathOf("forecasts.csv")));
        Assert.True(skip.ExitCode == 0, skip.ToString());
        Assert.Contains("Rejected in total: 1", skip.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_PeriodActualRefusedByTheMethodStopMode_ExitsTwo()
    {
        // Croston's method takes demand sizes of zero or more: a negative day total is refused by the method, not read wrongly.
        _tool.Write("refund.csv", Header + "e,bun,2025-03-03T09:00:00,2\ne,bun,2025-03-04T09:00:00,-1\ne,bun,2025-03-05T09:00:00,3\n");

        ToolResult stop = Replay("refund.csv", "--method", "croston:0.1");
        ToolResult skip = Replay("refund.csv", "--method", "croston:0.1", "--on-bad-row", "skip");

        Assert.True(stop.ExitCode == 2, stop.ToString());
        Assert.Contains("1 period actual refused by the method", stop.Error, StringComparison.Ordinal);
        Assert.Contains("First: e/bun:", stop.Error, StringComparison.Ordinal);
        Assert.True(skip.ExitCode == 0, skip.ToString());
        Assert.Contains("Rejected in total: 1 (0 malformed rows skipped when reading; 0 events too late, 0 refused by the engine; 1 period actual refused by the method)", skip.Output, StringComparison.Ordinal);
    }
}
