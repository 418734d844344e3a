using System.Collections.Concurrent;
using Microsoft.Data.Sqlite;

namespace StreamForecast.Sqlite;

/// <summary>
/// Group commit for the checkpoint saves of one SQLite file in one process: saves that arrive while another
/// transaction holds the file's writer gate queue here, and the next writer to take the gate writes every queued save
/// in one transaction, so one synchronous commit (the journal and file syncs of <c>synchronous=FULL</c>) serves many
/// stores instead of one each.
/// </summary>
/// <remarks>
/// <para><b>Semantics of each save are unchanged.</b> Saves are written in the order they were queued; each runs its
/// own conditional check (seeing the rows written before it in the same transaction, exactly as if it had committed on
/// its own just after them), insert and pruning. A save whose expectation does not match writes nothing and reports
/// <see langword="false"/> while the others go on. Every save of the transaction completes only after the commit; if
/// anything in the transaction fails, nothing of it is stored and every save in it gets the exception.</para>
/// <para><b>Cancellation.</b> A save that is cancelled while it waits is withdrawn from the queue and throws; once a
/// writer has taken it into its transaction it is no longer cancellable, and the caller gets its outcome.</para>
/// <para><b>Thread safety.</b> Thread-safe; one instance per file and process (<see cref="SqliteFile.Commits"/>).</para>
/// </remarks>
internal sealed class SqliteCommitQueue
{
    // Bounds one transaction: the journal holds the pages a transaction changes until it commits.
    private const int MaxSavesPerTransaction = 256;
    private const long MaxBytesPerTransaction = 64L << 20;

    private readonly SemaphoreSlim _gate;
    private readonly ConcurrentQueue<PendingSave> _queued = new();

    /// <summary>Creates the queue of one file.</summary>
    /// <param name="gate">The file's writer gate (<see cref="SqliteFile.WriterGate"/>).</param>
    public SqliteCommitQueue(SemaphoreSlim gate) => _gate = gate;

    /// <summary>Queues a save and waits for the transaction that writes it.</summary>
    /// <param name="save">The save.</param>
    /// <param name="file">The caller's view of the file, used to open the connection if this caller writes the transaction.</param>
    /// <param name="cancellationToken">Withdraws the save while it waits.</param>
    /// <returns><see langword="false"/> when the save's expectation did not match (nothing of it was written).</returns>
    public async ValueTask<bool> SaveAsync(PendingSave save, SqliteFile file, CancellationToken cancellationToken)
    {
        cancellationToken.ThrowIfCancellationRequested();
        _queued.Enqueue(save);
        SemaphoreSlim gate = _gate;
        try
        {
            await gate.WaitAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (save.TryWithdraw())
        {
            throw;
        }
        catch (OperationCanceledException)
        {
            // Another writer took it into its transaction first: its outcome stands.
            return await save.Outcome.ConfigureAwait(false);
        }

        try
        {
            // A writer that held the gate before us may have written this save already; otherwise write it with
            // everything else that is waiting.
            while (!save.Outcome.IsCompleted)
            {
                await WriteQueuedAsync(file).ConfigureAwait(false);
            }
        }
        finally
        {
            gate.Release();
        }

        return await save.Outcome.ConfigureAwait(false);
    }

    /// <summary>Writes queued saves in one transaction. Under the writer gate.</summary>
    private async Task WriteQueuedAsync(SqliteFile file)
    {
        var batch = new List<PendingSave>();
        long bytes = 0;
        while (batch.Count < MaxSavesPerTransaction && bytes < MaxBytesPerTransaction && _queued.TryDequeue(out PendingSave? next))
        {
            if (next.TryTake())
            {
                batch.Add(next);
                bytes += next.Snapshot.Length;
            }
        }

        if (batch.Count == 0)
        {
            return;
        }

        var written = new bool[batch.Count];
        try
        {
            // Not cancellable: the saves belong to several callers, each of which can only be told the outcome.
            using SqliteConnection connection = await file.OpenAsync(CancellationToken.None).ConfigureAwait(false);
            using SqliteTransaction transaction = connection.BeginTransaction(deferred: false);
            for (int i = 0; i < batch.Count; i++)
            {
                written[i] = await batch[i].Store.WriteAsync(connection, transaction, batch[i]).ConfigureAwait(false);
            }

            await transaction.CommitAsync(CancellationToken.None).ConfigureAwait(false);
        }
        catch (Exception ex)
        {
            foreach (PendingSave save in batch)
            {
                save.Fail(ex);
            }

            return;
        }

        for (int i = 0; i < batch.Count; i++)
        {
            batch[i].Complete(written[i]);
        }
    }
}
