using System.Buffers;
using System.IO.Hashing;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>
/// Maps a key to its bucket from the key's snapshot encoding (the same bytes on every machine and every run), never
/// from <see cref="object.GetHashCode"/>, which differs between processes for strings.
/// </summary>
internal sealed class BucketMap<TKey>
{
    private readonly ISnapshotKeyCodec<TKey> _codec;
    private readonly int _buckets;

    public BucketMap(ISnapshotKeyCodec<TKey> codec, int buckets)
    {
        _codec = codec;
        _buckets = buckets;
    }

    public int BucketCount => _buckets;

    [ThreadStatic]
    private static ArrayBufferWriter<byte>? t_buffer;

    /// <summary>The bucket of <paramref name="key"/>: XxHash3 of its encoding, scaled onto [0, buckets). O(key length); thread-safe; no allocation once the thread's buffer has grown to the key size.</summary>
    public int BucketOf(TKey key)
    {
        ArrayBufferWriter<byte> buffer = t_buffer ??= new ArrayBufferWriter<byte>(64);
        buffer.ResetWrittenCount();
        _codec.Write(key, buffer);
        ulong hash = XxHash3.HashToUInt64(buffer.WrittenSpan);
        return (int)Math.BigMul(hash, (ulong)_buckets, out _);
    }
}
