using StreamForecast.Shared;

namespace StreamForecast.Sqlite;

/// <summary>One checkpoint save waiting for its transaction (its claim and outcome: <see cref="QueuedSave"/>).</summary>
internal sealed class PendingSave : QueuedSave
{
    public PendingSave(SqliteCheckpointStore store, byte[] snapshot, byte[] hash, long inputPosition, bool conditional, long? expectedLatestPosition)
    {
        Store = store;
        Snapshot = snapshot;
        Hash = hash;
        InputPosition = inputPosition;
        Conditional = conditional;
        ExpectedLatestPosition = expectedLatestPosition;
    }

    public SqliteCheckpointStore Store { get; }

    public byte[] Snapshot { get; }

    public byte[] Hash { get; }

    public long InputPosition { get; }

    public bool Conditional { get; }

    public long? ExpectedLatestPosition { get; }
}
