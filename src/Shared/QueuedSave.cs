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
