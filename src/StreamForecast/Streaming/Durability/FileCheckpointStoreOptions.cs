using StreamForecast.Internal;

namespace StreamForecast.Streaming;

/// <summary>Settings of a <see cref="FileCheckpointStore"/>.</summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record FileCheckpointStoreOptions
{
    /// <summary>The default number of checkpoints kept: 3.</summary>
    public const int DefaultRetainCount = 3;

    /// <summary>The largest number of checkpoints that may be kept: 1,000.</summary>
    public const int MaxRetainCount = 1_000;

    /// <summary>The default limit on one checkpoint file: 1 GiB.</summary>
    public const long DefaultMaxFileLength = 1L << 30;

    /// <summary>Creates file checkpoint store options.</summary>
    /// <param name="retainCount">
    /// How many of the newest checkpoints to keep, 1 to 1,000; default 3. Older ones are deleted after each save.
    /// Keep at least 2 so that a damaged newest checkpoint has a fallback.
    /// </param>
    /// <param name="maxFileLength">
    /// The largest checkpoint file accepted, in bytes (snapshot plus 62 bytes of framing), 62 to
    /// <see cref="Array.MaxLength"/>; default 1 GiB. Larger files are neither written nor read.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">A value is out of range.</exception>
    public FileCheckpointStoreOptions(int retainCount = DefaultRetainCount, long maxFileLength = DefaultMaxFileLength)
    {
        if (retainCount is < 1 or > MaxRetainCount)
        {
            ThrowHelper.ThrowOutOfRange(nameof(retainCount), retainCount, "between 1 and 1,000 checkpoints can be kept");
        }

        if (maxFileLength < FileCheckpointStore.FramingLength || maxFileLength > Array.MaxLength)
        {
            ThrowHelper.ThrowOutOfRange(nameof(maxFileLength), maxFileLength, "a checkpoint file may be limited to between 62 bytes and Array.MaxLength bytes");
        }

        RetainCount = retainCount;
        MaxFileLength = maxFileLength;
    }

    /// <summary>The options with every default.</summary>
    public static FileCheckpointStoreOptions Default { get; } = new();

    /// <summary>How many of the newest checkpoints are kept.</summary>
    public int RetainCount { get; }

    /// <summary>The largest checkpoint file written or read, in bytes.</summary>
    public long MaxFileLength { get; }
}
