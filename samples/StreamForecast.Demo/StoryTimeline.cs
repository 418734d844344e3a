using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Demo;

/// <summary>
/// Prints the second year's alert transitions in date order (the engine publishes them per partition, so two series'
/// alerts of different days can arrive in either order), with the checkpoint-and-restore and the demo's two planted
/// stories on the days they happen: the lasting shift of the Station Square cinnamon bun (and the alert that reports it)
/// and the Mill Lane sourdough promotion week, declared in advance, which raises no alert.
/// </summary>
internal static class StoryTimeline
{
    private const string Indent = "            ";

    /// <param name="log">Where to print.</param>
    /// <param name="alerts">The shown alert transitions, in any order.</param>
    /// <param name="checkpoint">When the engine was checkpointed and restored (the last sale event before it), and the line saying so.</param>
    /// <param name="keys">The series in the run (the smoke run leaves the promotion's series out).</param>
    /// <param name="lift">The engine's lift per known-event kind.</param>
    public static void Print(TextWriter log, IReadOnlyList<DriftAlert<string>> alerts, (DateTimeOffset At, string Line) checkpoint, IReadOnlySet<string> keys, IReadOnlyList<EventLift> lift)
    {
        // (time, order within the time, text): stories of a day come before (order 0) or after (order 2) its alerts (order 1).
        var lines = new List<(DateTimeOffset At, int Order, string Text)>();
        foreach (DriftAlert<string> a in alerts.OrderBy(a => a.PeriodStart).ThenBy(a => a.Key, StringComparer.Ordinal).ThenBy(a => a.RuleIndex))
        {
            lines.Add((a.PeriodStart, 1, AlertLine(a)));
        }

        lines.Add((checkpoint.At, 2, checkpoint.Line));
        AddShiftStory(lines, alerts, keys);
        AddPromotionStory(lines, alerts, keys, lift);
        foreach (var (_, _, text) in lines.Select((l, i) => (l, i)).OrderBy(x => x.l.At).ThenBy(x => x.l.Order).ThenBy(x => x.i).Select(x => x.l))
        {
            log.WriteLine(text);
        }
    }

    private static void AddShiftStory(List<(DateTimeOffset, int, string)> lines, IReadOnlyList<DriftAlert<string>> alerts, IReadOnlySet<string> keys)
    {
        const string key = BakeryScenario.ShiftKey;
        if (!keys.Contains(key))
        {
            return;
        }

        DateTimeOffset shift = DemoSetup.DayStart(BakeryScenario.ShiftStart);
        DriftAlert<string>? first = alerts
            .Where(a => a.Key == key && a.Transition.Kind == DriftTransitionKind.Raised && a.Transition.Direction == DriftDirection.UnderForecast && a.PeriodStart >= shift)
            .OrderBy(a => a.PeriodStart).ThenBy(a => a.RuleIndex).Cast<DriftAlert<string>?>().FirstOrDefault();
        string began = $"{Day(shift)}  >> story 1, a lasting shift: from today {key} sells about 35% more (an office opened next door).";
        if (first is not { } raised)
        {
            lines.Add((shift, 0, began + " No rule has raised an alert for it by the end of the year."));
            return;
        }

        int days = (int)Math.Round((raised.PeriodStart - shift).TotalDays);
        lines.Add((shift, 0, began));
        lines.Add((raised.PeriodStart, 2, string.Create(CultureInfo.InvariantCulture,
            $"{Indent}^ the alert for the shift: {raised.RuleName.Split('(')[0]} raised it {(days == 0 ? "the day it began" : $"{days} days after it began")} (under-forecast: sales above the forecast).")));
    }

    private static void AddPromotionStory(List<(DateTimeOffset, int, string)> lines, IReadOnlyList<DriftAlert<string>> alerts, IReadOnlySet<string> keys, IReadOnlyList<EventLift> lift)
    {
        const string key = DemoSetup.PromotionKey;
        if (!keys.Contains(key))
        {
            return;
        }

        DateTimeOffset start = DemoSetup.DayStart(BakeryScenario.PromotionStart);
        DateTimeOffset end = DemoSetup.DayStart(BakeryScenario.PromotionStart + 11); // the week and the 4-day dip after it
        int during = alerts.Count(a => a.Key == key && a.PeriodStart >= start && a.PeriodStart < end);
        lines.Add((start, 0,
            $"{Day(start)}  >> story 2, a promotion week: {key} is two-for-one until {Day(start.AddDays(6))}, declared before the replay as a known event (and the dip after it)."));
        string outcome = during == 0
            ? "raised no alert (declared periods are kept out of the error statistics and the drift rules)"
            : $"raised {during} alert transition(s), though they were declared";
        EventLift? promotion = lift.Where(l => l.Kind.Equals(EventKind.Promotion)).Cast<EventLift?>().FirstOrDefault();
        string sold = promotion is { } p && double.IsFinite(p.Ratio) ? string.Create(CultureInfo.InvariantCulture, $"; it sold {p.Ratio:0.00}× its forecast") : string.Empty;
        lines.Add((end.AddTicks(-1), 2, $"{Day(end.AddDays(-1))}  >> story 2 ends: the promotion week and the dip after it {outcome}{sold}."));
    }

    private static string AlertLine(DriftAlert<string> alert)
    {
        DriftTransition t = alert.Transition;
        return string.Create(CultureInfo.InvariantCulture,
            $"{alert.PeriodStart:yyyy-MM-dd}  {t.Kind,-9} {alert.Key,-32} {alert.RuleName,-28} episode {t.EpisodeId} {t.Direction} {t.Severity} signal {t.Signal:0.00} (level {t.Level:0.00}) MAD {alert.Errors.Mad:0.00}");
    }

    private static string Day(DateTimeOffset time) =>
        TimeZoneInfo.ConvertTime(time, DemoSetup.Zone).ToString("yyyy-MM-dd", CultureInfo.InvariantCulture);
}
