namespace StreamForecast.Tests.Infrastructure;

/// <summary>Published series used by reference tests; each names its source.</summary>
public static class ReferenceData
{
    /// <summary>
    /// Twelve observations from NIST/SEMATECH e-Handbook of Statistical Methods, §6.4.2 ("Averaging methods"),
    /// used there for the mean, the MSE of fixed estimators and the 3-point moving average (check-values N1/N3).
    /// </summary>
    public static readonly double[] NistAveraging = [9, 8, 9, 12, 9, 12, 11, 7, 13, 9, 11, 10];

    /// <summary>Ten observations from NIST e-Handbook §6.4.2 (check-values N2).</summary>
    public static readonly double[] NistAveraging2 = [46.163, 46.998, 47.816, 48.311, 48.758, 49.164, 49.548, 48.915, 50.315, 50.768];

    /// <summary>Twelve observations from NIST e-Handbook §6.4.3.1 (single exponential smoothing, check-values S1).</summary>
    public static readonly double[] NistSmoothing = [71, 70, 69, 68, 64, 65, 72, 78, 75, 75, 75, 70];

    /// <summary>Ten observations from NIST e-Handbook §6.4.3.3–6.4.3.4 (double smoothing, check-values D1).</summary>
    public static readonly double[] NistTrend = [6.4, 5.6, 7.8, 8.8, 11, 11.6, 16.7, 15.3, 21.6, 22.4];
}
