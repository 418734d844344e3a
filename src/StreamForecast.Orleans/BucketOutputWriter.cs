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
/// clock ticks and offset minutes, strings as their index in the table, −1 for null; an update starts, after its key,
/// with a 32-bit mask whose set bits mark the fields left out because they hold the same bits as in the previous
/// update, or for the point at the horizon as in the update's own next-period point); and last the 64-bit XXH3 hash
/// of everything before it, so a damaged or truncated form is refused instead of read as other values.</para>
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
        ForecastUpdate<TKey>[] forecasts = output.Forecasts;
        for (int i = 0; i < forecasts.Length; i++)
        {
            WriteUpdate(forecasts[i], i == 0 ? default : forecasts[i - 1]);
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

    /// <summary>
    /// Writes one update: its key, a 32-bit mask, then each field whose mask bit is clear. A set bit means the field
    /// holds the same bits as in the previous update (the point at the horizon: as this update's next-period point),
    /// so repeated periods, times, method names and the usual horizon-1 point cost nothing.
    /// </summary>
    private void WriteUpdate(in ForecastUpdate<TKey> u, in ForecastUpdate<TKey> p)
    {
        _codec.Write(u.Key, _buffer);
        uint mask = 0;
        UpdateFields(u, p, ref mask, write: false);
        WriteInt32(unchecked((int)mask));
        UpdateFields(u, p, ref mask, write: true);
    }

    /// <summary>With <paramref name="write"/> false sets the mask bit of each field equal to its reference; with true writes each field whose bit is clear.</summary>
    private void UpdateFields(in ForecastUpdate<TKey> u, in ForecastUpdate<TKey> p, ref uint mask, bool write)
    {
        Int64(u.Period, p.Period, 0, ref mask, write);
        Int64(u.PeriodStart.Ticks, p.PeriodStart.Ticks, 1, ref mask, write);
        Int32(OffsetMinutes(u.PeriodStart), OffsetMinutes(p.PeriodStart), 2, ref mask, write);
        Double(u.Actual, p.Actual, 3, ref mask, write);
        Int32(Flags(u), Flags(p), 4, ref mask, write);
        Double(u.ForecastForPeriod, p.ForecastForPeriod, 5, ref mask, write);
        Double(u.Error, p.Error, 6, ref mask, write);
        Point(u.Next, p.Next, 7, ref mask, write);
        Point(u.AtHorizon, u.Next, 13, ref mask, write);
        ErrorSummary e = u.Errors, q = p.Errors;
        Int64(e.ScoredPeriods, q.ScoredPeriods, 19, ref mask, write);
        Double(e.Rsfe, q.Rsfe, 20, ref mask, write);
        Double(e.Mad, q.Mad, 21, ref mask, write);
        Double(e.SmoothedMad, q.SmoothedMad, 22, ref mask, write);
        Double(e.Mse, q.Mse, 23, ref mask, write);
        Double(e.Bias, q.Bias, 24, ref mask, write);
        Double(e.Mape, q.Mape, 25, ref mask, write);
        Double(e.Mase, q.Mase, 26, ref mask, write);
        Double(e.TrackingSignal, q.TrackingSignal, 27, ref mask, write);
        Double(e.TriggSignal, q.TriggSignal, 28, ref mask, write);
        Double(e.Sigma, q.Sigma, 29, ref mask, write);
        Int32(IndexOf(u.Method), IndexOf(p.Method), 30, ref mask, write);
        Int32(IndexOf(u.Event?.Name), IndexOf(p.Event?.Name), 31, ref mask, write);
    }

    private static int Flags(in ForecastUpdate<TKey> u) =>
        (u.IsImputed ? BucketOutputReader.Imputed : 0) | (u.IsRestatement ? BucketOutputReader.Restatement : 0);

    private static int OffsetMinutes(DateTimeOffset value) => (int)(value.Offset.Ticks / TimeSpan.TicksPerMinute);

    private void Point(in ForecastPoint u, in ForecastPoint p, int firstBit, ref uint mask, bool write)
    {
        Int32(u.Horizon, p.Horizon, firstBit, ref mask, write);
        Double(u.Value, p.Value, firstBit + 1, ref mask, write);
        Double(u.Lower, p.Lower, firstBit + 2, ref mask, write);
        Double(u.Upper, p.Upper, firstBit + 3, ref mask, write);
        Int32((int)u.Kind, (int)p.Kind, firstBit + 4, ref mask, write);
        Double(u.Coverage, p.Coverage, firstBit + 5, ref mask, write);
    }

    private void Int32(int value, int reference, int bit, ref uint mask, bool write)
    {
        if (!write)
        {
            mask |= value == reference ? 1u << bit : 0;
        }
        else if ((mask & (1u << bit)) == 0)
        {
            WriteInt32(value);
        }
    }

    private void Int64(long value, long reference, int bit, ref uint mask, bool write)
    {
        if (!write)
        {
            mask |= value == reference ? 1u << bit : 0;
        }
        else if ((mask & (1u << bit)) == 0)
        {
            WriteInt64(value);
        }
    }

    private void Double(double value, double reference, int bit, ref uint mask, bool write) =>
        Int64(BitConverter.DoubleToInt64Bits(value), BitConverter.DoubleToInt64Bits(reference), bit, ref mask, write);

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
