namespace StreamForecast.Streaming;

/// <summary>A per-series or per-subscriber fault: the stream goes on for every other key and subscriber.</summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <param name="Key">The series, or default when the fault is not tied to one.</param>
/// <param name="Period">The period concerned, or 0.</param>
/// <param name="Kind">What went wrong.</param>
/// <param name="Message">A readable explanation.</param>
public readonly record struct SeriesFault<TKey>(TKey Key, long Period, SeriesFaultKind Kind, string Message);
