using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>A checkpoint saved by the host.</summary>
/// <param name="InputPosition">The input position it accounts for.</param>
/// <param name="SavedAt">When it was saved, by the host's <see cref="TimeProvider"/>.</param>
/// <param name="SnapshotBytes">The snapshot's size in bytes.</param>
/// <remarks>An immutable value.</remarks>
public sealed record CheckpointRecord(long InputPosition, DateTimeOffset SavedAt, long SnapshotBytes);
