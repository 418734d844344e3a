namespace StreamForecast.Streaming;

/// <summary>
/// A checkpoint store that can also save on a condition: the save happens only when the newest checkpoint still has
/// the input position the caller last saw, so that two writers of the same checkpoints (for example an old and a new
/// owner of the same series after a fail-over) cannot silently overwrite each other's progress.
/// </summary>
/// <remarks>
/// <para><b>Newest.</b> Throughout this interface "the newest checkpoint" is the one <see cref="ICheckpointStore.LoadLatestAsync"/>
/// would return at that moment: the newest checkpoint that passes validation, skipping damaged ones. The input
/// position it accounts for serves as a version tag: load, remember <see cref="Checkpoint.InputPosition"/> (or
/// <see langword="null"/> when nothing was loaded), and pass it to <see cref="TrySaveAsync"/>; after each successful
/// conditional save, the position just saved becomes the expected one.</para>
/// <para><b>Thread safety.</b> Implementations must make the comparison and the save one atomic step with respect to
/// every other save to the same checkpoints, including saves from other instances and processes that share them.</para>
/// </remarks>
public interface IConditionalCheckpointStore : ICheckpointStore
{
    /// <summary>
    /// Stores a checkpoint durably, but only if the newest checkpoint currently stored accounts for
    /// <paramref name="expectedLatestPosition"/>.
    /// </summary>
    /// <param name="snapshot">The snapshot's bytes; opaque to the store.</param>
    /// <param name="inputPosition">The input position the snapshot accounts for, ≥ 0.</param>
    /// <param name="expectedLatestPosition">
    /// The input position of the newest checkpoint that passes validation, ≥ 0; or <see langword="null"/> to save only
    /// when no checkpoint passes validation (none has been stored, or every stored one is damaged, the case in which
    /// <see cref="ICheckpointStore.LoadLatestAsync"/> returns <see langword="null"/> or throws).
    /// </param>
    /// <param name="cancellationToken">Cancels the save; a cancelled save leaves the stored checkpoints as they were.</param>
    /// <returns>
    /// <see langword="true"/> once the checkpoint is durable; <see langword="false"/> when the newest checkpoint did not
    /// match the expectation, in which case nothing was stored or removed.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> or <paramref name="expectedLatestPosition"/> is negative.</exception>
    ValueTask<bool> TrySaveAsync(ReadOnlyMemory<byte> snapshot, long inputPosition, long? expectedLatestPosition, CancellationToken cancellationToken = default);
}
