using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// Golden check for the per-series layout: a mixed workload (plain series, one and several rules, a reference model,
/// known events, empirical intervals with clipping at zero, restatement with lateness, duplicate ids, gaps) must give
/// exactly the outputs and snapshot bytes the code gave before the memory work of issue 15 (target 3). The expected
/// hashes were computed on main at b0e5603, before any change to the per-series types; a change of layout that moves
/// any output or snapshot bit changes them. Invented data: a chain of bakeries selling loaves per minute.
/// </summary>
public sealed class SeriesStateGoldenTests
{
    // SHA-256 of every output (round-trip formatted) and of every series' snapshot payload, computed at b0e5603.
    private const string ExpectedOutputsHash = "0EA5770E96FCF3B85CD63117390F8F501283A0EAF76E31B1DAE73B8865C4A37A";
    private const string ExpectedSnapshotsHash = "F0BFE8E24A0DD4BAFA92789BA4B6673661EDBC207BDAA7A6D666F616510EABFE";

    private static readonly DateTimeOffset s_start = new(2027, 5, 3, 6, 0, 0, TimeSpan.Zero);
    private static readonly PeriodCalendar s_minutes = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));

    private sealed class Output : ISeriesOutput<string>
    {
        public SeriesCounters Counters { get; } = new();

        public StringBuilder Text { get; } = new();

        public void Alert(in DriftAlert<string> alert) => Text.AppendLine(alert.ToString());

        public void Fault(in SeriesFault<string> fault) => Text.AppendLine(fault.ToString());

        public void Forecast(in ForecastUpdate<string> update) => Text.AppendLine(update.ToString());
    }

    private static SeriesOptions[] Workload()
    {
        var oneRule = new SeriesOptions(new MovingAverageOptions(12), s_minutes, rules: [new TrackingSignalRuleOptions(warmUpPeriods: 3)]);
        return
        [
            new SeriesOptions(new MovingAverageOptions(12), s_minutes),
            oneRule,
            new SeriesOptions(new ExponentialSmoothingOptions(0.3), s_minutes, gaps: GapPolicy.CarryForward,
                rules: [new TrackingSignalRuleOptions(warmUpPeriods: 2), new CusumRuleOptions(), new TriggSignalRuleOptions()]),
            new SeriesOptions(new MovingAverageOptions(4), s_minutes, new LatenessPolicy(TimeSpan.FromMinutes(3), restatementPeriods: 3),
                rules: [new TrackingSignalRuleOptions(warmUpPeriods: 2) with { Watches = WatchedModel.Reference }, new CusumRuleOptions()],
                referenceMethod: new NaiveOptions()),
            new SeriesOptions(new HoltOptions(0.5, 0.2), s_minutes, gaps: GapPolicy.Missing, horizon: 3,
                empiricalIntervals: new EmpiricalIntervalOptions(window: 20, minimumErrors: 9), nonNegative: true),
            new SeriesOptions(new WeightedMovingAverageOptions([3, 2, 1]), s_minutes, new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 2),
                rules: [new CusumRuleOptions()], referenceMethod: new MovingAverageOptions(3), empiricalIntervals: new EmpiricalIntervalOptions(window: 12, minimumErrors: 9)),
        ];
    }

    [Fact]
    public void Write_MixedWorkload_SameOutputsAndBytesAsBeforeTheLayoutChange()
    {
        // Record ToString formats numbers with the current culture: fix it, so the hash does not depend on the machine.
        CultureInfo culture = CultureInfo.CurrentCulture;
        CultureInfo.CurrentCulture = CultureInfo.InvariantCulture;
        try
        {
            Run();
        }
        finally
        {
            CultureInfo.CurrentCulture = culture;
        }
    }

    private static void Run()
    {
        SeriesOptions[] workload = Workload();
        var output = new Output();
        var snapshots = new MemoryStream();
        for (int s = 0; s < workload.Length; s++)
        {
            string key = "bakery-" + s.ToString(CultureInfo.InvariantCulture);
            var state = new SeriesState<string>(key, workload[s], 0);
            if (s >= 3)
            {
                // A promotion over minutes 30..34 (kept out of the model) marks the periods of the series with events.
                var events = new EventCalendar<string>([KnownEvent.ForSeries(key, EventKind.Promotion, s_start.AddMinutes(30), s_start.AddMinutes(35))]);
                state.SetMarks(EventCalendar<string>.MarksFor(key, s_minutes, events, [], EqualityComparer<string>.Default));
            }

            Feed(state, workload[s], s, output);
            var writer = new SnapshotPayloadWriter();
            state.Write(writer);
            snapshots.Write(writer.WrittenMemory.Span);

            // The copy written again gives the same bytes.
            var copy = new SeriesState<string>(key, workload[s], 0);
            copy.Read(new SnapshotPayloadReader(writer.WrittenMemory.ToArray()));
            var again = new SnapshotPayloadWriter();
            copy.Write(again);
            Assert.Equal(writer.WrittenMemory.ToArray(), again.WrittenMemory.ToArray());
        }

        output.Text.AppendLine(string.Create(CultureInfo.InvariantCulture,
            $"{output.Counters.Observations} {output.Counters.Late} {output.Counters.Duplicates} {output.Counters.PeriodsClosed} {output.Counters.AlertsRaised} {output.Counters.AlertsCleared}"));
        string outputsHash = Convert.ToHexString(SHA256.HashData(Encoding.UTF8.GetBytes(output.Text.ToString())));
        string snapshotsHash = Convert.ToHexString(SHA256.HashData(snapshots.ToArray()));

        Assert.True(output.Counters.AlertsRaised > 0, "the workload should raise alerts");
        Assert.True(outputsHash == ExpectedOutputsHash && snapshotsHash == ExpectedSnapshotsHash,
            $"outputs hash {outputsHash} (expected {ExpectedOutputsHash}), snapshots hash {snapshotsHash} (expected {ExpectedSnapshotsHash})");
    }

    /// <summary>
    /// 120 minutes of invented sales: a level near 40 loaves that steps up to 70 at minute 60 (so the rules raise), a gap
    /// every 17th minute, some late and repeated events.
    /// </summary>
    private static void Feed(SeriesState<string> state, SeriesOptions options, int series, Output output)
    {
        for (int minute = 0; minute < 120; minute++)
        {
            if (minute % 17 == 16)
            {
                continue;
            }

            double level = minute < 60 ? 40 : 70;
            double quantity = level + ((minute * 7 + series * 3) % 11) - 5;
            Post(state, options, s_start.AddMinutes(minute).AddSeconds(10), quantity, minute % 5 == 0 ? "m" + minute.ToString(CultureInfo.InvariantCulture) : null, output);
            if (minute % 9 == 4)
            {
                // A late observation for two minutes ago, and a repeat of a known event id.
                Post(state, options, s_start.AddMinutes(minute - 2).AddSeconds(30), 3.5, null, output);
                Post(state, options, s_start.AddMinutes(minute).AddSeconds(20), 9, "m" + (minute - 4).ToString(CultureInfo.InvariantCulture), output);
            }
        }

        state.CloseAll(output);
    }

    private static void Post(SeriesState<string> state, SeriesOptions options, DateTimeOffset time, double quantity, string? id, Output output)
    {
        long period = options.Calendar.PeriodOf(time);
        string? refused = state.Observe(time, period, quantity, id, 0, output);
        Assert.Null(refused);
    }
}
