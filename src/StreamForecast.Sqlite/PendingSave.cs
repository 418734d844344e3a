namespace StreamForecast.Sqlite;

/// <summary>One checkpoint save waiting for its transaction.</summary>
internal sealed class PendingSave
{
    private const int Queued = 0;
    private const int Taken = 1;
    private const int Withdrawn = 2;

    private readonly TaskCompletionSource<bool> _outcome = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private int _state;

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

    public Task<bool> Outcome => _outcome.Task;

    /// <summary>Claims the save for a transaction; false when its caller withdrew it.</summary>
    public bool TryTake() => Interlocked.CompareExchange(ref _state, Taken, Queued) == Queued;

    /// <summary>Withdraws a save that no transaction has taken yet; false when one has.</summary>
    public bool TryWithdraw() => Interlocked.CompareExchange(ref _state, Withdrawn, Queued) == Queued;

    public void Complete(bool written) => _outcome.TrySetResult(written);

    public void Fail(Exception exception) => _outcome.TrySetException(exception);
}
