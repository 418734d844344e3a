using System.Buffers;

namespace StreamForecast.Streaming;

/// <summary>
/// Turns a series key into bytes for a snapshot and back. The engine is generic in its key type; give it a codec for
/// keys that <see cref="SnapshotKeyCodecs"/> does not cover.
/// </summary>
/// <typeparam name="TKey">The key type.</typeparam>
/// <remarks>
/// <para>An encoding must be self-delimiting (the reader learns from the bytes where the key ends) and stable
/// across versions of the program that reads it: a snapshot written today is read tomorrow.</para>
/// <para><b>Thread safety.</b> Implementations should be stateless and thread-safe; the built-in ones are.</para>
/// </remarks>
public interface ISnapshotKeyCodec<TKey>
{
    /// <summary>
    /// A short, stable name of the encoding (for example <c>utf8-string/v1</c>), stored in snapshots so that reading
    /// one with a different codec is detected instead of misread.
    /// </summary>
    string FormatName { get; }

    /// <summary>Appends the encoded key.</summary>
    /// <param name="key">The key.</param>
    /// <param name="destination">Where the bytes go.</param>
    /// <exception cref="ArgumentException">The key cannot be encoded (for example a null string).</exception>
    void Write(TKey key, IBufferWriter<byte> destination);

    /// <summary>Decodes one key from the start of <paramref name="source"/>.</summary>
    /// <param name="source">The bytes, starting with an encoded key; more bytes may follow it.</param>
    /// <param name="bytesConsumed">How many bytes the key took.</param>
    /// <returns>The key.</returns>
    /// <exception cref="InvalidDataException">The bytes are not a valid key (too short, bad encoding).</exception>
    TKey Read(ReadOnlySpan<byte> source, out int bytesConsumed);
}
