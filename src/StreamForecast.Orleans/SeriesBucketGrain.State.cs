using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <content>The bucket's stored form: its series in the engine's snapshot format.</content>
internal sealed partial class SeriesBucketGrain<TKey>
{
    private byte[] WriteSeries()
    {
        using var buffer = new MemoryStream();
        _table.Snapshot(buffer, _codec, _state.State.Sequence);
        return buffer.ToArray();
    }

    private void ReadSeries(byte[] bytes)
    {
        using var stream = new MemoryStream(bytes, writable: false);
        try
        {
            _table.Restore(stream, _codec);
        }
        catch (InvalidDataException ex)
        {
            throw new InvalidDataException($"Bucket {_bucket}'s stored series cannot be loaded: " + ex.Message, ex);
        }
    }
}
