namespace StreamForecast.Streaming;

/// <summary>A checkpoint loaded from an <see cref="ICheckpointStore"/>.</summary>
/// <remarks>Immutable; safe to share between threads.</remarks>
public sealed class Checkpoint
{
    /// <summary>Creates a loaded checkpoint (for implementations of <see cref="ICheckpointStore"/>).</summary>
    /// <param name="snapshot">The snapshot's bytes.</param>
    /// <param name="inputPosition">The input position it accounts for, ≥ 0.</param>
    /// <param name="location">Where it was loaded from, for reports (a file path, a key).</param>
    /// <param name="rejected">Newer checkpoints that were skipped because they failed validation, newest first; may be null. Copied.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <exception cref="ArgumentNullException"><paramref name="location"/> is null.</exception>
    public Checkpoint(ReadOnlyMemory<byte> snapshot, long inputPosition, string location, IReadOnlyList<CheckpointRejection>? rejected = null)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        ArgumentNullException.ThrowIfNull(location);
        Snapshot = snapshot;
        InputPosition = inputPosition;
        Location = location;
        Rejected = rejected is null ? [] : [.. rejected];
    }

    /// <summary>The snapshot's bytes, exactly as saved.</summary>
    public ReadOnlyMemory<byte> Snapshot { get; }

    /// <summary>The input position the snapshot accounts for; replay the input from here.</summary>
    public long InputPosition { get; }

    /// <summary>Where the checkpoint was loaded from (for a <see cref="FileCheckpointStore"/>, the file's full path).</summary>
    public string Location { get; }

    /// <summary>
    /// Newer checkpoints that were skipped because they failed validation, newest first; empty when the newest
    /// checkpoint was used. A non-empty list means the engine restarts from an older position than it last saved.
    /// </summary>
    public IReadOnlyList<CheckpointRejection> Rejected { get; }
}
