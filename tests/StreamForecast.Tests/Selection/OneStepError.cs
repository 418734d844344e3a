using StreamForecast.Forecasting;

namespace StreamForecast.Tests.Selection;

/// <summary>The plain one-step squared error of a method on a series, by running its forecaster (the fit tests' yardstick).</summary>
internal static class OneStepError
{
    /// <summary>Σ (y[t] − one-step forecast)² over t ≥ <paramref name="from"/>, each forecast made before y[t] is seen.</summary>
    public static double Sse(double[] series, ForecasterOptions method, int from)
    {
        Forecaster f = method.CreateForecaster();
        double sse = 0;
        for (int t = 0; t < series.Length; t++)
        {
            if (t >= from)
            {
                double e = series[t] - f.Forecast(1);
                sse += e * e;
            }

            f.Update(series[t]);
        }

        return sse;
    }
}
