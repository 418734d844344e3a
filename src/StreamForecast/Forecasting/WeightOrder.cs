namespace StreamForecast.Forecasting;

/// <summary>The order in which weights are given to <see cref="WeightedMovingAverageOptions"/>.</summary>
public enum WeightOrder
{
    /// <summary>The first weight applies to the most recent period (the default, as usually printed: 3, 2, 1).</summary>
    MostRecentFirst = 0,

    /// <summary>The first weight applies to the oldest period in the window.</summary>
    OldestFirst = 1,
}
