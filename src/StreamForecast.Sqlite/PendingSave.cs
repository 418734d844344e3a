using StreamForecast.Shared;

namespace StreamForecast.Sqlite;

/// <summary>One checkpoint save waiting for its transaction (its claim and outcome: <see cref="QueuedSave"/>).</summary>
internal sealed class PendingSave : QueuedSave
{
    public PendingSave(SqliteCheckpointStore store, byte[] snapshot, byte[] hash, long inputPosition, bool conditional, long? expectedLatestPosition)
        : base(hash, inputPosition, conditional, expectedLatestPosition)
    {
        Store = store;
        Snapshot = snapshot;
    }

    public SqliteCheckpointStore Store { get; }

    public byte[] Snapshot { get; }
}
