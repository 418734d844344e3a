using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tests.Selection;

namespace StreamForecast.Tests.Forecasting;

/// <summary>
/// The selector as a forecaster: every shared behaviour (warm-up, bad input, reset, snapshots, hostile sequences, no
/// allocation) plus a batch reference built from the separately written selection rule in <see cref="MethodSelectorTests"/>.
/// </summary>
public sealed class MethodSelectorContractTests : ForecasterContractTests
{
    private static readonly ForecasterOptions[] s_candidates = [new MovingAverageOptions(3), new NaiveOptions(), new ExponentialSmoothingOptions(0.3)];

    protected override ForecasterOptions Options => new MethodSelectorOptions(s_candidates, errorWeight: 0.2, margin: 0.05, periodsToSwitch: 2, minScoredPeriods: 3);

    protected override int WarmUpLength => 1; // the naive candidate can forecast after one actual

    protected override double[] BatchForecasts(double[] series)
    {
        // Element k: the forecast of the candidate the reference selects after k actuals, each candidate recomputed in batch.
        var options = (MethodSelectorOptions)Options;
        (int Published, int Selected)[] selection = MethodSelectorTests.Reference(series, options);
        var forecasts = new double[series.Length + 1];
        forecasts[0] = double.NaN;
        for (int k = 1; k <= series.Length; k++)
        {
            int selected = selection[k - 1].Selected;
            forecasts[k] = selected < 0 ? double.NaN : CandidateBatch(selected, series.AsSpan(0, k));
        }

        return forecasts;
    }

    private static double CandidateBatch(int index, ReadOnlySpan<double> prefix)
    {
        switch (index)
        {
            case 0:
                return prefix.Length < 3 ? double.NaN : (prefix[^1] + prefix[^2] + prefix[^3]) / 3;
            case 1:
                return prefix[^1];
            default:
                double level = prefix[0]; // SES with the first actual as the first forecast (NIST §6.4.3.1 convention)
                for (int t = 1; t < prefix.Length; t++)
                {
                    level = (0.3 * prefix[t]) + (0.7 * level);
                }

                return level;
        }
    }
}
