using System.Runtime.InteropServices;
using System.Text;

namespace StreamForecast.Streaming;

/// <content>Writing and reading the set as an engine snapshot.</content>
public sealed partial class SeriesSet<TKey>
{
    /// <summary>
    /// Writes every series of the set as an engine snapshot (the format of <see cref="ForecastEngine{TKey}.SnapshotAsync"/>,
    /// versioned and checksummed), which <see cref="Restore"/> and <see cref="ForecastEngine.RestoreAsync{TKey}(Stream, ForecastEngineOptions{TKey}, ISnapshotKeyCodec{TKey}, CancellationToken)"/> read.
    /// </summary>
    /// <param name="destination">Where to write, at its current position.</param>
    /// <param name="keyCodec">How keys are written.</param>
    /// <param name="inputPosition">Where in the caller's input the snapshot stands, ≥ 0; returned by <see cref="Restore"/>.</param>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <remarks>
    /// O(series); allocates the encoded series once (a few hundred bytes per series). Known events declared with
    /// <see cref="DeclareEvent"/> and the event lift are included (format version 3, as the engine writes); a set without
    /// them writes version 2. Counters are not included. Single writer.
    /// </remarks>
    public void Snapshot(Stream destination, ISnapshotKeyCodec<TKey> keyCodec, long inputPosition)
    {
        ArgumentNullException.ThrowIfNull(destination);
        ArgumentNullException.ThrowIfNull(keyCodec);
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        var section = new SnapshotSection<TKey>(keyCodec);
        section.Write(_series.Values);

        // As the engine: known-event state (declarations, lift) goes into one last section, and only then is the
        // format version 3; a set without it writes exactly the version 2 bytes.
        var part = new SnapshotEvents.Part<TKey>();
        part.Capture(this, first: true);
        byte[]? events = SnapshotEvents.Write([part], keyCodec);
        ReadOnlyMemory<byte>[] sections = events is null
            ? [Encoding.UTF8.GetBytes(keyCodec.FormatName), section.Bytes]
            : [Encoding.UTF8.GetBytes(keyCodec.FormatName), section.Bytes, events];
        SnapshotFormat.Write(destination, inputPosition, sections, events is null ? SnapshotFormat.CurrentVersion : SnapshotFormat.EventsVersion);
    }

    /// <summary>
    /// Loads the series of an engine snapshot (written by <see cref="Snapshot"/> or by the engine) into this empty set.
    /// The whole snapshot is checked first (format, version, checksum, every series against the options resolved for its
    /// key, unique keys, the series limit): a damaged one is refused and the set stays empty.
    /// </summary>
    /// <param name="source">Where to read, from its current position.</param>
    /// <param name="keyCodec">How keys were written.</param>
    /// <returns>The input position stored in the snapshot.</returns>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <exception cref="InvalidOperationException">The set already holds series or declared known events.</exception>
    /// <exception cref="InvalidDataException">The snapshot is damaged, of another version, or does not fit the options.</exception>
    /// <remarks>
    /// O(snapshot length); allocates each series. The known events declared at run time and the event lift come back
    /// with the series (version 3 snapshots). Counters are left as they are (see <see cref="RestoreCounters"/>). Single writer.
    /// </remarks>
    public long Restore(Stream source, ISnapshotKeyCodec<TKey> keyCodec)
    {
        ArgumentNullException.ThrowIfNull(source);
        ArgumentNullException.ThrowIfNull(keyCodec);
        if (_series.Count > 0)
        {
            throw new InvalidOperationException("Restore loads series into an empty set only; this one holds " + _series.Count + " series.");
        }

        if (_declared.Count > 0)
        {
            // The snapshot's declarations replace the set's: refused rather than dropped silently.
            throw new InvalidOperationException("Restore loads series into an empty set only; this one holds " + _declared.Count + " known events declared with DeclareEvent.");
        }

        (List<SeriesState<TKey>> series, long inputPosition, List<KnownEvent<TKey>> declared) = ForecastEngine.ReadSnapshotWithEvents(source, _options, keyCodec);
        for (int taken = 0; _budget is not null && taken < series.Count; taken++)
        {
            if (!_budget.TryReserveSeries())
            {
                for (int i = 0; i < taken; i++)
                {
                    _budget.ReleaseSeries();
                }

                throw new InvalidDataException("The snapshot holds more series than the shared series limit has room for.");
            }
        }

        // The declared events first: adopting a series resolves its marks from them.
        _declared.Clear();
        _declared.AddRange(declared);
        foreach (SeriesState<TKey> s in series)
        {
            Adopt(s);
        }

        return inputPosition;
    }
}
