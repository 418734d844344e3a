using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <content>The bucket's stored form: its series in the engine's snapshot format, its newest output in a compact form.</content>
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

    /// <summary>
    /// Loads the stored newest output to send again; one stored by an earlier version (field by field) is kept in the
    /// compact form from now on.
    /// </summary>
    private void LoadLastOutput()
    {
        BucketState<TKey> stored = _state.State;
        if (stored.LastOutput is { } legacy)
        {
            _lastOutput = legacy;
            stored.LastOutputData = _outputWriter.Write(legacy);
            stored.LastOutput = null;
        }
        else if (stored.LastOutputData is { } bytes)
        {
            try
            {
                _lastOutput = BucketOutputReader.Read(bytes, _codec);
            }
            catch (InvalidDataException ex)
            {
                throw new InvalidDataException($"Bucket {_bucket}'s stored newest output cannot be loaded: " + ex.Message, ex);
            }
        }
    }
}
