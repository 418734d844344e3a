using System.Buffers;
using System.Buffers.Binary;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using System.Numerics;
using System.Text;

namespace StreamForecast.Streaming;

/// <summary>Built-in <see cref="ISnapshotKeyCodec{TKey}"/>s for the common key types.</summary>
/// <remarks>Every codec is stateless, allocation-free apart from the decoded string, and thread-safe.</remarks>
public static class SnapshotKeyCodecs
{
    /// <summary>
    /// Strings as a 4-byte little-endian byte count followed by the UTF-8 bytes (format name <c>utf8-string/v1</c>).
    /// Null strings and strings with unpaired surrogates cannot be written; invalid UTF-8 is rejected when read.
    /// </summary>
    public static ISnapshotKeyCodec<string> Utf8String { get; } = new Utf8StringCodec();

    /// <summary>64-bit integers as 8 little-endian bytes (format name <c>int64-le/v1</c>).</summary>
    public static ISnapshotKeyCodec<long> Int64LittleEndian { get; } = new IntegerCodec<long>("int64-le/v1", "64-bit integer");

    /// <summary>32-bit integers as 4 little-endian bytes (format name <c>int32-le/v1</c>).</summary>
    public static ISnapshotKeyCodec<int> Int32LittleEndian { get; } = new IntegerCodec<int>("int32-le/v1", "32-bit integer");

    /// <summary>GUIDs as their 16 bytes in little-endian field order, as <see cref="Guid.ToByteArray()"/> gives them (format name <c>guid-le/v1</c>).</summary>
    public static ISnapshotKeyCodec<Guid> GuidBytes { get; } = new GuidCodec();

    /// <summary>Gets the built-in codec for <typeparamref name="TKey"/>, if there is one.</summary>
    /// <typeparam name="TKey">The key type: <see cref="string"/>, <see cref="long"/>, <see cref="int"/> or <see cref="System.Guid"/>.</typeparam>
    /// <param name="codec">The codec when the result is <see langword="true"/>.</param>
    /// <returns>Whether a built-in codec exists for the type.</returns>
    public static bool TryGetBuiltIn<TKey>([NotNullWhen(true)] out ISnapshotKeyCodec<TKey>? codec)
    {
        codec = typeof(TKey) == typeof(string) ? (ISnapshotKeyCodec<TKey>)Utf8String
            : typeof(TKey) == typeof(long) ? (ISnapshotKeyCodec<TKey>)Int64LittleEndian
            : typeof(TKey) == typeof(int) ? (ISnapshotKeyCodec<TKey>)Int32LittleEndian
            : typeof(TKey) == typeof(Guid) ? (ISnapshotKeyCodec<TKey>)GuidBytes
            : null;
        return codec is not null;
    }

    private static InvalidDataException TooShort(string what, int needed, int available) =>
        new(string.Create(CultureInfo.InvariantCulture, $"A {what} key needs {needed} bytes but only {available} remain."));

    private sealed class Utf8StringCodec : ISnapshotKeyCodec<string>
    {
        private static readonly UTF8Encoding s_strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

        public string FormatName => "utf8-string/v1";

        public void Write(string key, IBufferWriter<byte> destination)
        {
            ArgumentNullException.ThrowIfNull(key);
            ArgumentNullException.ThrowIfNull(destination);
            int byteCount = s_strict.GetByteCount(key);
            Span<byte> span = destination.GetSpan(4 + byteCount);
            BinaryPrimitives.WriteInt32LittleEndian(span, byteCount);
            s_strict.GetBytes(key, span[4..]);
            destination.Advance(4 + byteCount);
        }

        public string Read(ReadOnlySpan<byte> source, out int bytesConsumed)
        {
            if (source.Length < 4)
            {
                throw TooShort("string", 4, source.Length);
            }

            int byteCount = BinaryPrimitives.ReadInt32LittleEndian(source);
            if (byteCount < 0 || byteCount > source.Length - 4)
            {
                throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture,
                    $"A string key declares {byteCount} bytes, but 0 to {source.Length - 4} bytes remain."));
            }

            string key;
            try
            {
                key = s_strict.GetString(source.Slice(4, byteCount));
            }
            catch (DecoderFallbackException ex)
            {
                throw new InvalidDataException("A string key is not valid UTF-8.", ex);
            }

            bytesConsumed = 4 + byteCount;
            return key;
        }
    }

    /// <summary>A signed integer written in its two's-complement little-endian bytes (8 for long, 4 for int).</summary>
    private sealed class IntegerCodec<T>(string formatName, string description) : ISnapshotKeyCodec<T>
        where T : IBinaryInteger<T>
    {
        private static readonly int Width = T.Zero.GetByteCount();

        public string FormatName => formatName;

        public void Write(T key, IBufferWriter<byte> destination)
        {
            ArgumentNullException.ThrowIfNull(destination);
            int written = key.WriteLittleEndian(destination.GetSpan(Width));
            destination.Advance(written);
        }

        public T Read(ReadOnlySpan<byte> source, out int bytesConsumed)
        {
            if (source.Length < Width)
            {
                throw TooShort(description, Width, source.Length);
            }

            bytesConsumed = Width;
            return T.ReadLittleEndian(source[..Width], isUnsigned: false);
        }
    }

    private sealed class GuidCodec : ISnapshotKeyCodec<Guid>
    {
        public string FormatName => "guid-le/v1";

        public void Write(Guid key, IBufferWriter<byte> destination)
        {
            ArgumentNullException.ThrowIfNull(destination);
            bool written = key.TryWriteBytes(destination.GetSpan(16), bigEndian: false, out int bytesWritten);
            System.Diagnostics.Debug.Assert(written && bytesWritten == 16);
            destination.Advance(16);
        }

        public Guid Read(ReadOnlySpan<byte> source, out int bytesConsumed)
        {
            if (source.Length < 16)
            {
                throw TooShort("GUID", 16, source.Length);
            }

            bytesConsumed = 16;
            return new Guid(source[..16], bigEndian: false);
        }
    }
}
