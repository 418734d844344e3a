namespace StreamForecast.Streaming;

/// <summary>One record read from an <see cref="IInputLog"/>.</summary>
/// <param name="Position">The record's position.</param>
/// <param name="Payload">The record's bytes, exactly as appended.</param>
/// <remarks>An immutable value.</remarks>
public readonly record struct InputLogRecord(long Position, ReadOnlyMemory<byte> Payload);
