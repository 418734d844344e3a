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

    /// <summary>Creates SQLite checkpoint store options.</summary>
    /// <param name="retainCount">
    /// How many of the newest checkpoints to keep, 1 to 1,000; default 3. Older rows are deleted in the same
    /// transaction as each save. Keep at least 2 so that a damaged newest checkpoint has a fallback.
    /// </param>
    /// <param name="maxSnapshotLength">The largest snapshot saved or loaded, in bytes, 1 to 1,000,000,000; default 512 MiB.</param>
    /// <exception cref="ArgumentOutOfRangeException">A value is out of range.</exception>
    public SqliteCheckpointStoreOptions(int retainCount = DefaultRetainCount, long maxSnapshotLength = DefaultMaxSnapshotLength)
    {
        if (retainCount is < 1 or > MaxRetainCount)
        {
            throw new ArgumentOutOfRangeException(nameof(retainCount), retainCount, "Between 1 and 1,000 checkpoints can be kept.");
        }

        if (maxSnapshotLength is < 1 or > MaxSnapshotLengthLimit)
        {
            throw new ArgumentOutOfRangeException(nameof(maxSnapshotLength), maxSnapshotLength, "A snapshot may be limited to between 1 and 1,000,000,000 bytes (SQLite's default limit on one value).");
        }

        RetainCount = retainCount;
        MaxSnapshotLength = maxSnapshotLength;
    }

    /// <summary>The options with every default.</summary>
    public static SqliteCheckpointStoreOptions Default { get; } = new();

    /// <summary>How many of the newest checkpoints are kept.</summary>
    public int RetainCount { get; }

    /// <summary>The largest snapshot saved or loaded, in bytes.</summary>
    public long MaxSnapshotLength { get; }
}
