namespace StreamForecast.Streaming;

/// <summary>A stored checkpoint that failed validation on load, and why.</summary>
/// <param name="Location">Where it is stored (for a <see cref="FileCheckpointStore"/>, the file's full path).</param>
/// <param name="Reason">What was wrong with it.</param>
/// <remarks>An immutable value.</remarks>
public readonly record struct CheckpointRejection(string Location, string Reason);
