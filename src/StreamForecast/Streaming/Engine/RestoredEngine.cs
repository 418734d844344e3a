namespace StreamForecast.Streaming;

/// <summary>
/// What <see cref="ForecastEngine.RestoreAsync{TKey}(Stream, ForecastEngineOptions{TKey}, ISnapshotKeyCodec{TKey}, CancellationToken)"/>
/// returns: the running engine and the input position its snapshot was taken at. Deconstructs as
/// <c>var (engine, inputPosition) = await ForecastEngine.RestoreAsync(...)</c>.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <param name="Engine">The running engine holding the snapshot's series. The caller owns it and disposes it.</param>
/// <param name="InputPosition">
/// The input position stored in the snapshot: continue the input (an input log, a broker offset) from there. 0 for an
/// empty engine started from a store holding no checkpoint.
/// </param>
/// <remarks>An immutable pair; the engine itself is thread-safe as documented on <see cref="ForecastEngine{TKey}"/>.</remarks>
public sealed record RestoredEngine<TKey>(ForecastEngine<TKey> Engine, long InputPosition)
    where TKey : notnull;
