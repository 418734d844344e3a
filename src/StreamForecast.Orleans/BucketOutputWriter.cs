using System.Buffers;
using System.Buffers.Binary;
using System.IO.Hashing;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// Writes a <see cref="BucketOutput{TKey}"/> in the compact stored form a bucket keeps to send it again after a silo
/// dies (<see cref="BucketState{TKey}.LastOutputData"/>). Read it back with <see cref="BucketOutputReader"/>.
/// </summary>
/// <remarks>
/// <para>Layout (all little-endian): a version byte (<see cref="BucketOutputReader.Version"/>); the bucket (int),
/// the output's number and the call's sequence (longs); the key codec's name; a table of the distinct strings of the
/// output (method names, rule names, event kinds, fault messages: an int count, then each as an int UTF-16 length,
/// −1 for null, and its UTF-16 code units, so every string comes back exactly, lone surrogates included); the forecast
/// updates, drift alerts and faults, each list an int count and then its items field by field (keys through the
/// engine's <see cref="ISnapshotKeyCodec{TKey}"/>, doubles by their 8 bits, enums as ints, a point in time as its
/// clock ticks and offset minutes, strings as their index in the table, −1 for null); and last the 64-bit XXH3 hash of
/// everything before it, so a damaged or truncated form is refused instead of read as other values.</para>
/// <para><b>Cost.</b> One pass over the items to build the string table and one to write them; the buffer and the table
/// are kept for the next output, so a write allocates only the returned array. <b>Thread safety.</b> Not thread-safe:
/// one per grain activation.</para>
/// </remarks>
/// <typeparam name="TKey">The series key type.</typeparam>
internal sealed class BucketOutputWriter<TKey>
    where TKey : notnull
{
    private readonly ISnapshotKeyCodec<TKey> _codec;
    private readonly ArrayBufferWriter<byte> _buffer = new(4096);
    private readonly Dictionary<string, int> _indexes = new(StringComparer.Ordinal);
    private readonly List<string> _strings = [];
    private string? _lastString;
    private int _lastIndex;

    /// <summary>Creates a writer that writes keys with <paramref name="codec"/>.</summary>
    /// <param name="codec">The key codec of the bucket's series (the same the snapshot format uses).</param>
    public BucketOutputWriter(ISnapshotKeyCodec<TKey> codec) => _codec = codec;

    /// <summary>Writes <paramref name="output"/> in the compact form.</summary>
    /// <param name="output">The output.</param>
    /// <returns>A new array holding the form.</returns>
    public byte[] Write(BucketOutput<TKey> output)
    {
        _buffer.ResetWrittenCount();
        _indexes.Clear();
        _strings.Clear();
        _lastString = null;
        CollectStrings(output);

        WriteByte(BucketOutputReader.Version);
        WriteInt32(output.Bucket);
        WriteInt64(output.Number);
        WriteInt64(output.Sequence);
        WriteString(_codec.FormatName);
        WriteInt32(_strings.Count);
        foreach (string s in _strings)
        {
            WriteString(s);
        }

        WriteInt32(output.Forecasts.Length);
        foreach (ref readonly ForecastUpdate<TKey> u in output.Forecasts.AsSpan())
        {
            WriteUpdate(u);
        }

        WriteInt32(output.Alerts.Length);
        foreach (ref readonly DriftAlert<TKey> a in output.Alerts.AsSpan())
        {
            WriteAlert(a);
        }

        WriteInt32(output.Faults.Length);
        foreach (ref readonly SeriesFault<TKey> f in output.Faults.AsSpan())
        {
            _codec.Write(f.Key, _buffer);
            WriteInt64(f.Period);
            WriteInt32((int)f.Kind);
            WriteInt32(IndexOf(f.Message));
        }

        ulong hash = XxHash3.HashToUInt64(_buffer.WrittenSpan);
        WriteInt64(unchecked((long)hash));
        return _buffer.WrittenSpan.ToArray();
    }

    private void CollectStrings(BucketOutput<TKey> output)
    {
        foreach (ref readonly ForecastUpdate<TKey> u in output.Forecasts.AsSpan())
        {
            Collect(u.Method);
            Collect(u.Event?.Name);
        }

        foreach (ref readonly DriftAlert<TKey> a in output.Alerts.AsSpan())
        {
            Collect(a.RuleName);
        }

        foreach (ref readonly SeriesFault<TKey> f in output.Faults.AsSpan())
        {
            Collect(f.Message);
        }
    }

    private void Collect(string? value)
    {
        if (value is null || ReferenceEquals(value, _lastString))
        {
            return;
        }

        if (!_indexes.TryGetValue(value, out int index))
        {
            index = _strings.Count;
            _indexes.Add(value, index);
            _strings.Add(value);
        }

        _lastString = value;
        _lastIndex = index;
    }

    /// <summary>The string's index in the table, −1 for null (every non-null string was collected first).</summary>
    private int IndexOf(string? value)
    {
        if (value is null)
        {
            return -1;
        }

        if (ReferenceEquals(value, _lastString))
        {
            return _lastIndex;
        }

        int index = _indexes[value];
        _lastString = value;
        _lastIndex = index;
        return index;
    }

    private void WriteUpdate(in ForecastUpdate<TKey> u)
    {
        _codec.Write(u.Key, _buffer);
        WriteInt64(u.Period);
        WriteTime(u.PeriodStart);
        WriteDouble(u.Actual);
        WriteByte((byte)((u.IsImputed ? BucketOutputReader.Imputed : 0) | (u.IsRestatement ? BucketOutputReader.Restatement : 0)));
        WriteDouble(u.ForecastForPeriod);
        WriteDouble(u.Error);
        WritePoint(u.Next);
        WritePoint(u.AtHorizon);
        WriteErrors(u.Errors);
        WriteInt32(IndexOf(u.Method));
        WriteInt32(IndexOf(u.Event?.Name));
    }

    private void WriteAlert(in DriftAlert<TKey> a)
    {
        _codec.Write(a.Key, _buffer);
        WriteInt64(a.Period);
        WriteTime(a.PeriodStart);
        WriteInt32(a.RuleIndex);
        WriteInt32(IndexOf(a.RuleName));
        Alerts.DriftTransition t = a.Transition;
        WriteInt32((int)t.Kind);
        WriteInt32((int)t.Rule);
        WriteInt64(t.EpisodeId);
        WriteInt32((int)t.Direction);
        WriteInt32((int)t.Severity);
        WriteDouble(t.Signal);
        WriteDouble(t.Level);
        WriteInt64(t.PeriodsObserved);
        WriteInt32((int)t.Reason);
        WriteInt32((int)t.Watched);
        WriteErrors(a.Errors);
    }

    private void WritePoint(in ForecastPoint p)
    {
        WriteInt32(p.Horizon);
        WriteDouble(p.Value);
        WriteDouble(p.Lower);
        WriteDouble(p.Upper);
        WriteInt32((int)p.Kind);
        WriteDouble(p.Coverage);
    }

    private void WriteErrors(in ErrorSummary e)
    {
        WriteInt64(e.ScoredPeriods);
        WriteDouble(e.Rsfe);
        WriteDouble(e.Mad);
        WriteDouble(e.SmoothedMad);
        WriteDouble(e.Mse);
        WriteDouble(e.Bias);
        WriteDouble(e.Mape);
        WriteDouble(e.Mase);
        WriteDouble(e.TrackingSignal);
        WriteDouble(e.TriggSignal);
        WriteDouble(e.Sigma);
    }

    private void WriteTime(DateTimeOffset value)
    {
        WriteInt64(value.Ticks);
        WriteInt32((int)(value.Offset.Ticks / TimeSpan.TicksPerMinute));
    }

    private void WriteString(string? value)
    {
        if (value is null)
        {
            WriteInt32(-1);
            return;
        }

        WriteInt32(value.Length);
        Span<byte> span = _buffer.GetSpan(value.Length * 2);
        for (int i = 0; i < value.Length; i++)
        {
            BinaryPrimitives.WriteUInt16LittleEndian(span[(i * 2)..], value[i]);
        }

        _buffer.Advance(value.Length * 2);
    }

    private void WriteByte(byte value)
    {
        _buffer.GetSpan(1)[0] = value;
        _buffer.Advance(1);
    }

    private void WriteInt32(int value)
    {
        BinaryPrimitives.WriteInt32LittleEndian(_buffer.GetSpan(4), value);
        _buffer.Advance(4);
    }

    private void WriteInt64(long value)
    {
        BinaryPrimitives.WriteInt64LittleEndian(_buffer.GetSpan(8), value);
        _buffer.Advance(8);
    }

    private void WriteDouble(double value)
    {
        BinaryPrimitives.WriteInt64LittleEndian(_buffer.GetSpan(8), BitConverter.DoubleToInt64Bits(value));
        _buffer.Advance(8);
    }
}
