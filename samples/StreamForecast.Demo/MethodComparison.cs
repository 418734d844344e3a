using StreamForecast.Classification;
using StreamForecast.Forecasting;
using StreamForecast.Tracking;

namespace StreamForecast.Demo;

/// <summary>The error statistics of one method on one series, scored one step ahead over the evaluation days.</summary>
internal sealed record MethodScore(string Series, string Method, long Scored, double Mad, double Rmse, double Wape, double Mase, double TrackingSignal);

/// <summary>
/// Runs every candidate method over every series with the library's own tracked forecasters (forecast, then score
/// against the actual of the period it was made for) and collects their error statistics.
/// </summary>
internal static class MethodComparison
{
    /// <summary>The candidates the demo compares: the core methods plus smoothing and intermittent-demand methods.</summary>
    public static IReadOnlyList<ForecasterOptions> Candidates { get; } =
    [
        new NaiveOptions(),
        new NaiveOptions(seasonLength: 7),
        new MovingAverageOptions(7),
        new MovingAverageOptions(28),
        new WeightedMovingAverageOptions([7, 6, 5, 4, 3, 2, 1]),
        new ExponentialSmoothingOptions(0.2),
        new HoltOptions(0.2, 0.05, damping: 0.95),
        new HoltWintersOptions(7, Seasonality.Additive, 0.2, 0.02, 0.15),
        ForecasterOptions.SyntetosBoylan(0.1),
        ForecasterOptions.Tsb(0.1, 0.1),
    ];

    public static List<MethodScore> Run(IReadOnlyList<BakerySeries> series, int evaluationStart)
    {
        var scores = new List<MethodScore>();
        var trackerOptions = new ErrorTrackerOptions(seasonLength: 7);
        foreach (BakerySeries s in series)
        {
            foreach (ForecasterOptions method in Candidates)
            {
                // Warm up on the first days without scoring, then score every later day.
                var warm = new TrackedForecaster(method, trackerOptions);
                for (int d = 0; d < evaluationStart; d++)
                {
                    warm.Update(s.Daily[d]);
                }

                warm.ResetErrors();
                for (int d = evaluationStart; d < s.Daily.Length; d++)
                {
                    warm.Update(s.Daily[d]);
                }

                ErrorTracker t = warm.Tracker;
                scores.Add(new MethodScore(s.Key, method.MethodName, t.Count, t.Mad, t.Rmse, t.Wape, t.Mase, t.TrackingSignal));
            }
        }

        return scores;
    }

    /// <summary>The demand class of each series over its history (ADI / CV², Syntetos, Boylan &amp; Croston 2005).</summary>
    public static Dictionary<string, DemandClass> Classify(IReadOnlyList<BakerySeries> series)
    {
        var classes = new Dictionary<string, DemandClass>(StringComparer.Ordinal);
        foreach (BakerySeries s in series)
        {
            classes[s.Key] = DemandClassifier.Classify(s.Daily).Class;
        }

        return classes;
    }
}
