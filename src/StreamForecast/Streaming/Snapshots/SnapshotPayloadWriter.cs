using System.Buffers;
using System.Buffers.Binary;
using System.Runtime.InteropServices;
using System.Text;

namespace StreamForecast.Streaming;

/// <summary>
/// Builds the bytes of a snapshot section: little-endian integers and doubles (bit-exact, NaN payloads included),
/// count-prefixed double arrays, UTF-8 strings and keys. Read them back, in the same order, with
/// <see cref="SnapshotPayloadReader"/>.
/// </summary>
/// <remarks>
/// <para>Encodings: <c>byte</c> 1 byte; <c>bool</c> 1 byte (0 or 1); <c>int</c> 4 bytes; <c>long</c> 8 bytes;
/// <c>double</c> the 8 bytes of its IEEE 754 bits; double arrays and byte blocks a 4-byte count then the items;
/// strings a 4-byte UTF-8 byte count then the bytes. All little-endian.</para>
/// <para><b>Cost.</b> Amortised O(1) per number; the buffer doubles as it grows. Reuse one writer with
/// <see cref="Clear"/> to avoid regrowing. <b>Thread safety.</b> Not thread-safe; one owner.</para>
/// </remarks>
internal sealed class SnapshotPayloadWriter
{
    private static readonly UTF8Encoding s_strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);
    private const int MaxDoubles = (int.MaxValue - 4) / sizeof(double);
    private readonly ArrayBufferWriter<byte> _buffer;

    /// <summary>Creates a writer.</summary>
    /// <param name="initialCapacity">The initial buffer size in bytes, at least 1.</param>
    public SnapshotPayloadWriter(int initialCapacity = 256)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(initialCapacity, 1);
        _buffer = new ArrayBufferWriter<byte>(initialCapacity);
    }

    /// <summary>The number of bytes written so far.</summary>
    public int Length => _buffer.WrittenCount;

    /// <summary>The bytes written so far; valid until the next write or <see cref="Clear"/>.</summary>
    public ReadOnlyMemory<byte> WrittenMemory => _buffer.WrittenMemory;

    /// <summary>Forgets everything written, keeping the buffer.</summary>
    public void Clear() => _buffer.ResetWrittenCount();

    /// <summary>Writes one byte.</summary>
    /// <param name="value">The value.</param>
    public void WriteByte(byte value)
    {
        _buffer.GetSpan(1)[0] = value;
        _buffer.Advance(1);
    }

    /// <summary>Writes a Boolean as one byte, 1 or 0.</summary>
    /// <param name="value">The value.</param>
    public void WriteBoolean(bool value) => WriteByte(value ? (byte)1 : (byte)0);

    /// <summary>Writes a 32-bit integer.</summary>
    /// <param name="value">The value.</param>
    public void WriteInt32(int value)
    {
        BinaryPrimitives.WriteInt32LittleEndian(_buffer.GetSpan(4), value);
        _buffer.Advance(4);
    }

    /// <summary>Writes a 64-bit integer.</summary>
    /// <param name="value">The value.</param>
    public void WriteInt64(long value)
    {
        BinaryPrimitives.WriteInt64LittleEndian(_buffer.GetSpan(8), value);
        _buffer.Advance(8);
    }

    /// <summary>Writes a double bit for bit.</summary>
    /// <param name="value">The value; NaN, infinities and −0 are kept exactly.</param>
    public void WriteDouble(double value)
    {
        BinaryPrimitives.WriteDoubleLittleEndian(_buffer.GetSpan(8), value);
        _buffer.Advance(8);
    }

    /// <summary>Writes a count-prefixed array of doubles, bit for bit.</summary>
    /// <param name="values">The values (for example a forecaster's exported state), at most 268,435,455 of them.</param>
    /// <exception cref="ArgumentException">More values than fit in one payload.</exception>
    public void WriteDoubles(ReadOnlySpan<double> values)
    {
        if (values.Length > MaxDoubles)
        {
            throw new ArgumentException($"At most {MaxDoubles} doubles fit in one array; got {values.Length}.", nameof(values));
        }

        WriteInt32(values.Length);
        int byteCount = values.Length * sizeof(double);
        Span<byte> span = _buffer.GetSpan(Math.Max(byteCount, 1));
        if (BitConverter.IsLittleEndian)
        {
            MemoryMarshal.AsBytes(values).CopyTo(span);
        }
        else
        {
            for (int i = 0; i < values.Length; i++)
            {
                BinaryPrimitives.WriteDoubleLittleEndian(span[(i * sizeof(double))..], values[i]);
            }
        }

        _buffer.Advance(byteCount);
    }

    /// <summary>Writes a length-prefixed block of bytes.</summary>
    /// <param name="bytes">The bytes.</param>
    public void WriteBytes(ReadOnlySpan<byte> bytes)
    {
        WriteInt32(bytes.Length);
        _buffer.Write(bytes);
    }

    /// <summary>Writes a string as a byte count and its UTF-8 bytes.</summary>
    /// <param name="value">The string; not null.</param>
    /// <exception cref="ArgumentNullException"><paramref name="value"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="value"/> holds an unpaired surrogate.</exception>
    public void WriteString(string value)
    {
        ArgumentNullException.ThrowIfNull(value);
        int byteCount = s_strict.GetByteCount(value);
        WriteInt32(byteCount);
        Span<byte> span = _buffer.GetSpan(Math.Max(byteCount, 1));
        s_strict.GetBytes(value, span);
        _buffer.Advance(byteCount);
    }

    /// <summary>Writes a key with its codec.</summary>
    /// <typeparam name="TKey">The key type.</typeparam>
    /// <param name="codec">The codec.</param>
    /// <param name="key">The key.</param>
    /// <exception cref="ArgumentNullException"><paramref name="codec"/> is null.</exception>
    public void WriteKey<TKey>(ISnapshotKeyCodec<TKey> codec, TKey key)
    {
        ArgumentNullException.ThrowIfNull(codec);
        codec.Write(key, _buffer);
    }
}
