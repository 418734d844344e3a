namespace StreamForecast.Streaming;

/// <summary>What <see cref="ForecastEngine{TKey}.TryPost"/> does when a partition's ingestion queue is full.</summary>
public enum IngestionFullMode
{
    /// <summary>
    /// <see cref="ForecastEngine{TKey}.TryPost"/> returns <see langword="false"/> and the caller decides;
    /// <see cref="ForecastEngine{TKey}.PostAsync"/> waits for room (backpressure): a post that found the queue full
    /// resumes once the partition has drained it to half its capacity, so that a sustained overload wakes the posting
    /// code once per half queue rather than once per observation. Nothing is dropped.
    /// </summary>
    Wait = 0,

    /// <summary>
    /// The new observation is dropped, counted and handed to <see cref="ForecastEngineOptions{TKey}.OnDropped"/>;
    /// posting never waits. For sources that must never block (sensors), at the price of lost data.
    /// </summary>
    DropNewest = 1,
}
