using System.Collections.Concurrent;
using System.Data;
using System.Runtime.CompilerServices;
using Npgsql;

namespace StreamForecast.PostgreSql;

/// <summary>
/// Group commit for the checkpoint saves made through one <see cref="NpgsqlDataSource"/> in one process: saves that
/// arrive while another group's transaction is being written queue here, and the next writer writes every queued save
/// (of any store, stream or schema on that data source) in one transaction, so one commit (one WAL flush on the server)
/// and a few round trips serve many saves instead of three round trips and one commit each.
/// </summary>
/// <remarks>
/// <para><b>The transaction of a group.</b> READ COMMITTED. Round trip 1: lock the row in <c>streams</c> of every
/// stream the group writes (inserting it if missing), in ordinal order of (schema, stream) so that groups of several
/// processes never deadlock, and, in the same batch after the locks, read the newest row of each stream a conditional
/// save of the group writes to. Round trip 2: one batch with every save's insert and pruning, in queue order. Round
/// trip 3: the commit. A conditional save whose stream's newest row is damaged reads older rows first, one more round
/// trip each (as a lone save does).</para>
/// <para><b>Semantics of each save are unchanged.</b> Saves are applied in the order they were queued, each as if it had
/// committed on its own just after the saves before it: a conditional save compares its expectation with the newest
/// valid position of its stream as the saves before it in the group left it (the row read under the lock, or the
/// position of the last save of the group to that stream), so of several conditional saves with the same expectation
/// at most one, the first queued whose expectation matches, writes; the others report <see langword="false"/> and
/// write nothing while the rest of the group goes on. Every save of the group completes only after the commit; if
/// anything in the transaction fails, nothing of it is stored and every save in it gets the same exception.</para>
/// <para><b>Cancellation.</b> A save that is cancelled while it waits is withdrawn from the queue and throws
/// <see cref="OperationCanceledException"/>; once a writer has taken it into its transaction it is no longer
/// cancellable (the transaction belongs to several callers), and the caller gets its outcome.</para>
/// <para><b>Thread safety.</b> Thread-safe; one instance per data source (<see cref="For"/>).</para>
/// </remarks>
[System.Diagnostics.CodeAnalysis.SuppressMessage("Design", "CA1001", Justification = "The gate's wait handle is never used, so it holds nothing to dispose; the queue lives as long as its data source.")]
internal sealed class PostgreSqlCommitQueue
{
    // Bounds one transaction: its size in the WAL and the time the streams' locks are held.
    private const int MaxSavesPerTransaction = 256;
    private const long MaxBytesPerTransaction = 64L << 20;

    // Groups written at the same time through one data source: a group waiting for a stream's lock held by another
    // process (or anything slow) then does not stall every other save of the process.
    private const int MaxConcurrentGroups = 4;

    private static readonly ConditionalWeakTable<NpgsqlDataSource, PostgreSqlCommitQueue> s_queues = new();

    private readonly NpgsqlDataSource _dataSource;
    private readonly SemaphoreSlim _gate = new(MaxConcurrentGroups, MaxConcurrentGroups);
    private readonly ConcurrentQueue<PendingSave> _queued = new();

    private PostgreSqlCommitQueue(NpgsqlDataSource dataSource) => _dataSource = dataSource;

    /// <summary>The queue of a data source, made on first use and kept as long as the data source is referenced.</summary>
    public static PostgreSqlCommitQueue For(NpgsqlDataSource dataSource) =>
        s_queues.GetValue(dataSource, static source => new PostgreSqlCommitQueue(source));

    /// <summary>Queues a save and waits for the transaction that writes it.</summary>
    /// <param name="save">The save.</param>
    /// <param name="cancellationToken">Withdraws the save while it waits.</param>
    /// <returns><see langword="false"/> when the save's expectation did not match (nothing of it was written).</returns>
    public async ValueTask<bool> SaveAsync(PendingSave save, CancellationToken cancellationToken)
    {
        cancellationToken.ThrowIfCancellationRequested();
        _queued.Enqueue(save);
        try
        {
            await _gate.WaitAsync(cancellationToken).ConfigureAwait(false);
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
            // Another writer may have taken this save already (then the queue runs dry before it, and its outcome
            // comes from that writer); otherwise write it with everything else that is waiting.
            while (!save.Outcome.IsCompleted && await WriteQueuedAsync().ConfigureAwait(false))
            {
            }
        }
        finally
        {
            _gate.Release();
        }

        return await save.Outcome.ConfigureAwait(false);
    }

    /// <summary>Writes queued saves in one transaction. Under the gate.</summary>
    /// <returns>False when the queue held nothing to write.</returns>
    private async Task<bool> WriteQueuedAsync()
    {
        var group = new List<PendingSave>();
        long bytes = 0;
        while (group.Count < MaxSavesPerTransaction && bytes < MaxBytesPerTransaction && _queued.TryDequeue(out PendingSave? next))
        {
            if (next.TryTake())
            {
                group.Add(next);
                bytes += next.Snapshot.Length;
            }
        }

        if (group.Count == 0)
        {
            return false;
        }

        bool[] written;
        try
        {
            // Cancelled only once every caller of the group has cancelled (a lone save: once its caller has).
            using var everyCallerCancelled = new GroupCancellation(group);
            written = await WriteGroupAsync(group, everyCallerCancelled.Token).ConfigureAwait(false);
        }
        catch (Exception ex)
        {
            foreach (PendingSave save in group)
            {
                save.Fail(ex);
            }

            return true;
        }

        for (int i = 0; i < group.Count; i++)
        {
            group[i].Complete(written[i]);
        }

        return true;
    }

