using System.Diagnostics.Metrics;
using System.Text;
using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>Creates engines from snapshots (see <see cref="ForecastEngine{TKey}.SnapshotAsync"/>).</summary>
public static class ForecastEngine
{
    /// <summary>
    /// Reads a snapshot written by <see cref="ForecastEngine{TKey}.SnapshotAsync"/> and starts an engine holding its series. The whole
    /// snapshot is checked (format, version, checksum, every series against the options resolved for its key) before the
    /// engine is created: a corrupted or truncated snapshot is rejected, never half-loaded.
    /// </summary>
    /// <param name="source">Where to read.</param>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="options">The engine options; each key's series options must match those the snapshot was taken with.</param>
    /// <param name="keyCodec">How keys were written.</param>
    /// <param name="cancellationToken">Stops reading.</param>
    /// <returns>The running engine and the input position stored in the snapshot (continue the input from there).</returns>
    /// <exception cref="InvalidDataException">The snapshot is corrupted, truncated, of another version, or does not fit the options.</exception>
    public static async Task<RestoredEngine<TKey>> RestoreAsync<TKey>(
        Stream source, ForecastEngineOptions<TKey> options, ISnapshotKeyCodec<TKey> keyCodec, CancellationToken cancellationToken = default)
        where TKey : notnull
    {
        ArgumentNullException.ThrowIfNull(source);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(keyCodec);
        using var buffer = new MemoryStream();
        await source.CopyToAsync(buffer, cancellationToken).ConfigureAwait(false);
        buffer.Position = 0;
        (List<SeriesState<TKey>> series, long inputPosition, List<KnownEvent<TKey>> declared) = ReadSnapshotWithEvents(buffer, options, keyCodec);
        return new RestoredEngine<TKey>(new ForecastEngine<TKey>(options, series, declared), inputPosition);
    }

    /// <summary>
    /// Reads and checks a whole snapshot (envelope, checksum, every series against the options resolved for its key, the
    /// restore checks of <see cref="SeriesState{TKey}.Read"/>, unique keys, the series limit) without starting an engine.
    /// </summary>
    /// <exception cref="InvalidDataException">The snapshot is corrupted, truncated, of another version, does not fit the options, or holds a state no run can reach.</exception>
    internal static (List<SeriesState<TKey>> Series, long InputPosition) ReadSnapshot<TKey>(Stream source, ForecastEngineOptions<TKey> options, ISnapshotKeyCodec<TKey> keyCodec)
        where TKey : notnull
    {
        (List<SeriesState<TKey>> series, long position, _) = ReadSnapshotWithEvents(source, options, keyCodec);
        return (series, position);
    }

    /// <summary>As <see cref="ReadSnapshot"/>, also returning the known events declared at run time (version 3 snapshots).</summary>
    internal static (List<SeriesState<TKey>> Series, long InputPosition, List<KnownEvent<TKey>> Declared) ReadSnapshotWithEvents<TKey>(Stream source, ForecastEngineOptions<TKey> options, ISnapshotKeyCodec<TKey> keyCodec)
        where TKey : notnull
    {
        SnapshotContent content = SnapshotFormat.Read(source);
        if (content.Sections.Count < 1 || Encoding.UTF8.GetString(content.Sections[0].Span) != keyCodec.FormatName)
        {
            throw new InvalidDataException($"The snapshot's keys were not written with the {keyCodec.FormatName} codec.");
        }

        var series = new List<SeriesState<TKey>>();
        long arrival = options.TimeProvider.GetTimestamp();
        var seen = new HashSet<TKey>(options.KeyComparer);
        List<KnownEvent<TKey>> declared = [];
        try
        {
            bool withEvents = content.Version == SnapshotFormat.EventsVersion;
            if (withEvents && content.Sections.Count < 2)
            {
                throw new InvalidDataException("The version 3 snapshot lacks its known-event section.");
            }

            SnapshotEvents.Content<TKey>? events = withEvents ? SnapshotEvents.Read(content.Sections[^1], keyCodec) : null;
            declared = events?.Declared ?? [];
            int partitionSections = withEvents ? content.Sections.Count - 1 : content.Sections.Count;
            for (int i = 1; i < partitionSections; i++)
            {
                // Each series is marked before its state is read, so the restore check replays its window as it ran.
                SnapshotSection<TKey>.Read(content.Sections[i], keyCodec, options.Resolve, arrival, series,
                    (key, o) => EventCalendar<TKey>.MarksFor(key, o.Calendar, options.Events, declared, options.KeyComparer));
            }

            events?.ApplyLifts(series, options.KeyComparer);
        }
        catch (Exception ex) when (ex is EndOfStreamException or ArgumentException or FormatException or OverflowException)
        {
            throw new InvalidDataException("The snapshot's content does not fit: " + ex.Message, ex);
        }

        foreach (SeriesState<TKey> s in series)
        {
            if (!seen.Add(s.Key))
            {
                throw new InvalidDataException("The snapshot holds the same key twice.");
            }
        }

        if (series.Count > options.MaxSeries)
        {
            throw new InvalidDataException($"The snapshot holds {series.Count} series, more than the limit of {options.MaxSeries}.");
        }

        return (series, content.InputPosition, declared);
    }

    /// <summary>
    /// Starts an engine from the newest valid checkpoint in <paramref name="store"/>, or an empty engine at input
    /// position 0 when the store holds none. A damaged newest checkpoint falls back to an older one (the store reports which).
    /// </summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="store">Where checkpoints are kept.</param>
    /// <param name="options">The engine options; each key's series options must match those the checkpoint was taken with.</param>
    /// <param name="keyCodec">How keys were written.</param>
    /// <param name="cancellationToken">Stops reading.</param>
    /// <returns>The running engine and the input position to continue the input from.</returns>
    /// <exception cref="InvalidDataException">Every stored checkpoint is damaged, or the newest valid one does not fit the options.</exception>
    public static async Task<RestoredEngine<TKey>> RestoreAsync<TKey>(
        ICheckpointStore store, ForecastEngineOptions<TKey> options, ISnapshotKeyCodec<TKey> keyCodec, CancellationToken cancellationToken = default)
        where TKey : notnull
    {
        ArgumentNullException.ThrowIfNull(store);
        Checkpoint? checkpoint = await store.LoadLatestAsync(cancellationToken).ConfigureAwait(false);
        if (checkpoint is null)
        {
            return new RestoredEngine<TKey>(new ForecastEngine<TKey>(options), 0);
        }

        using var stream = new MemoryStream(checkpoint.Snapshot.ToArray(), writable: false);
        return await RestoreAsync(stream, options, keyCodec, cancellationToken).ConfigureAwait(false);
    }
}
