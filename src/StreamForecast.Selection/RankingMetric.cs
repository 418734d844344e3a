namespace StreamForecast.Selection;

/// <summary>
/// The error statistic a backtest ranks candidates by. A candidate's score is this statistic averaged over the horizons
/// 1 … H of the backtest (each horizon weighted equally); lower is better.
/// </summary>
public enum RankingMetric
{
    /// <summary>The root mean squared error (the default): consistent with fitting parameters by the one-step squared error.</summary>
    Rmse = 0,

    /// <summary>The mean absolute deviation of the errors. On intermittent series it rewards forecasting zero; prefer <see cref="Rmse"/> there.</summary>
    Mad = 1,
}
