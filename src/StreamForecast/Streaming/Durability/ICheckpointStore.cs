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
