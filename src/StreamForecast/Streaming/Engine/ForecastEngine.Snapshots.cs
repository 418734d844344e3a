using System.Diagnostics.Metrics;
using System.Text;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <content>Snapshots, checkpoints and status reads: commands that visit every series on its partition's loop.</content>
public sealed partial class ForecastEngine<TKey>
{
    /// <summary>
    /// Writes a snapshot of every series (forecaster, error statistics, drift rules, open periods, restatement window,
    /// remembered event ids, known events declared at run time and the event lift) with the caller's input position, in a
    /// versioned, checksummed format (version 2, or 3 when the engine holds known-event state).
    /// </summary>
    /// <param name="destination">Where to write.</param>
    /// <param name="keyCodec">How keys are written (see <see cref="SnapshotKeyCodecs"/>).</param>
    /// <param name="inputPosition">Where in the caller's input this snapshot stands (for example a log offset), returned on restore.</param>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when the snapshot is written.</returns>
    public async Task SnapshotAsync(Stream destination, ISnapshotKeyCodec<TKey> keyCodec, long inputPosition, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(destination);
        ArgumentNullException.ThrowIfNull(keyCodec);
        var sections = new SnapshotSection<TKey>[_partitions.Length];
        var waits = new Task[_partitions.Length];
        for (int i = 0; i < _partitions.Length; i++)
        {
            sections[i] = new SnapshotSection<TKey>(keyCodec) { First = i == 0 };
            var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            waits[i] = SendAsync(_partitions[i], new Partition<TKey>.Message(MessageKind.Visit, default, 0, default, done, sections[i]), done, cancellationToken);
        }

        await Task.WhenAll(waits).ConfigureAwait(false);
        var parts = new List<ReadOnlyMemory<byte>>(sections.Length + 1) { Encoding.UTF8.GetBytes(keyCodec.FormatName) };
        foreach (SnapshotSection<TKey> s in sections)
        {
            parts.Add(s.Bytes);
        }

        // Known-event state (declarations at run time, lift) goes into one last section, and only then is the format
        // version 3: an engine without it writes exactly the version 2 bytes.
        byte[]? events = SnapshotEvents.Write(Array.ConvertAll(sections, static s => s.Events!), keyCodec);
        if (events is not null)
        {
            parts.Add(events);
        }

        await SnapshotFormat.WriteAsync(destination, inputPosition, parts, events is null ? SnapshotFormat.CurrentVersion : SnapshotFormat.EventsVersion, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>Takes a snapshot (see <see cref="SnapshotAsync"/>) and saves it in a checkpoint store.</summary>
    /// <param name="store">Where checkpoints are kept, for example a <see cref="FileCheckpointStore"/>.</param>
    /// <param name="keyCodec">How keys are written.</param>
    /// <param name="inputPosition">Where in the caller's input this checkpoint stands; replay from here after a restore.</param>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>A task that completes when the checkpoint is stored.</returns>
    public async Task SaveCheckpointAsync(ICheckpointStore store, ISnapshotKeyCodec<TKey> keyCodec, long inputPosition, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(store);
        using var buffer = new MemoryStream();
        await SnapshotAsync(buffer, keyCodec, inputPosition, cancellationToken).ConfigureAwait(false);
        await store.SaveAsync(buffer.GetBuffer().AsMemory(0, (int)buffer.Length), inputPosition, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>
    /// Reads every series as it stands: the forecast for its next period, its error statistics and the drift episodes
    /// open (see <see cref="SeriesStatus{TKey}"/>). Queued behind everything posted before the call, like a snapshot.
    /// </summary>
    /// <param name="cancellationToken">Stops waiting.</param>
    /// <returns>One status per series held, in no particular order.</returns>
    /// <exception cref="InvalidOperationException">The engine has been completed.</exception>
    /// <remarks>
    /// Use it to show what an engine holds when no period has closed yet, above all right after a restore, when no
    /// <see cref="ForecastUpdate{TKey}"/> has been published since. Cost: O(series), one status and list per series,
    /// computed on the partitions' loops (ingestion pauses for it on each partition in turn); for dashboards and
    /// restarts, not per observation. Thread-safe.
    /// </remarks>
    public async Task<IReadOnlyList<SeriesStatus<TKey>>> GetSeriesStatusAsync(CancellationToken cancellationToken = default)
    {
        var readers = new StatusReader[_partitions.Length];
        var waits = new Task[_partitions.Length];
        for (int i = 0; i < _partitions.Length; i++)
        {
            readers[i] = new StatusReader();
            var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            waits[i] = SendAsync(_partitions[i], new Partition<TKey>.Message(MessageKind.Visit, default, 0, default, done, readers[i]), done, cancellationToken);
        }

        await Task.WhenAll(waits).ConfigureAwait(false);
        var all = new List<SeriesStatus<TKey>>();
        foreach (StatusReader r in readers)
        {
            all.AddRange(r.Statuses);
        }

        return all;
    }
}
