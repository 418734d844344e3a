using System.Buffers.Binary;
using System.Globalization;
using System.Runtime.InteropServices;
using System.Text;

namespace StreamForecast.Streaming;

/// <summary>
/// Reads, in order, what a <see cref="SnapshotPayloadWriter"/> wrote. Every read checks that the bytes are there
/// (and that a declared count fits in what is left) before allocating or returning anything.
/// </summary>
/// <remarks>
/// <para>Errors are <see cref="InvalidDataException"/>s that name the offset and what was expected. A failed read
/// leaves <see cref="Position"/> where it was.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner.</para>
/// </remarks>
internal sealed class SnapshotPayloadReader
{
    private static readonly UTF8Encoding s_strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);
    private readonly ReadOnlyMemory<byte> _payload;
    private int _position;

    /// <summary>Creates a reader over a payload (typically one section of a validated snapshot).</summary>
    /// <param name="payload">The bytes.</param>
    public SnapshotPayloadReader(ReadOnlyMemory<byte> payload) => _payload = payload;

    /// <summary>The offset of the next byte to read.</summary>
    public int Position => _position;

    /// <summary>The number of bytes not read yet.</summary>
    public int Remaining => _payload.Length - _position;

    /// <summary>Whether every byte has been read.</summary>
    public bool IsAtEnd => _position == _payload.Length;

    /// <summary>Reads one byte.</summary>
    /// <returns>The value.</returns>
    /// <exception cref="InvalidDataException">No byte is left.</exception>
    public byte ReadByte() => Take(1, "byte")[0];

    /// <summary>Reads a Boolean written as one byte, 0 or 1.</summary>
    /// <returns>The value.</returns>
    /// <exception cref="InvalidDataException">No byte is left, or it is neither 0 nor 1.</exception>
    public bool ReadBoolean()
    {
        byte value = Peek(1, "Boolean")[0];
        if (value > 1)
        {
            throw Invalid($"The Boolean at offset {_position} is {value}; a Boolean is stored as 0 or 1.");
        }

        _position++;
        return value == 1;
    }

    /// <summary>Reads a 32-bit integer.</summary>
    /// <returns>The value.</returns>
    /// <exception cref="InvalidDataException">Fewer than 4 bytes are left.</exception>
    public int ReadInt32() => BinaryPrimitives.ReadInt32LittleEndian(Take(4, "32-bit integer"));

    /// <summary>Reads a 64-bit integer.</summary>
    /// <returns>The value.</returns>
    /// <exception cref="InvalidDataException">Fewer than 8 bytes are left.</exception>
    public long ReadInt64() => BinaryPrimitives.ReadInt64LittleEndian(Take(8, "64-bit integer"));

    /// <summary>Reads a double bit for bit.</summary>
    /// <returns>The value.</returns>
    /// <exception cref="InvalidDataException">Fewer than 8 bytes are left.</exception>
    public double ReadDouble() => BinaryPrimitives.ReadDoubleLittleEndian(Take(8, "double"));

    /// <summary>Reads a count-prefixed array of doubles into a new array.</summary>
    /// <returns>The values.</returns>
    /// <exception cref="InvalidDataException">The count is negative or more than the bytes left can hold.</exception>
    public double[] ReadDoubles()
    {
        int count = PeekCount(sizeof(double), "double array");
        var values = new double[count];
        CopyDoubles(values);
        return values;
    }

    /// <summary>Reads a count-prefixed array of doubles whose count must equal <paramref name="destination"/>'s length.</summary>
    /// <param name="destination">Where the values go (for example a buffer for a forecaster's state).</param>
    /// <exception cref="InvalidDataException">The stored count differs from the destination's length, or the bytes are not there.</exception>
    public void ReadDoubles(Span<double> destination)
    {
        int count = PeekCount(sizeof(double), "double array");
        if (count != destination.Length)
        {
            throw Invalid($"The double array at offset {_position} holds {count} numbers; {destination.Length} were expected.");
        }

        CopyDoubles(destination);
    }

    /// <summary>Reads a length-prefixed block of bytes.</summary>
    /// <returns>A slice of the payload (no copy).</returns>
    /// <exception cref="InvalidDataException">The length is negative or more than the bytes left.</exception>
    public ReadOnlyMemory<byte> ReadBytes()
    {
        int count = PeekCount(1, "byte block");
        ReadOnlyMemory<byte> bytes = _payload.Slice(_position + 4, count);
        _position += 4 + count;
        return bytes;
    }

    /// <summary>Reads a string written as a byte count and UTF-8 bytes.</summary>
    /// <returns>The string.</returns>
    /// <exception cref="InvalidDataException">The count does not fit, or the bytes are not valid UTF-8.</exception>
    public string ReadString()
    {
        int count = PeekCount(1, "string");
        string value;
        try
        {
            value = s_strict.GetString(_payload.Span.Slice(_position + 4, count));
        }
        catch (DecoderFallbackException ex)
        {
            throw new InvalidDataException(Format($"The string at offset {_position} is not valid UTF-8."), ex);
        }

        _position += 4 + count;
        return value;
    }

    /// <summary>Reads a key with its codec.</summary>
    /// <typeparam name="TKey">The key type.</typeparam>
    /// <param name="codec">The codec the key was written with.</param>
    /// <returns>The key.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="codec"/> is null.</exception>
    /// <exception cref="InvalidDataException">The codec rejected the bytes.</exception>
    public TKey ReadKey<TKey>(ISnapshotKeyCodec<TKey> codec)
    {
        ArgumentNullException.ThrowIfNull(codec);
        TKey key = codec.Read(_payload.Span[_position..], out int consumed);
        if (consumed < 0 || consumed > Remaining)
        {
            throw Invalid($"The key codec '{codec.FormatName}' reported {consumed} bytes read at offset {_position}, but {Remaining} were available.");
        }

        _position += consumed;
        return key;
    }

    /// <summary>Checks that every byte has been read.</summary>
    /// <exception cref="InvalidDataException">Bytes are left over.</exception>
    public void EnsureAtEnd()
    {
        if (!IsAtEnd)
        {
            throw Invalid($"The payload has {Remaining} unread bytes after offset {_position}; it was expected to end there.");
        }
    }

    private ReadOnlySpan<byte> Peek(int count, string what)
    {
        if (count > Remaining)
        {
            throw Invalid($"The payload ends too early: a {what} at offset {_position} needs {count} bytes but only {Remaining} remain.");
        }

        return _payload.Span.Slice(_position, count);
    }

    private ReadOnlySpan<byte> Take(int count, string what)
    {
        ReadOnlySpan<byte> bytes = Peek(count, what);
        _position += count;
        return bytes;
    }

    /// <summary>Reads (without consuming) a count prefix and checks that count·<paramref name="itemSize"/> bytes follow it.</summary>
    private int PeekCount(int itemSize, string what)
    {
        int count = BinaryPrimitives.ReadInt32LittleEndian(Peek(4, what + " length"));
        long available = (Remaining - 4) / itemSize;
        if (count < 0 || count > available)
        {
            throw Invalid($"The {what} at offset {_position} declares {count} items, but the {Remaining - 4} bytes left hold at most {available}.");
        }

        return count;
    }

    /// <summary>Copies the doubles after an already checked count prefix, then consumes prefix and values.</summary>
    private void CopyDoubles(Span<double> destination)
    {
        ReadOnlySpan<byte> bytes = _payload.Span.Slice(_position + 4, destination.Length * sizeof(double));
        if (BitConverter.IsLittleEndian)
        {
            bytes.CopyTo(MemoryMarshal.AsBytes(destination));
        }
        else
        {
            for (int i = 0; i < destination.Length; i++)
            {
                destination[i] = BinaryPrimitives.ReadDoubleLittleEndian(bytes[(i * sizeof(double))..]);
            }
        }

        _position += 4 + bytes.Length;
    }

    private static InvalidDataException Invalid(FormattableString message) => new(Format(message));

    private static string Format(FormattableString message) => message.ToString(CultureInfo.InvariantCulture);
}
