using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// Settings of an engine run by the host (<see cref="StreamForecastServiceCollectionExtensions.AddStreamForecast{TKey}"/>):
/// the engine's numbers and the checkpoint schedule, bound from configuration, and what configuration cannot express
/// (how series are forecast, key equality, the key codec, a custom checkpoint store), set in code.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>
/// <para>A mutable settings object for the options pattern: configuration is bound first, then the code callback runs,
/// then <see cref="StreamForecastOptionsValidator{TKey}"/> checks everything when the host starts, so invalid settings
/// stop the start with a message naming the setting. The engine itself receives an immutable
/// <see cref="ForecastEngineOptions{TKey}"/> built from these.</para>
/// <para>Defaults are those of <see cref="ForecastEngineOptions{TKey}"/> unless stated. Not thread-safe; it is read once at start.</para>
/// </remarks>
public sealed class StreamForecastOptions<TKey>
    where TKey : notnull
{
    /// <summary>How a series is forecast unless <see cref="SeriesOverrides"/> says otherwise. Required; set in code.</summary>
    public SeriesOptions? DefaultSeries { get; set; }

    /// <summary>Per-key series options, resolved once per key (see <see cref="ForecastEngineOptions{TKey}.SeriesOverrides"/>); set in code. Default none.</summary>
    public Func<TKey, SeriesOptions?>? SeriesOverrides { get; set; }

    /// <summary>Key equality; set in code. Default <see cref="EqualityComparer{T}.Default"/>.</summary>
    public IEqualityComparer<TKey>? KeyComparer { get; set; }

    /// <summary>How keys are written into checkpoints; set in code. Default: the built-in codec for string, long, int and Guid keys (<see cref="SnapshotKeyCodecs.TryGetBuiltIn{TKey}"/>).</summary>
    public ISnapshotKeyCodec<TKey>? KeyCodec { get; set; }

    /// <summary>Called with each observation dropped under <see cref="IngestionFullMode.DropNewest"/>; set in code. Default none.</summary>
    public Action<Observation<TKey>>? OnDropped { get; set; }

    /// <summary>Owner loops sharing the keys, 1 to 1,024. Default: the processor count.</summary>
    public int? Partitions { get; set; }

    /// <summary>Observations each partition's queue holds, 1 to 10,000,000. Default 16,384.</summary>
    public int QueueCapacity { get; set; } = 16_384;

    /// <summary>What posting does when a queue is full. Default <see cref="IngestionFullMode.Wait"/>.</summary>
    public IngestionFullMode FullMode { get; set; } = IngestionFullMode.Wait;

    /// <summary>The most series held at once. Default 10,000,000.</summary>
    public int MaxSeries { get; set; } = 10_000_000;

    /// <summary>How far ahead of the clock an event may be stamped. Default 1 day.</summary>
    public TimeSpan? MaxEventTimeAhead { get; set; }

    /// <summary>Quiet closed periods after which a series is evicted. Default never.</summary>
    public int? EvictAfterQuietPeriods { get; set; }

    /// <summary>How often idle timeouts are checked, 10 ms to 1 hour. Default 1 second.</summary>
    public TimeSpan? IdleCheckInterval { get; set; }

    /// <summary>Each push subscriber's buffer, 1 to 10,000,000 items. Default 10,000.</summary>
    public int SubscriberCapacity { get; set; } = PublishingOptions.DefaultCapacity;

    /// <summary>Each pull reader's buffer, 1 to 10,000,000 items. Default 10,000.</summary>
    public int ReaderCapacity { get; set; } = PublishingOptions.DefaultCapacity;

    /// <summary>
    /// Whether log messages about alerts and faults name the series key. Default <see langword="true"/> (an alert
    /// without its series cannot be acted on); set <see langword="false"/> when keys are sensitive. Keys never go
    /// into log scopes.
    /// </summary>
    public bool LogSeriesKeys { get; set; } = true;

    /// <summary>Where and how often checkpoints are taken.</summary>
    public StreamForecastCheckpointOptions Checkpoints { get; set; } = new();

    /// <summary>
    /// Creates the checkpoint store; set in code for a store other than the SQLite file of
    /// <see cref="StreamForecastCheckpointOptions.File"/> (for example a <see cref="FileCheckpointStore"/>). Takes
    /// precedence over <see cref="StreamForecastCheckpointOptions.File"/>. Default none.
    /// </summary>
    public Func<IServiceProvider, ICheckpointStore>? CheckpointStoreFactory { get; set; }

    /// <summary>
    /// Whether and where observations posted through <see cref="HostedForecastEngine{TKey}.PostAsync"/> are logged
    /// durably before they are acknowledged (configuration section <c>InputLog</c>).
    /// </summary>
    public StreamForecastInputLogOptions InputLog { get; set; } = new();

    /// <summary>
    /// Creates the input log; set in code for a log other than the SQLite one of <see cref="StreamForecastInputLogOptions"/>.
    /// Takes precedence over <see cref="StreamForecastInputLogOptions.Enabled"/>. The host disposes the log when it stops.
    /// Default none.
    /// </summary>
    public Func<IServiceProvider, IInputLog>? InputLogFactory { get; set; }

    /// <summary>Whether an input log is configured (a factory, or the SQLite log enabled).</summary>
    internal bool HasInputLog => InputLogFactory is not null || (InputLog?.Enabled ?? false);

    /// <summary>Whether a checkpoint store is configured (a factory or a file).</summary>
    internal bool HasCheckpointStore => CheckpointStoreFactory is not null || !string.IsNullOrWhiteSpace(Checkpoints.File);

    /// <summary>Builds the engine's immutable options; throws the engine's own validation exceptions.</summary>
    internal ForecastEngineOptions<TKey> ToEngineOptions(TimeProvider timeProvider) => new(
        DefaultSeries ?? throw new InvalidOperationException("DefaultSeries is not set."),
        SeriesOverrides,
        KeyComparer,
        Partitions,
        QueueCapacity,
        FullMode,
        OnDropped,
        timeProvider,
        MaxEventTimeAhead,
        MaxSeries,
        EvictAfterQuietPeriods,
        IdleCheckInterval,
        new PublishingOptions(SubscriberCapacity, ReaderCapacity));
}

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
