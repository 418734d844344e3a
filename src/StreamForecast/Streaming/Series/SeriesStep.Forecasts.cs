using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <content>Reading the forecasts the step publishes, at any horizon up to the options' one.</content>
public sealed partial class SeriesStep<TKey>
{
    /// <summary>
    /// The forecast <paramref name="horizon"/> periods ahead as the step would publish it now, with the interval the
    /// options ask for: the same point a <see cref="ForecastUpdate{TKey}"/> carries as <see cref="ForecastUpdate{TKey}.Next"/>
    /// (horizon 1) or <see cref="ForecastUpdate{TKey}.AtHorizon"/> (<see cref="SeriesOptions.Horizon"/>), and the points
    /// between them, which the engine does not publish (a backtest scores every horizon).
    /// </summary>
    /// <param name="horizon">Periods ahead, 1 to <see cref="SeriesOptions.Horizon"/>.</param>
    /// <returns>
    /// The point with its interval (normal, or empirical once the horizon's error window holds enough errors; clipped at
    /// zero for a non-negative series); <see cref="ForecastPoint.IsValid"/> is false while the method warms up, and the
    /// bounds are NaN while σ is unknown.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is below 1 or above <see cref="SeriesOptions.Horizon"/>.</exception>
    /// <remarks>O(1) plus the method's forecast cost; allocation-free; does not change the step. Not thread-safe: read it on
    /// the step's owner, between periods.</remarks>
    public ForecastPoint GetForecast(int horizon)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(horizon, 1);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(horizon, _options.Horizon);
        return Point(horizon);
    }

    /// <summary>The forecast <paramref name="horizon"/> periods ahead with its interval; NaN fields while the method is cold.</summary>
    internal ForecastPoint Point(int horizon)
    {
        IntervalSettings intervals = _options.Intervals;
        if (!_model.TryForecast(horizon, intervals, out double value, out PredictionInterval interval, out IntervalKind kind))
        {
            return new ForecastPoint(horizon, double.NaN, double.NaN, double.NaN, kind, intervals.Coverage);
        }

        return new ForecastPoint(horizon, value, interval.Lower, interval.Upper, kind, intervals.Coverage);
    }
}
