using StreamForecast.Shared;

namespace StreamForecast.PostgreSql;

/// <summary>One checkpoint save waiting for its transaction in a <see cref="PostgreSqlCommitQueue"/>.</summary>
/// <remarks>
/// The snapshot is the caller's memory, not a copy: the caller awaits the outcome until the transaction that took the
/// save has ended (a cancelled caller whose save was already taken still waits for it), so the memory outlives its use.
/// </remarks>
internal sealed class PendingSave : QueuedSave
{
    public PendingSave(PostgreSqlCheckpointStore store, ReadOnlyMemory<byte> snapshot, byte[] hash, long inputPosition, bool conditional, long? expectedLatestPosition, CancellationToken cancellationToken)
        : base(hash, inputPosition, conditional, expectedLatestPosition)
    {
        CancellationToken = cancellationToken;
        Store = store;
        Snapshot = snapshot;
    }

    public PostgreSqlCheckpointStore Store { get; }

    public ReadOnlyMemory<byte> Snapshot { get; }

    /// <summary>The caller's token: withdraws the save while queued; a group's transaction stops once every caller in it has cancelled.</summary>
    public CancellationToken CancellationToken { get; }
}
