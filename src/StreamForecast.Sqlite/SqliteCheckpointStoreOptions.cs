using System.Globalization;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <summary>Settings of a <see cref="SqliteCheckpointStore"/>.</summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record SqliteCheckpointStoreOptions
{
    /// <summary>The default number of checkpoints kept: 3.</summary>
    public const int DefaultRetainCount = 3;

    /// <summary>The largest number of checkpoints that may be kept: 1,000.</summary>
    public const int MaxRetainCount = 1_000;

    /// <summary>The default limit on one checkpoint: 512 MiB.</summary>
    public const long DefaultMaxSnapshotLength = 512L << 20;

    /// <summary>The largest limit accepted: 1,000,000,000 bytes, SQLite's default limit on one value.</summary>
    public const long MaxSnapshotLengthLimit = 1_000_000_000;

    /// <summary>The longest stream name accepted: 256 characters (<see cref="CheckpointStreamName.MaxLength"/>).</summary>
    public const int MaxStreamNameLength = CheckpointStreamName.MaxLength;

    /// <summary>Creates SQLite checkpoint store options.</summary>
    /// <param name="retainCount">
    /// How many of the newest checkpoints to keep, 1 to 1,000; default 3. Older rows are deleted in the same
    /// transaction as each save. Keep at least 2 so that a damaged newest checkpoint has a fallback.
    /// </param>
    /// <param name="maxSnapshotLength">The largest snapshot saved or loaded, in bytes, 1 to 1,000,000,000; default 512 MiB.</param>
    /// <param name="streamName">
    /// The stream whose checkpoints the store reads, writes and prunes, so that several stores (in one process or
    /// several) can keep separate checkpoints in one file; default "" (the stream of files written before streams
    /// existed). 0 to 256 characters, no control characters and no unpaired surrogates; compared ordinally
    /// (case-sensitive).
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="retainCount"/> or <paramref name="maxSnapshotLength"/> is out of range.</exception>
    /// <exception cref="ArgumentNullException"><paramref name="streamName"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="streamName"/> is longer than 256 characters or holds a control character or an unpaired surrogate.</exception>
    public SqliteCheckpointStoreOptions(int retainCount = DefaultRetainCount, long maxSnapshotLength = DefaultMaxSnapshotLength, string streamName = "")
    {
        if (retainCount is < 1 or > MaxRetainCount)
        {
            throw new ArgumentOutOfRangeException(nameof(retainCount), retainCount, "Between 1 and 1,000 checkpoints can be kept.");
        }

        if (maxSnapshotLength is < 1 or > MaxSnapshotLengthLimit)
        {
            throw new ArgumentOutOfRangeException(nameof(maxSnapshotLength), maxSnapshotLength, "A snapshot may be limited to between 1 and 1,000,000,000 bytes (SQLite's default limit on one value).");
        }

        ArgumentNullException.ThrowIfNull(streamName);
        CheckpointStreamName.Validate(streamName);
        RetainCount = retainCount;
        MaxSnapshotLength = maxSnapshotLength;
        StreamName = streamName;
    }

    /// <summary>The options with every default.</summary>
    public static SqliteCheckpointStoreOptions Default { get; } = new();

    /// <summary>How many of the newest checkpoints are kept.</summary>
    public int RetainCount { get; }

    /// <summary>The largest snapshot saved or loaded, in bytes.</summary>
    public long MaxSnapshotLength { get; }

    /// <summary>The stream whose checkpoints the store reads, writes and prunes; "" by default.</summary>
    public string StreamName { get; }
}
