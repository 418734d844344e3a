namespace StreamForecast.Streaming;

/// <summary>One raw observation of a series: what happened, when (event time), and how much.</summary>
/// <typeparam name="TKey">The series key type (for example a shop and item pair).</typeparam>
/// <param name="Key">The series the observation belongs to.</param>
/// <param name="Timestamp">When the event happened (event time, not arrival time); its offset is honoured.</param>
/// <param name="Quantity">How much: units sold, messages received... Must be finite.</param>
/// <param name="EventId">
/// An optional identifier of the event. When given, a repeat of the same id for the same series within the series'
/// duplicate window is ignored and counted, so redelivery does not double-count.
/// </param>
/// <remarks>An immutable value; safe to share across threads.</remarks>
public readonly record struct Observation<TKey>(TKey Key, DateTimeOffset Timestamp, double Quantity, string? EventId = null);
