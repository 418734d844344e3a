using MathNet.Numerics.Statistics;

namespace StreamForecast.Tests.Tracking;

/// <summary>
/// The batch reference for the error tracker: every statistic recomputed from scratch over a whole prefix with plain
/// loops and MathNet.Numerics means, written from the textbook definitions and sharing no code with the tracker.
/// A period is (actual, forecast) with forecast NaN meaning "no forecast" (unscored).
/// </summary>
internal sealed class ErrorStatisticsBatch
{
    public ErrorStatisticsBatch(IReadOnlyList<(double Actual, double Forecast)> periods, int seasonLength, double smoothedMadWeight, double triggBeta)
    {
        var actuals = new List<double>();
        var scoredActuals = new List<double>();
        var errors = new List<double>();
        foreach ((double a, double f) in periods)
        {
            actuals.Add(a);
            if (!double.IsNaN(f))
            {
                scoredActuals.Add(a);
                errors.Add(a - f);
            }
        }

        Count = errors.Count;
        var absErrors = errors.Select(Math.Abs).ToArray();
        Rsfe = errors.Sum();
        SumAbsErrors = absErrors.Sum();
        Mad = Statistics.Mean(absErrors); // NaN for an empty list
        Mse = Statistics.Mean(errors.Select(e => e * e));
        Bias = Statistics.Mean(errors);
        ErrorPopulationVariance = Statistics.PopulationVariance(errors);

        var percentErrors = new List<double>();
        for (int i = 0; i < errors.Count; i++)
        {
            if (scoredActuals[i] != 0)
            {
                percentErrors.Add(100 * Math.Abs(errors[i]) / Math.Abs(scoredActuals[i]));
            }
        }

        ZeroActualCount = Count - percentErrors.Count;
        Mape = Statistics.Mean(percentErrors);
        double sumAbsActuals = scoredActuals.Sum(Math.Abs);
        Wape = sumAbsActuals > 0 ? 100 * SumAbsErrors / sumAbsActuals : double.NaN;

        // Smoothed MAD: starts at the first |e|.
        SmoothedMad = double.NaN;
        for (int i = 0; i < absErrors.Length; i++)
        {
            SmoothedMad = i == 0 ? absErrors[0] : (smoothedMadWeight * absErrors[i]) + ((1 - smoothedMadWeight) * SmoothedMad);
        }

        // Trigg (1964): E and M start at zero.
        double e0 = 0, m0 = 0;
        foreach (double e in errors)
        {
            e0 = (triggBeta * e) + ((1 - triggBeta) * e0);
            m0 = (triggBeta * Math.Abs(e)) + ((1 - triggBeta) * m0);
        }

        TriggSignal = Count == 0 ? double.NaN : m0 == 0 ? 0 : e0 / m0;
        TrackingSignal = Count == 0 ? double.NaN : SumAbsErrors == 0 ? 0 : Rsfe / Mad;

        // MASE scale: in-sample MAE of the forecast "same as m periods ago" over all actuals.
        var naive = new List<double>();
        for (int t = seasonLength; t < actuals.Count; t++)
        {
            naive.Add(Math.Abs(actuals[t] - actuals[t - seasonLength]));
        }

        NaiveScale = Statistics.Mean(naive);
        Mase = Count > 0 && NaiveScale > 0 ? Mad / NaiveScale : double.NaN;
        ActualCount = actuals.Count;
        LastError = Count == 0 ? double.NaN : errors[^1];
    }

    public int Count { get; }

    public int ActualCount { get; }

    public int ZeroActualCount { get; }

    public double LastError { get; }

    public double Rsfe { get; }

    public double SumAbsErrors { get; }

    public double Mad { get; }

    public double SmoothedMad { get; }

    public double Mse { get; }

    public double Bias { get; }

    public double ErrorPopulationVariance { get; }

    public double Mape { get; }

    public double Wape { get; }

    public double NaiveScale { get; }

    public double Mase { get; }

    public double TrackingSignal { get; }

    public double TriggSignal { get; }
}
