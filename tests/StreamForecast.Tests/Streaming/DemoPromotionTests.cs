using StreamForecast.Alerts;
using StreamForecast.Demo;
using StreamForecast.Forecasting;
using StreamForecast.Selection;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// The demo's promotion week (invented data: the Mill Lane sourdough loaf's two-for-one week and the dip after it), run
/// through the demo's own engine set-up and method tuning: undeclared it raises drift alerts, declared it raises none.
/// </summary>
public sealed class DemoPromotionTests
{
    [Fact]
    public async Task DemoReplay_PromotionDeclared_RaisesNoAlertAroundIt()
    {
        (List<DriftAlert<string>> alerts, IReadOnlyList<EventLift> lift) = await RunAsync(DemoSetup.PromotionCalendar());
        Assert.DoesNotContain(alerts.Where(InPromotionWindow), a => a.Transition.Kind == DriftTransitionKind.Raised);

        // The two-for-one week sold about 1.8 times the forecasts (the scenario lifts the level by 80%), the dip about 0.75.
        EventLift promotion = lift.Single(l => l.Kind == EventKind.Promotion);
        Assert.Equal(7, promotion.Periods);
        Assert.InRange(promotion.Ratio, 1.5, 2.1);
        Assert.InRange(lift.Single(l => l.Kind.Name == "after-promotion dip").Ratio, 0.5, 0.95);
    }

    [Fact]
    public async Task DemoReplay_PromotionNotDeclared_RaisesAnAlertAroundIt()
    {
        (List<DriftAlert<string>> alerts, IReadOnlyList<EventLift> lift) = await RunAsync(null);
        Assert.Contains(alerts.Where(InPromotionWindow), a => a.Transition.Kind == DriftTransitionKind.Raised);
        Assert.Empty(lift);
    }

    /// <summary>From the promotion's first day to three weeks later (a rule may fire a few days after the shock).</summary>
    private static bool InPromotionWindow(DriftAlert<string> alert) =>
        alert.PeriodStart >= DemoSetup.DayStart(BakeryScenario.PromotionStart) && alert.PeriodStart < DemoSetup.DayStart(BakeryScenario.PromotionStart + 21);

    private static async Task<(List<DriftAlert<string>> Alerts, IReadOnlyList<EventLift> Lift)> RunAsync(EventCalendar<string>? events)
    {
        // As the demo: tune the method on the first year, then replay both years as sale events through the engine.
        BakerySeries series = BakeryScenario.Generate().Single(s => s.Key == DemoSetup.PromotionKey);
        TuningResult tuned = SeriesTuner.Tune(series.Daily[..(BakeryScenario.Days / 2)], new TuningOptions(seasonLength: 7, maxMovingAverageLength: 28, weightedLength: 7));
        var methods = new Dictionary<string, ForecasterOptions>(StringComparer.Ordinal) { [series.Key] = tuned.Method };
        var engine = new ForecastEngine<string>(DemoSetup.Options(methods, events));
        var recorder = EngineRecorder<string>.Attach(engine);
        foreach (Observation<string> sale in DemoSetup.Events([series], 0))
        {
            await engine.PostAsync(sale);
        }

        await engine.AdvanceAsync(DemoSetup.DayStart(BakeryScenario.Days));
        IReadOnlyList<EventLift> lift = await engine.GetEventLiftAsync();
        await engine.DisposeAsync();
        return (recorder.Alerts, lift);
    }
}
