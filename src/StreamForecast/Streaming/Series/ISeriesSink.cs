namespace StreamForecast.Streaming;

/// <summary>
/// Receives what one series' per-period step produces (<see cref="SeriesStep{TKey}"/>): forecast updates, drift-alert
/// transitions and faults. Implement it to host series outside the engine (a backtest, another runtime) and see exactly
/// what the engine would publish.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para><b>Thread safety.</b> Called only by the owner of the step, one call at a time; an implementation need not be
/// thread-safe unless it is shared between owners.</para>
/// <para><b>Cost.</b> Called on the hot path once per closed period (plus once per alert transition or fault): keep it
/// allocation-free where throughput matters. The payloads are <c>readonly record struct</c>s passed by reference.</para>
/// </remarks>
public interface ISeriesSink<TKey>
{
    /// <summary>A closed period's forecast update.</summary>
    /// <param name="update">The update.</param>
    void Forecast(in ForecastUpdate<TKey> update);

    /// <summary>A drift rule's transition (raised, escalated, cleared).</summary>
    /// <param name="alert">The alert.</param>
    void Alert(in DriftAlert<TKey> alert);

    /// <summary>A per-series fault (for example an actual the method refused); the series goes on.</summary>
    /// <param name="fault">The fault.</param>
    void Fault(in SeriesFault<TKey> fault);
}
