using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// The host's input log (configuration section <c>InputLog</c>): for input that cannot be replayed from its source
/// (HTTP posts, MQTT without retained history), the host appends every observation posted through
/// <see cref="HostedForecastEngine{TKey}.PostAsync"/> to a durable log and completes the post only once the append is
/// durable; each checkpoint records the log position it accounts for, a start replays the log from the restored
/// checkpoint's position, and the log is truncated behind the checkpoints.
/// </summary>
/// <remarks>
/// <para>Posts queued while one append is being made durable share the next append (group commit). While a
/// checkpoint's snapshot is being taken (not while it is saved), logged observations wait to be posted to the engine,
/// so every checkpoint holds exactly the log positions before its mark and a replay repeats nothing.</para>
/// <para>Not thread-safe; read once at start.</para>
/// </remarks>
public sealed class StreamForecastInputLogOptions
{
    /// <summary>The default for <see cref="MaxPendingPosts"/>: 10,000.</summary>
    public const int DefaultMaxPendingPosts = 10_000;

    /// <summary>
    /// Whether the SQLite input log (<see cref="Sqlite.SqliteInputLog"/>) is used. Default <see langword="false"/>.
    /// Needs a checkpoint store (without checkpoints the log would only grow) and <see cref="IngestionFullMode.Wait"/>
    /// (an acknowledged observation must never be dropped).
    /// </summary>
    public bool Enabled { get; set; }

    /// <summary>The SQLite file of the log. Default: the checkpoint file (<see cref="StreamForecastCheckpointOptions.File"/>), which then holds both.</summary>
    public string? File { get; set; }

    /// <summary>The log's stream in the file (see <see cref="Sqlite.SqliteInputLogOptions.StreamName"/>). Default "".</summary>
    public string StreamName { get; set; } = string.Empty;

    /// <summary>
    /// Posts (single observations or batches) waiting to be logged, 1 to 1,000,000; a post beyond it waits for room.
    /// Default 10,000.
    /// </summary>
    public int MaxPendingPosts { get; set; } = DefaultMaxPendingPosts;
}
