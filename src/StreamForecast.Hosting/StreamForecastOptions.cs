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
/// then the options validator that <see cref="StreamForecastServiceCollectionExtensions.AddStreamForecast{TKey}"/> registers checks everything when the host starts, so invalid settings
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
    public int QueueCapacity { get; set; } = ForecastEngineOptions<TKey>.DefaultQueueCapacity;

    /// <summary>What posting does when a queue is full. Default <see cref="IngestionFullMode.Wait"/>.</summary>
    public IngestionFullMode FullMode { get; set; } = IngestionFullMode.Wait;

    /// <summary>The most series held at once. Default 10,000,000.</summary>
    public int MaxSeries { get; set; } = ForecastEngineOptions<TKey>.DefaultMaxSeries;

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

    /// <summary>
    /// Known events declared before the run (promotions, closures...) and how series form groups (see
    /// <see cref="ForecastEngineOptions{TKey}.Events"/>); set in code. Events learnt during the run are declared on the
    /// engine (<see cref="ForecastEngine{TKey}.DeclareEventAsync"/>) and kept in its checkpoints. Default none.
    /// </summary>
    public EventCalendar<TKey>? Events { get; set; }

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
        new PublishingOptions(SubscriberCapacity, ReaderCapacity),
        Events);
}
