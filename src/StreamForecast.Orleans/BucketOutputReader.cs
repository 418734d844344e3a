using System.Buffers.Binary;
using System.Globalization;
using System.IO.Hashing;
using StreamForecast.Alerts;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Orleans;

/// <summary>
/// Reads the compact stored form of a <see cref="BucketOutput{TKey}"/> written by <see cref="BucketOutputWriter{TKey}"/>
/// (the layout is described there). Every value comes back exactly as written: doubles by their bits, strings by their
/// UTF-16 code units.
/// </summary>
/// <remarks>
/// <para>A form with another version, a hash that does not match, a length that runs past the end, bytes left over, a
/// different key codec, or a value no writer produces (an unknown flag, a string index outside the table, an invalid
/// event kind or point in time) is refused with an <see cref="InvalidDataException"/> naming what is wrong; nothing is
/// guessed. <b>Cost.</b> O(bytes); allocates the output, its arrays, the keys and the string table.
/// <b>Thread safety.</b> Stateless, thread-safe.</para>
/// </remarks>
internal ref struct BucketOutputReader
{
    /// <summary>The version byte of the layout written today.</summary>
    public const byte Version = 1;

    /// <summary>Flag bit of <see cref="ForecastUpdate{TKey}.IsImputed"/>.</summary>
    public const int Imputed = 1;

    /// <summary>Flag bit of <see cref="ForecastUpdate{TKey}.IsRestatement"/>.</summary>
    public const int Restatement = 2;

    private const int HashLength = sizeof(ulong);

    private readonly ReadOnlySpan<byte> _bytes;
    private int _position;

    private BucketOutputReader(ReadOnlySpan<byte> bytes) => _bytes = bytes;

    /// <summary>Reads an output from its compact form.</summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="bytes">The whole form.</param>
    /// <param name="codec">The key codec it was written with.</param>
    /// <returns>The output.</returns>
    /// <exception cref="InvalidDataException">The bytes are not a complete, undamaged form of this version written with this codec.</exception>
    public static BucketOutput<TKey> Read<TKey>(ReadOnlySpan<byte> bytes, ISnapshotKeyCodec<TKey> codec)
        where TKey : notnull
    {
        if (bytes.Length < 1 + HashLength)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"The stored output is {bytes.Length} bytes long, too short to be one (truncated?)."));
        }

        if (bytes[0] != Version)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"The stored output has layout version {bytes[0]}; this version reads {Version} only."));
        }

        ReadOnlySpan<byte> body = bytes[..^HashLength];
        ulong stored = BinaryPrimitives.ReadUInt64LittleEndian(bytes[^HashLength..]);
        if (XxHash3.HashToUInt64(body) != stored)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"The stored output ({bytes.Length} bytes) does not match its hash: it is damaged or truncated."));
        }

        var reader = new BucketOutputReader(body) { _position = 1 };
        return reader.ReadOutput(codec);
    }

    private BucketOutput<TKey> ReadOutput<TKey>(ISnapshotKeyCodec<TKey> codec)
        where TKey : notnull
    {
        int bucket = ReadInt32();
        long number = ReadInt64();
        long sequence = ReadInt64();
        string? codecName = ReadString();
        if (!string.Equals(codecName, codec.FormatName, StringComparison.Ordinal))
        {
            throw new InvalidDataException($"The stored output's keys were written with the key codec '{codecName}', not '{codec.FormatName}': every silo must use the same key codec.");
        }

        var strings = new string?[ReadCount(4, "string")];
        for (int i = 0; i < strings.Length; i++)
        {
            strings[i] = ReadString();
        }

        var forecasts = new ForecastUpdate<TKey>[ReadCount(8, "forecast update")];
        int[] previousStrings = [-1, -1]; // the method's and the event's index in the previous update
        for (int i = 0; i < forecasts.Length; i++)
        {
            forecasts[i] = ReadUpdate(codec, strings, i == 0 ? default : forecasts[i - 1], previousStrings);
        }

        var alerts = new DriftAlert<TKey>[ReadCount(64, "drift alert")];
        for (int i = 0; i < alerts.Length; i++)
        {
            TKey key = ReadKey(codec);
            long period = ReadInt64();
            DateTimeOffset start = ReadTime();
            int ruleIndex = ReadInt32();
            string ruleName = StringAt(strings, ReadInt32())!;
            var transition = new DriftTransition(
                (DriftTransitionKind)ReadInt32(), (DriftRuleKind)ReadInt32(), ReadInt64(), (DriftDirection)ReadInt32(), (DriftSeverity)ReadInt32(),
                ReadDouble(), ReadDouble(), ReadInt64(), (DriftCloseReason)ReadInt32())
            {
                Watched = (WatchedModel)ReadInt32(),
            };
            alerts[i] = new DriftAlert<TKey>(key, period, start, ruleIndex, ruleName, transition, ReadErrors());
        }

        var faults = new SeriesFault<TKey>[ReadCount(16, "fault")];
        for (int i = 0; i < faults.Length; i++)
        {
            TKey key = ReadKey(codec);
            long period = ReadInt64();
            var kind = (SeriesFaultKind)ReadInt32();
            faults[i] = new SeriesFault<TKey>(key, period, kind, StringAt(strings, ReadInt32())!);
        }

        if (_position != _bytes.Length)
        {
            throw Invalid($"{_bytes.Length - _position} bytes are left over after the last fault");
        }

        return new BucketOutput<TKey>(bucket, number, sequence, forecasts, alerts, faults);
    }

    /// <summary>Reads one update: its key, the mask, then each field whose bit is clear (a set bit: the reference's value).</summary>
    private ForecastUpdate<TKey> ReadUpdate<TKey>(ISnapshotKeyCodec<TKey> codec, string?[] strings, in ForecastUpdate<TKey> p, int[] previousStrings)
        where TKey : notnull
    {
        TKey key = ReadKey(codec);
        uint mask = unchecked((uint)ReadInt32());
        long period = Int64(p.Period, 0, mask);
        long ticks = Int64(p.PeriodStart.Ticks, 1, mask);
        int offset = Int32((int)(p.PeriodStart.Offset.Ticks / TimeSpan.TicksPerMinute), 2, mask);
        DateTimeOffset start = Time(ticks, offset);
        double actual = Double(p.Actual, 3, mask);
        int flags = Int32((p.IsImputed ? Imputed : 0) | (p.IsRestatement ? Restatement : 0), 4, mask);
        if ((flags & ~(Imputed | Restatement)) != 0)
        {
            throw Invalid($"unknown flags {flags}");
        }

        double forecastForPeriod = Double(p.ForecastForPeriod, 5, mask);
        double error = Double(p.Error, 6, mask);
        ForecastPoint next = Point(p.Next, 7, mask);
        ForecastPoint atHorizon = Point(next, 13, mask);
        ErrorSummary q = p.Errors;
        var errors = new ErrorSummary(
            Int64(q.ScoredPeriods, 19, mask), Double(q.Rsfe, 20, mask), Double(q.Mad, 21, mask), Double(q.SmoothedMad, 22, mask),
            Double(q.Mse, 23, mask), Double(q.Bias, 24, mask), Double(q.Mape, 25, mask), Double(q.Mase, 26, mask),
            Double(q.TrackingSignal, 27, mask), Double(q.TriggSignal, 28, mask), Double(q.Sigma, 29, mask));
        int methodIndex = previousStrings[0] = Int32(previousStrings[0], 30, mask);
        int eventIndex = previousStrings[1] = Int32(previousStrings[1], 31, mask);
        string method = StringAt(strings, methodIndex)!;
        string? eventName = StringAt(strings, eventIndex);
        return new ForecastUpdate<TKey>(key, period, start, actual, (flags & Imputed) != 0, forecastForPeriod, error, next, atHorizon, errors, method, (flags & Restatement) != 0)
        {
            Event = eventName is null ? null : KindNamed(eventName),
        };
    }

    private ForecastPoint Point(in ForecastPoint reference, int firstBit, uint mask)
    {
        int horizon = Int32(reference.Horizon, firstBit, mask);
        double value = Double(reference.Value, firstBit + 1, mask);
        double lower = Double(reference.Lower, firstBit + 2, mask);
        double upper = Double(reference.Upper, firstBit + 3, mask);
        int kind = Int32((int)reference.Kind, firstBit + 4, mask);
        if (kind is < byte.MinValue or > byte.MaxValue)
        {
            throw Invalid($"interval kind {kind} is out of range");
        }

        return new ForecastPoint(horizon, value, lower, upper, (IntervalKind)kind, Double(reference.Coverage, firstBit + 5, mask));
    }

    private int Int32(int reference, int bit, uint mask) => (mask & (1u << bit)) != 0 ? reference : ReadInt32();

    private long Int64(long reference, int bit, uint mask) => (mask & (1u << bit)) != 0 ? reference : ReadInt64();

    private double Double(double reference, int bit, uint mask) => (mask & (1u << bit)) != 0 ? reference : ReadDouble();

    private ErrorSummary ReadErrors() => new(
        ReadInt64(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble(), ReadDouble());

    private DateTimeOffset ReadTime() => Time(ReadInt64(), ReadInt32());

    private readonly DateTimeOffset Time(long ticks, int offsetMinutes)
    {
        try
        {
            return new DateTimeOffset(ticks, TimeSpan.FromMinutes(offsetMinutes));
        }
        catch (ArgumentException ex)
        {
            throw new InvalidDataException(Message($"the point in time ({ticks} ticks, offset {offsetMinutes} minutes) is not valid"), ex);
        }
    }

    private TKey ReadKey<TKey>(ISnapshotKeyCodec<TKey> codec)
    {
        TKey key;
        int consumed;
        try
        {
            key = codec.Read(_bytes[_position..], out consumed);
        }
        catch (InvalidDataException ex)
        {
            throw new InvalidDataException(Message("a key cannot be read: " + ex.Message), ex);
        }

        if (consumed < 0 || consumed > _bytes.Length - _position)
        {
            throw Invalid($"the key codec '{codec.FormatName}' reported {consumed} bytes read, with {_bytes.Length - _position} left");
        }

        _position += consumed;
        return key;
    }

    private readonly string? StringAt(string?[] strings, int index)
    {
        if (index == -1)
        {
            return null;
        }

        if ((uint)index >= (uint)strings.Length)
        {
            throw Invalid($"string index {index} is outside the table of {strings.Length}");
        }

        return strings[index];
    }

    private readonly EventKind KindNamed(string name)
    {
        try
        {
            return EventKind.Named(name);
        }
        catch (ArgumentException ex)
        {
            throw new InvalidDataException(Message("an event kind is not valid: " + ex.Message), ex);
        }
    }

    private string? ReadString()
    {
        int length = ReadInt32();
        if (length == -1)
        {
            return null;
        }

        if (length < 0 || length > (_bytes.Length - _position) / 2)
        {
            throw Invalid($"a string declares {length} characters, with {_bytes.Length - _position} bytes left");
        }

        ReadOnlySpan<byte> units = Take(length * 2);
        return string.Create(length, units, static (chars, source) =>
        {
            for (int i = 0; i < chars.Length; i++)
            {
                chars[i] = (char)BinaryPrimitives.ReadUInt16LittleEndian(source[(i * 2)..]);
            }
        });
    }

    /// <summary>Reads a list's count, refusing one that could not fit in the bytes left (each item takes at least <paramref name="minimumItemBytes"/>).</summary>
    private int ReadCount(int minimumItemBytes, string what)
    {
        int count = ReadInt32();
        if (count < 0 || count > (_bytes.Length - _position) / minimumItemBytes)
        {
            throw Invalid($"a list of {what}s declares {count} items, with {_bytes.Length - _position} bytes left");
        }

        return count;
    }

    private byte ReadByte() => Take(1)[0];

    private int ReadInt32() => BinaryPrimitives.ReadInt32LittleEndian(Take(4));

    private long ReadInt64() => BinaryPrimitives.ReadInt64LittleEndian(Take(8));

    private double ReadDouble() => BitConverter.Int64BitsToDouble(BinaryPrimitives.ReadInt64LittleEndian(Take(8)));

    private ReadOnlySpan<byte> Take(int count)
    {
        if (count > _bytes.Length - _position)
        {
            throw Invalid($"it ends early: {count} bytes needed, {_bytes.Length - _position} left");
        }

        ReadOnlySpan<byte> span = _bytes.Slice(_position, count);
        _position += count;
        return span;
    }

    private readonly InvalidDataException Invalid(string problem) => new(Message(problem));

    private readonly string Message(string problem) =>
        string.Create(CultureInfo.InvariantCulture, $"The stored output cannot be read at offset {_position}: {problem}.");
}
