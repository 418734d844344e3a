using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>Where and how often the host checkpoints the engine (configuration section <c>Checkpoints</c>).</summary>
/// <remarks>Not thread-safe; read once at start.</remarks>
public sealed class StreamForecastCheckpointOptions
{
    /// <summary>The shortest accepted <see cref="Interval"/>: 1 second.</summary>
    public static readonly TimeSpan MinInterval = TimeSpan.FromSeconds(1);

    /// <summary>The longest accepted <see cref="Interval"/>: 7 days.</summary>
    public static readonly TimeSpan MaxInterval = TimeSpan.FromDays(7);

    /// <summary>
    /// The SQLite database file checkpoints are kept in (a <see cref="Sqlite.SqliteCheckpointStore"/>), created on first
    /// run. Default none: without a file or a <see cref="StreamForecastOptions{TKey}.CheckpointStoreFactory"/>, the
    /// engine starts empty and takes no checkpoints.
    /// </summary>
    public string? File { get; set; }

    /// <summary>How many checkpoints the SQLite file keeps, 1 to 1,000. Default 3.</summary>
    public int RetainCount { get; set; } = Sqlite.SqliteCheckpointStoreOptions.DefaultRetainCount;

    /// <summary>Time between periodic checkpoints, measured with the host's <see cref="TimeProvider"/>, 1 second to 7 days. Default 5 minutes.</summary>
    public TimeSpan Interval { get; set; } = TimeSpan.FromMinutes(5);

    /// <summary>Whether a last checkpoint is taken when the host stops. Default <see langword="true"/>.</summary>
    public bool OnStop { get; set; } = true;
}
