using System.Text;
using Microsoft.Extensions.Logging;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <content>The bucket's stored form: its series in the engine's snapshot format and its counters.</content>
internal sealed partial class SeriesBucketGrain<TKey>
{
    private byte[] WriteSeries()
    {
        var section = new SnapshotSection<TKey>(_codec);
        section.Write(_table.Series);
        using var buffer = new MemoryStream();
        SnapshotFormat.Write(buffer, _state.State.Sequence, [Encoding.UTF8.GetBytes(_codec.FormatName), section.Bytes]);
        return buffer.ToArray();
    }

    private List<SeriesState<TKey>> ReadSeries(byte[] bytes)
    {
        using var stream = new MemoryStream(bytes, writable: false);
        SnapshotContent content = SnapshotFormat.Read(stream);
        if (content.Sections.Count != 2 || Encoding.UTF8.GetString(content.Sections[0].Span) != _codec.FormatName)
        {
            throw new InvalidDataException($"Bucket {_bucket}'s stored series were not written with the {_codec.FormatName} key codec.");
        }

        var series = new List<SeriesState<TKey>>();
        try
        {
            SnapshotSection<TKey>.Read(content.Sections[1], _codec, _options.Resolve, _options.TimeProvider.GetTimestamp(), series);
        }
        catch (Exception ex) when (ex is EndOfStreamException or ArgumentException or FormatException or OverflowException)
        {
            throw new InvalidDataException($"Bucket {_bucket}'s stored series do not fit the series options: " + ex.Message, ex);
        }

        return series;
    }

    private long[] GetCounters() => [.. Counters.ToArray(), _rejected];

    private void SetCounters(long[] v)
    {
        Counters.Load(v.AsSpan(0, SeriesCounters.Count));
        _rejected = v[SeriesCounters.Count];
    }
}
