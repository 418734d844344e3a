namespace StreamForecast.Streaming;

/// <summary>
/// One partition's part of an engine snapshot: its series, each as a key (written by the caller's codec) followed by
/// the series state. Written on the partition's own loop, so it sees a consistent state.
/// </summary>
internal sealed class SnapshotSection<TKey> : ISeriesVisitor<TKey>
    where TKey : notnull
{
    private readonly ISnapshotKeyCodec<TKey> _codec;
    private readonly SnapshotPayloadWriter _writer = new();

    public SnapshotSection(ISnapshotKeyCodec<TKey> codec) => _codec = codec;

    public ReadOnlyMemory<byte> Bytes => _writer.WrittenMemory;

    /// <summary>The partition's known-event state, captured with its series (null unless <see cref="VisitTable"/> ran).</summary>
    public SnapshotEvents.Part<TKey>? Events { get; private set; }

    /// <summary>Whether this is the first partition's section (which alone carries the group and all-series declarations).</summary>
    public bool First { get; init; }

    public void Visit(ICollection<SeriesState<TKey>> series) => Write(series);

    public void VisitTable(SeriesSet<TKey> set, ISeriesSink<TKey> sink)
    {
        Write(set.Series);
        Events = new SnapshotEvents.Part<TKey>();
        Events.Capture(set, First);
    }

    public void Write(ICollection<SeriesState<TKey>> series)
    {
        _writer.WriteInt32(series.Count);
        foreach (SeriesState<TKey> s in series)
        {
            _writer.WriteKey(_codec, s.Key);
            s.Write(_writer);
        }
    }

    /// <summary>Reads every series of one section, creating each from the options the engine resolves for its key.</summary>
    public static void Read(ReadOnlyMemory<byte> bytes, ISnapshotKeyCodec<TKey> codec, Func<TKey, SeriesOptions> resolve, long arrival, List<SeriesState<TKey>> into, Func<TKey, SeriesOptions, EventMarks?>? marksFor = null)
    {
        var reader = new SnapshotPayloadReader(bytes);
        int count = reader.ReadInt32();
        if (count < 0 || count > reader.Remaining)
        {
            throw new InvalidDataException("The snapshot holds an impossible series count.");
        }

        for (int i = 0; i < count; i++)
        {
            TKey key = reader.ReadKey(codec);
            SeriesOptions options = resolve(key);
            var state = new SeriesState<TKey>(key, options, arrival);
            state.SetMarks(marksFor?.Invoke(key, options));
            state.Read(reader);
            into.Add(state);
        }

        reader.EnsureAtEnd();
    }
}
