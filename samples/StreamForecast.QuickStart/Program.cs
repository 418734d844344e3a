// The README's quick start, compiled and run by CI. Keep the two in step (a test compares them).
// <quick-start>
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

// 1. One series: a 3-day moving average of loaves sold, scored against each day's actual as it closes.
var loaves = new TrackedForecaster(new MovingAverageOptions(3));
foreach (double sold in new double[] { 42, 38, 45, 51, 47, 44 })
{
    loaves.Update(sold);
}

loaves.TryForecast(1, NormalMultiplier.Coverage80, out double next, out PredictionInterval band);
Console.WriteLine($"tomorrow: {next:0.0} loaves (80%: {band.Lower:0.0} to {band.Upper:0.0}); " +
    $"MAD {loaves.Tracker.Mad:0.00}, tracking signal {loaves.Tracker.TrackingSignal:0.00}");

// 2. Many series from raw sale events: the engine buckets them into shop days (local time), forecasts each
//    series with exponential smoothing and watches the errors with a CUSUM drift rule.
var shopDays = new SeriesOptions(
    new ExponentialSmoothingOptions(alpha: 0.2),
    PeriodCalendar.Daily(TimeZoneInfo.FindSystemTimeZoneById("Europe/Dublin")),
    rules: [new CusumRuleOptions(decisionInterval: 5)]);
var engine = new ForecastEngine<string>(new ForecastEngineOptions<string>(shopDays, keyComparer: StringComparer.Ordinal));
var closedDays = new List<ForecastUpdate<string>>();
using (engine.Forecasts.Subscribe(update => closedDays.Add(update)))
{
    var firstDay = new DateTimeOffset(2026, 11, 2, 9, 0, 0, TimeSpan.Zero);
    for (int day = 0; day < 14; day++)
    {
        // Two sales a day; the event id makes a redelivered sale count once.
        await engine.PostAsync(new("harbour-street/rye-roll", firstDay.AddDays(day), 12, $"till-1/{day}/a"));
        await engine.PostAsync(new("harbour-street/rye-roll", firstDay.AddDays(day).AddHours(5), 8 + (day % 3), $"till-1/{day}/b"));
    }

    await engine.FlushAsync();     // end of input: close the last open day
    await engine.DisposeAsync();   // drain, deliver everything, stop
}

ForecastUpdate<string> last = closedDays[^1];
Console.WriteLine($"{closedDays.Count} days closed; last day sold {last.Actual}, forecast for it was {last.ForecastForPeriod:0.0}; " +
    $"next day {last.Next.Value:0.0} ({last.Next.Lower:0.0} to {last.Next.Upper:0.0}); RSFE {last.Errors.Rsfe:0.0}");
// </quick-start>
