namespace StreamForecast.Selection;

/// <summary>
/// The error statistics of one horizon h in a backtest: every forecast made h periods ahead, scored against the actual
/// of the period it was made for. Statistics and sign convention are those of <see cref="Tracking.ErrorTracker"/>
/// (error = actual − forecast), which computes them.
/// </summary>
/// <param name="Horizon">The horizon h, 1 or more.</param>
/// <param name="Count">The number of scored forecasts.</param>
/// <param name="UnscoredCount">The origins that had an actual h periods later but no forecast (the forecaster was not warm).</param>
/// <param name="Mad">The mean absolute error; NaN when <paramref name="Count"/> is 0.</param>
/// <param name="Rmse">The root mean squared error; NaN when <paramref name="Count"/> is 0.</param>
/// <param name="Bias">The mean error (positive = forecasts too low); NaN when <paramref name="Count"/> is 0.</param>
/// <param name="Mape">The mean absolute percentage error in percent over the scored periods whose actual is not zero; NaN without such a period.</param>
/// <param name="ZeroActualCount">The scored periods whose actual was zero, which <paramref name="Mape"/> skips.</param>
/// <param name="Wape">100·Σ|error| / Σ|actual| in percent; NaN while Σ|actual| is 0.</param>
/// <param name="Mase">
/// <paramref name="Mad"/> divided by the in-sample mean absolute error of the seasonal naive forecast over the whole history
/// (<see cref="BacktestReport.NaiveScale"/>); NaN when that scale is undefined or zero.
/// </param>
/// <param name="IntervalCount">The scored forecasts that carried an interval (the others came before σ existed).</param>
/// <param name="Coverage">
/// The achieved coverage: the fraction of the <paramref name="IntervalCount"/> scored actuals that fell inside their
/// interval, bounds included (the interval kind and nominal coverage of <see cref="BacktestOptions"/>); NaN when
/// <paramref name="IntervalCount"/> is 0. Its binomial standard error is about √(c(1 − c)/n) for nominal coverage c.
/// </param>
/// <param name="EmpiricalCount">Of <paramref name="IntervalCount"/>, the intervals that were empirical (the rest were normal, warm-up included).</param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct HorizonAccuracy(
    int Horizon,
    long Count,
    long UnscoredCount,
    double Mad,
    double Rmse,
    double Bias,
    double Mape,
    long ZeroActualCount,
    double Wape,
    double Mase,
    long IntervalCount,
    double Coverage,
    long EmpiricalCount);