    private async Task<bool[]> WriteGroupAsync(List<PendingSave> group, CancellationToken cancellationToken)
    {
        CancellationToken none = CancellationToken.None;
        var written = new bool[group.Count];
        NpgsqlConnection connection = await _dataSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            // READ COMMITTED whatever the server's default: each statement after the locks then sees every save
            // committed by their previous holders.
            NpgsqlTransaction transaction = await connection.BeginTransactionAsync(IsolationLevel.ReadCommitted, cancellationToken).ConfigureAwait(false);
            await using (transaction.ConfigureAwait(false))
            {
                // Round trip 1: the locks in a fixed order, then the newest row of each stream a conditional save checks.
                var streams = new SortedSet<StreamKey>();
                var reads = new List<PendingSave>();
                var readKeys = new HashSet<ReadKey>();
                foreach (PendingSave save in group)
                {
                    streams.Add(save.Store.Key);
                    if (save.Conditional && readKeys.Add(new ReadKey(save.Store.Key, save.Store.Options.MaxSnapshotLength)))
                    {
                        reads.Add(save);
                    }
                }

                var newest = new Dictionary<ReadKey, PostgreSqlCheckpointStore.StoredRow?>();
                var lockAndRead = new NpgsqlBatch(connection, transaction);
                await using (lockAndRead.ConfigureAwait(false))
                {
                    foreach (StreamKey stream in streams)
                    {
                        PostgreSqlCheckpointStore.AddLockCommands(lockAndRead, stream);
                    }

                    foreach (PendingSave save in reads)
                    {
                        lockAndRead.BatchCommands.Add(save.Store.CheckedRowCommand(long.MaxValue));
                    }

                    NpgsqlDataReader reader = await lockAndRead.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
                    await using (reader.ConfigureAwait(false))
                    {
                        // The results in statement order; only the reads return five columns (a non-query returns no
                        // result set, the locks' SELECT one column). The server checks each newest row's length and
                        // SHA-256, so its bytes are not sent here.
                        int next = 0;
                        do
                        {
                            if (reader.FieldCount == PostgreSqlCheckpointStore.CheckedRowColumnCount)
                            {
                                PendingSave read = reads[next++];
                                newest[new ReadKey(read.Store.Key, read.Store.Options.MaxSnapshotLength)] = await PostgreSqlCheckpointStore.ReadCheckedRowAsync(reader, read.Store.Options.MaxSnapshotLength, cancellationToken).ConfigureAwait(false);
                            }
                        }
                        while (await reader.NextResultAsync(cancellationToken).ConfigureAwait(false));

                        if (next != reads.Count)
                        {
                            throw new InvalidOperationException($"Expected {reads.Count} newest-row results, read {next}.");
                        }
                    }
                }

                // Round trip 2: every insert and pruning, each conditional save checked against the state the saves
                // before it leave (the newest row written by this group to that stream is valid by construction).
                var lastWritten = new Dictionary<StreamKey, PendingSave>();
                var writes = new NpgsqlBatch(connection, transaction);
                await using (writes.ConfigureAwait(false))
                {
                    for (int i = 0; i < group.Count; i++)
                    {
                        PendingSave save = group[i];
                        PostgreSqlCheckpointStore store = save.Store;
                        if (save.Conditional)
                        {
                            long? latest;
                            if (lastWritten.TryGetValue(store.Key, out PendingSave? before) && before.Snapshot.Length <= store.Options.MaxSnapshotLength)
                            {
                                latest = before.InputPosition;
                            }
                            else if (!lastWritten.ContainsKey(store.Key)
                                && newest[new ReadKey(store.Key, store.Options.MaxSnapshotLength)] is var row
                                && (row is null || row.Value.Problem is null))
                            {
                                latest = row?.Position;
                            }
                            else
                            {
                                // Rare: a damaged newest row, or a row of this group longer than this store accepts.
                                // Send the writes so far, then read older rows one at a time as a lone save does.
                                await FlushAsync(writes, cancellationToken).ConfigureAwait(false);
                                latest = await store.NewestValidPositionAsync(connection, transaction, cancellationToken).ConfigureAwait(false);
                            }

                            if (latest != save.ExpectedLatestPosition)
                            {
                                continue;
                            }
                        }

                        store.AddWriteCommands(writes, save);
                        lastWritten[store.Key] = save;
                        written[i] = true;
                    }

                    await FlushAsync(writes, cancellationToken).ConfigureAwait(false);
                }

                // Round trip 3. Not cancellable: once the commit is sent, its outcome is what the callers get.
                cancellationToken.ThrowIfCancellationRequested();
                await transaction.CommitAsync(none).ConfigureAwait(false);
            }
        }

        return written;
    }

    private static async Task FlushAsync(NpgsqlBatch batch, CancellationToken cancellationToken)
    {
        if (batch.BatchCommands.Count > 0)
        {
            await batch.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
            batch.BatchCommands.Clear();
        }
    }

    /// <summary>A stream read with one size limit (stores sharing a stream may have different limits).</summary>
    private readonly record struct ReadKey(StreamKey Stream, long MaxSnapshotLength);
}

/// <summary>A stream of a schema: what a save locks; ordered by schema, then stream name, ordinally.</summary>
internal readonly record struct StreamKey(string Schema, string Stream) : IComparable<StreamKey>
{
    public int CompareTo(StreamKey other)
    {
        int bySchema = string.CompareOrdinal(Schema, other.Schema);
        return bySchema != 0 ? bySchema : string.CompareOrdinal(Stream, other.Stream);
    }
}
