namespace StreamForecast.Streaming;

/// <summary>
/// Durable storage for engine snapshots: each checkpoint is the snapshot's bytes plus the input position it
/// accounts for, so that after a restart the engine loads the newest usable checkpoint and replays its input from
/// that position on.
/// </summary>
/// <remarks>
/// <para>Implementations must make a save all-or-nothing (a crash mid-save never leaves a checkpoint that loads
/// with half its bytes) and must detect a damaged checkpoint on load rather than return it.</para>
/// <para><b>Thread safety.</b> Implementations must allow one save at a time alongside concurrent loads; see each
/// implementation for more.</para>
/// </remarks>
public interface ICheckpointStore
{
    /// <summary>Stores a checkpoint durably.</summary>
    /// <param name="snapshot">The snapshot's bytes; opaque to the store.</param>
    /// <param name="inputPosition">The input position the snapshot accounts for (everything before it is in the snapshot), ≥ 0.</param>
    /// <param name="cancellationToken">Cancels the save; a cancelled save leaves the stored checkpoints as they were.</param>
    /// <returns>A task that completes once the checkpoint is durable.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    ValueTask SaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, CancellationToken cancellationToken = default);

    /// <summary>Loads the newest checkpoint that passes validation.</summary>
    /// <param name="cancellationToken">Cancels the load.</param>
    /// <returns>The checkpoint, or <see langword="null"/> when none has been stored.</returns>
    /// <exception cref="InvalidDataException">Checkpoints exist but none of them is usable; the message lists why each was rejected.</exception>
    ValueTask<Checkpoint?> LoadLatestAsync(CancellationToken cancellationToken = default);
}

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

/// <summary>A stored checkpoint that failed validation on load, and why.</summary>
/// <param name="Location">Where it is stored (for a <see cref="FileCheckpointStore"/>, the file's full path).</param>
/// <param name="Reason">What was wrong with it.</param>
/// <remarks>An immutable value.</remarks>
public readonly record struct CheckpointRejection(string Location, string Reason);
