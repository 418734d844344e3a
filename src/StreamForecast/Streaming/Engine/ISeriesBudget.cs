namespace StreamForecast.Streaming;

/// <summary>
/// A series limit shared by several <see cref="SeriesSet{TKey}"/>s (the partitions of one engine share
/// <see cref="ForecastEngineOptions{TKey}.MaxSeries"/>). A set made with the public constructor has its own budget.
/// </summary>
internal interface ISeriesBudget
{
    /// <summary>Takes one slot of the series limit; <see langword="false"/> when the limit is reached.</summary>
    bool TryReserveSeries();

    /// <summary>Gives back a slot taken by <see cref="TryReserveSeries"/> (a series was evicted).</summary>
    void ReleaseSeries();
}
