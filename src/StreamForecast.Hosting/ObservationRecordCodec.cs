using System.Buffers;
using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// How the host writes an observation as an input-log record and reads it back. Format 1, little-endian: a format byte
/// (1); the key in the snapshot key codec's encoding; the event time as UTC ticks (8 bytes) and its offset in minutes
/// (2 bytes); the quantity as an IEEE 754 double (8 bytes); the event id's UTF-8 length (4 bytes, −1 for none) and bytes.
/// </summary>
/// <remarks>Stateless apart from the key codec; thread-safe when the key codec is.</remarks>
internal sealed class ObservationRecordCodec<TKey>(ISnapshotKeyCodec<TKey> keys)
    where TKey : notnull
{
    private const byte Format = 1;
    private static readonly UTF8Encoding s_utf8 = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

    /// <summary>Encodes one observation into a new array.</summary>
    /// <exception cref="ArgumentException">The key codec cannot encode the key, or the event id is not well-formed UTF-16.</exception>
    public byte[] Encode(in Observation<TKey> observation)
    {
        var buffer = new ArrayBufferWriter<byte>(64);
        buffer.GetSpan(1)[0] = Format;
        buffer.Advance(1);
        keys.Write(observation.Key, buffer);
        Span<byte> fixedPart = buffer.GetSpan(18);
        BinaryPrimitives.WriteInt64LittleEndian(fixedPart, observation.Timestamp.UtcTicks);
        BinaryPrimitives.WriteInt16LittleEndian(fixedPart[8..], (short)observation.Timestamp.TotalOffsetMinutes);
        BinaryPrimitives.WriteDoubleLittleEndian(fixedPart[10..], observation.Quantity);
        buffer.Advance(18);
        if (observation.EventId is null)
        {
            BinaryPrimitives.WriteInt32LittleEndian(buffer.GetSpan(4), -1);
            buffer.Advance(4);
        }
        else
        {
            int length;
            try
            {
                length = s_utf8.GetByteCount(observation.EventId);
            }
            catch (EncoderFallbackException ex)
            {
                throw new ArgumentException("The event id is not well-formed text (it holds an unpaired surrogate); it cannot be logged.", nameof(observation), ex);
            }

            Span<byte> idPart = buffer.GetSpan(4 + length);
            BinaryPrimitives.WriteInt32LittleEndian(idPart, length);
            s_utf8.GetBytes(observation.EventId, idPart[4..]);
            buffer.Advance(4 + length);
        }

        return buffer.WrittenSpan.ToArray();
    }

    /// <summary>Decodes one record.</summary>
    /// <exception cref="InvalidDataException">The bytes are not a record of this format (the message says what is wrong).</exception>
    public Observation<TKey> Decode(ReadOnlySpan<byte> record)
    {
        if (record.IsEmpty || record[0] != Format)
        {
            throw new InvalidDataException(record.IsEmpty
                ? "The record is empty."
                : string.Create(CultureInfo.InvariantCulture, $"The record has format {record[0]}; this version reads format {Format}."));
        }

        TKey key = keys.Read(record[1..], out int keyLength);
        ReadOnlySpan<byte> rest = record[(1 + keyLength)..];
        if (rest.Length < 22)
        {
            throw new InvalidDataException("The record ends before its event time, quantity and event id.");
        }

        long ticks = BinaryPrimitives.ReadInt64LittleEndian(rest);
        short offsetMinutes = BinaryPrimitives.ReadInt16LittleEndian(rest[8..]);
        double quantity = BinaryPrimitives.ReadDoubleLittleEndian(rest[10..]);
        int idLength = BinaryPrimitives.ReadInt32LittleEndian(rest[18..]);
        rest = rest[22..];
        if (offsetMinutes is < -14 * 60 or > 14 * 60 || ticks < DateTime.MinValue.Ticks || ticks > DateTime.MaxValue.Ticks)
        {
            throw new InvalidDataException("The record's event time is out of range.");
        }

        long local = ticks + (offsetMinutes * TimeSpan.TicksPerMinute);
        if (local < DateTime.MinValue.Ticks || local > DateTime.MaxValue.Ticks)
        {
            throw new InvalidDataException("The record's event time is out of range in its offset.");
        }

        string? eventId = null;
        if (idLength == -1)
        {
            if (!rest.IsEmpty)
            {
                throw new InvalidDataException("The record has bytes after its end.");
            }
        }
        else if (idLength != rest.Length)
        {
            throw new InvalidDataException("The record's event id length does not match its bytes.");
        }
        else
        {
            try
            {
                eventId = s_utf8.GetString(rest);
            }
            catch (DecoderFallbackException ex)
            {
                throw new InvalidDataException("The record's event id is not valid UTF-8.", ex);
            }
        }

        var timestamp = new DateTimeOffset(ticks, TimeSpan.Zero).ToOffset(TimeSpan.FromMinutes(offsetMinutes));
        return new Observation<TKey>(key, timestamp, quantity, eventId);
    }
}
