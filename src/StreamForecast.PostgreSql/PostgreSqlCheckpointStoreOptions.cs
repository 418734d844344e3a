using System.Globalization;
using StreamForecast.Streaming;

namespace StreamForecast.PostgreSql;

/// <summary>Settings of a <see cref="PostgreSqlCheckpointStore"/>.</summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record PostgreSqlCheckpointStoreOptions
{
    /// <summary>The default number of checkpoints kept per stream: 3.</summary>
    public const int DefaultRetainCount = 3;

    /// <summary>The largest number of checkpoints that may be kept per stream: 1,000.</summary>
    public const int MaxRetainCount = 1_000;

    /// <summary>The default limit on one checkpoint: 512 MiB.</summary>
    public const long DefaultMaxSnapshotLength = 512L << 20;

    /// <summary>The largest limit accepted: 1,000,000,000 bytes, below PostgreSQL's limit of 1 GiB on one <c>bytea</c> value.</summary>
    public const long MaxSnapshotLengthLimit = 1_000_000_000;

    /// <summary>The longest stream name accepted: 256 characters (<see cref="CheckpointStreamName.MaxLength"/>).</summary>
    public const int MaxStreamNameLength = CheckpointStreamName.MaxLength;

    /// <summary>The default database schema that holds the store's tables: <c>streamforecast</c>.</summary>
    public const string DefaultSchemaName = "streamforecast";

    /// <summary>The longest schema name accepted: 63 characters, PostgreSQL's identifier limit (longer names are silently truncated by the server).</summary>
    public const int MaxSchemaNameLength = 63;

    /// <summary>Creates PostgreSQL checkpoint store options.</summary>
    /// <param name="retainCount">
    /// How many of the stream's newest checkpoints to keep, 1 to 1,000; default 3. Older rows of the stream are deleted
    /// in the same transaction as each save. Keep at least 2 so that a damaged newest checkpoint has a fallback.
    /// </param>
    /// <param name="maxSnapshotLength">The largest snapshot saved or loaded, in bytes, 1 to 1,000,000,000; default 512 MiB.</param>
    /// <param name="streamName">
    /// The stream whose checkpoints the store reads, writes and prunes, so that any number of stores (in one process or
    /// on many machines) keep separate checkpoints in one schema; default "". 0 to 256 characters, no control characters
    /// (PostgreSQL text cannot hold U+0000) and no unpaired surrogates; compared ordinally (case-sensitive).
    /// </param>
    /// <param name="schemaName">
    /// The database schema that holds the store's tables, created on first use if missing; default
    /// <c>streamforecast</c>. 1 to 63 characters from <c>a</c>–<c>z</c>, <c>0</c>–<c>9</c> and <c>_</c>, not starting
    /// with a digit or with <c>pg_</c> (PostgreSQL reserves that prefix), so that the name never needs quoting and is
    /// never case-folded. The schema must hold nothing but this store's tables.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="retainCount"/> or <paramref name="maxSnapshotLength"/> is out of range.</exception>
    /// <exception cref="ArgumentNullException"><paramref name="streamName"/> or <paramref name="schemaName"/> is null.</exception>
    /// <exception cref="ArgumentException">
    /// <paramref name="streamName"/> is longer than 256 characters or holds a control character or an unpaired surrogate;
    /// or <paramref name="schemaName"/> is not an allowed schema name.
    /// </exception>
    public PostgreSqlCheckpointStoreOptions(
        int retainCount = DefaultRetainCount,
        long maxSnapshotLength = DefaultMaxSnapshotLength,
        string streamName = "",
        string schemaName = DefaultSchemaName)
    {
        if (retainCount is < 1 or > MaxRetainCount)
        {
            throw new ArgumentOutOfRangeException(nameof(retainCount), retainCount, "Between 1 and 1,000 checkpoints can be kept.");
        }

        if (maxSnapshotLength is < 1 or > MaxSnapshotLengthLimit)
        {
            throw new ArgumentOutOfRangeException(nameof(maxSnapshotLength), maxSnapshotLength, "A snapshot may be limited to between 1 and 1,000,000,000 bytes (PostgreSQL holds at most 1 GiB in one value).");
        }

        ArgumentNullException.ThrowIfNull(streamName);
        ArgumentNullException.ThrowIfNull(schemaName);
        CheckpointStreamName.Validate(streamName);
        ValidateSchemaName(schemaName);
        RetainCount = retainCount;
        MaxSnapshotLength = maxSnapshotLength;
        StreamName = streamName;
        SchemaName = schemaName;
    }

    /// <summary>The options with every default.</summary>
    public static PostgreSqlCheckpointStoreOptions Default { get; } = new();

    /// <summary>How many of the stream's newest checkpoints are kept.</summary>
    public int RetainCount { get; }

    /// <summary>The largest snapshot saved or loaded, in bytes.</summary>
    public long MaxSnapshotLength { get; }

    /// <summary>The stream whose checkpoints the store reads, writes and prunes; "" by default.</summary>
    public string StreamName { get; }

    /// <summary>The database schema that holds the store's tables; <c>streamforecast</c> by default.</summary>
    public string SchemaName { get; }

    private static void ValidateSchemaName(string schemaName)
    {
        bool valid = schemaName.Length is >= 1 and <= MaxSchemaNameLength
            && schemaName[0] is (>= 'a' and <= 'z') or '_'
            && !schemaName.StartsWith("pg_", StringComparison.Ordinal);
        for (int i = 1; valid && i < schemaName.Length; i++)
        {
            valid = schemaName[i] is (>= 'a' and <= 'z') or (>= '0' and <= '9') or '_';
        }

        if (!valid)
        {
            throw new ArgumentException(
                $"'{schemaName}' is not an allowed schema name: use 1 to {MaxSchemaNameLength} characters from a-z, 0-9 and '_', not starting with a digit or with 'pg_'.",
                nameof(schemaName));
        }
    }
}
