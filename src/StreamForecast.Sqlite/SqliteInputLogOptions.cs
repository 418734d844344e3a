using System.Globalization;
using StreamForecast.Streaming;

namespace StreamForecast.Sqlite;

/// <summary>Settings of a <see cref="SqliteInputLog"/>.</summary>
/// <remarks>Immutable and thread-safe. Validated at construction.</remarks>
public sealed record SqliteInputLogOptions
{
    /// <summary>The default limit on one record: 64 KiB (an observation takes well under 1 KiB).</summary>
    public const int DefaultMaxRecordLength = 64 * 1024;

    /// <summary>The largest limit accepted: 16 MiB.</summary>
    public const int MaxRecordLengthLimit = 16 * 1024 * 1024;

    /// <summary>Creates SQLite input log options.</summary>
    /// <param name="streamName">
    /// The log's stream: several logs (in one process or several) keep separate positions in one file, each under its
    /// own name; default "". The same rules as <see cref="SqliteCheckpointStoreOptions.StreamName"/> (0 to 256
    /// characters, no control characters, no unpaired surrogates, compared ordinally). Input log streams and
    /// checkpoint streams are separate: a log and a checkpoint store may both use "".
    /// </param>
    /// <param name="maxRecordLength">The longest record appended, in bytes, 1 to 16 MiB; default 64 KiB. Longer records are refused at the append.</param>
    /// <exception cref="ArgumentNullException"><paramref name="streamName"/> is null.</exception>
    /// <exception cref="ArgumentException"><paramref name="streamName"/> is longer than 256 characters or holds a control character or an unpaired surrogate.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="maxRecordLength"/> is out of range.</exception>
    public SqliteInputLogOptions(string streamName = "", int maxRecordLength = DefaultMaxRecordLength)
    {
        ArgumentNullException.ThrowIfNull(streamName);
        CheckpointStreamName.Validate(streamName);
        if (maxRecordLength is < 1 or > MaxRecordLengthLimit)
        {
            throw new ArgumentOutOfRangeException(
                nameof(maxRecordLength),
                maxRecordLength,
                string.Create(CultureInfo.InvariantCulture, $"A record may be limited to between 1 and {MaxRecordLengthLimit:N0} bytes."));
        }

        StreamName = streamName;
        MaxRecordLength = maxRecordLength;
    }

    /// <summary>The options with every default.</summary>
    public static SqliteInputLogOptions Default { get; } = new();

    /// <summary>The log's stream name; "" by default.</summary>
    public string StreamName { get; }

    /// <summary>The longest record appended, in bytes.</summary>
    public int MaxRecordLength { get; }
}
