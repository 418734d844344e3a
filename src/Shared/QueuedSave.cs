namespace StreamForecast.Shared;

/// <summary>
/// The claim and outcome of one checkpoint save waiting in a store's group-commit queue (this file is compiled into
/// the SQLite and PostgreSQL stores, each with its own subclass): a transaction claims the save with
/// <see cref="TryTake"/>, or its caller withdraws it with <see cref="TryWithdraw"/> when cancelled, never both.
/// </summary>
internal abstract class QueuedSave
{
    private const int Queued = 0;
    private const int Taken = 1;
    private const int Withdrawn = 2;

    private readonly TaskCompletionSource<bool> _outcome = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private int _state;

    /// <summary>Records what every store's save carries besides its snapshot.</summary>
    /// <param name="hash">The snapshot's SHA-256.</param>
    /// <param name="inputPosition">The input position the snapshot covers.</param>
    /// <param name="conditional">Whether the save is conditional (TrySaveAsync).</param>
    /// <param name="expectedLatestPosition">For a conditional save, the stream's newest position it expects (null: an empty stream).</param>
    protected QueuedSave(byte[] hash, long inputPosition, bool conditional, long? expectedLatestPosition)
    {
        Hash = hash;
        InputPosition = inputPosition;
        Conditional = conditional;
        ExpectedLatestPosition = expectedLatestPosition;
    }

    /// <summary>The snapshot's SHA-256.</summary>
    public byte[] Hash { get; }

    /// <summary>The input position the snapshot covers.</summary>
    public long InputPosition { get; }

    /// <summary>Whether the save is conditional (written only when the stream's newest position is the expected one).</summary>
    public bool Conditional { get; }

    /// <summary>For a conditional save, the newest position it expects (null: an empty stream).</summary>
    public long? ExpectedLatestPosition { get; }

    /// <summary>Completes when the transaction that took the save has committed (true: written; false: expectation not met) or failed.</summary>
    public Task<bool> Outcome => _outcome.Task;

    /// <summary>Claims the save for a transaction; false when its caller withdrew it.</summary>
    public bool TryTake() => Interlocked.CompareExchange(ref _state, Taken, Queued) == Queued;

    /// <summary>Withdraws a save that no transaction has taken yet; false when one has.</summary>
    public bool TryWithdraw() => Interlocked.CompareExchange(ref _state, Withdrawn, Queued) == Queued;

    /// <summary>Reports the committed outcome.</summary>
    public void Complete(bool written) => _outcome.TrySetResult(written);

    /// <summary>Reports the failure of the save's transaction (the same exception to every save in it).</summary>
    public void Fail(Exception exception) => _outcome.TrySetException(exception);
}
