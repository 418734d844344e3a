using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Logging;
using Orleans.Runtime.Hosting;
using Orleans.Serialization;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans;

/// <summary>Registers the forecast buckets and their storage on an Orleans silo.</summary>
public static class ForecastClusterSiloExtensions
{
    /// <summary>
    /// Lets this silo host the bucket grains of <typeparamref name="TKey"/> series. Every silo of the cluster must be
    /// given equal options and the same key codec (a key's bucket, and the stored series, depend on them).
    /// </summary>
    /// <typeparam name="TKey">The series key type.</typeparam>
    /// <param name="silo">The silo builder.</param>
    /// <param name="engineOptions">
    /// The series options exactly as for an in-process engine. Used: the default series and overrides, the key comparer,
    /// <see cref="ForecastEngineOptions{TKey}.MaxEventTimeAhead"/>, <see cref="ForecastEngineOptions{TKey}.MaxSeries"/> (per
    /// bucket), <see cref="ForecastEngineOptions{TKey}.EvictAfterQuietPeriods"/>, <see cref="ForecastEngineOptions{TKey}.IdleCheckInterval"/>
    /// and the time provider. Partitions, queue capacity, full mode and publishing options do not apply (a bucket is its
    /// own single writer and the client publishes). <see cref="ForecastEngineOptions{TKey}.Events"/> (the events known
    /// before the run and the group function) applies as in the engine; events learnt during the run are declared with
    /// <see cref="ForecastClusterClient{TKey}.DeclareEventAsync"/> and stored with each bucket's series.
    /// </param>
    /// <param name="keyCodec">How keys are stored and hashed to buckets.</param>
    /// <param name="clusterOptions">The cluster options; <see langword="null"/> for the defaults.</param>
    /// <returns>The silo builder.</returns>
    /// <remarks>Also register a grain storage named <see cref="ForecastClusterOptions.StorageName"/>, for example with <see cref="AddSqliteCheckpointGrainStorage"/>.</remarks>
    public static ISiloBuilder AddForecastBuckets<TKey>(this ISiloBuilder silo, ForecastEngineOptions<TKey> engineOptions, ISnapshotKeyCodec<TKey> keyCodec, ForecastClusterOptions? clusterOptions = null)
        where TKey : notnull
    {
        ArgumentNullException.ThrowIfNull(silo);
        ArgumentNullException.ThrowIfNull(engineOptions);
        ArgumentNullException.ThrowIfNull(keyCodec);
        silo.Services.AddSingleton(engineOptions);
        silo.Services.AddSingleton(keyCodec);
        silo.Services.TryAddSingleton(clusterOptions ?? new ForecastClusterOptions());
        return silo;
    }

    /// <summary>
    /// Registers grain storage named <paramref name="name"/> that keeps each grain's state as a stream of checkpoints in
    /// the stores <paramref name="storeForStream"/> returns (one per state stream; a server database for a real cluster).
    /// </summary>
    /// <param name="silo">The silo builder.</param>
    /// <param name="storeForStream">Returns the store for one stream name (state name + grain id); called once per stream per silo. Stores that implement <see cref="IDisposable"/> are disposed with the silo.</param>
    /// <param name="name">The storage name; <see cref="ForecastClusterOptions.StorageName"/> for the buckets.</param>
    /// <returns>The silo builder.</returns>
    public static ISiloBuilder AddCheckpointGrainStorage(this ISiloBuilder silo, Func<IServiceProvider, string, ICheckpointStore> storeForStream, string name = ForecastClusterOptions.StorageName)
    {
        ArgumentNullException.ThrowIfNull(silo);
        ArgumentNullException.ThrowIfNull(storeForStream);
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        silo.Services.AddGrainStorage(name, (services, storageName) => new CheckpointGrainStorage(
            storageName,
            stream => storeForStream(services, stream),
            services.GetRequiredService<Serializer>(),
            services.GetRequiredService<ILogger<CheckpointGrainStorage>>()));
        return silo;
    }

    /// <summary>
    /// Registers grain storage in one SQLite file: the embedded default, for a cluster on one machine (every silo opens
    /// the same file; SQLite serialises the writers). For silos on several machines use a server database: PostgreSQL
    /// with <c>AddPostgreSqlCheckpointGrainStorage</c> from StreamForecast.Orleans.PostgreSql, or another through
    /// <see cref="AddCheckpointGrainStorage"/>. A database file on a network share is not safe with SQLite.
    /// </summary>
    /// <param name="silo">The silo builder.</param>
    /// <param name="databasePath">The shared database file.</param>
    /// <param name="retainCount">How many versions of each grain's state to keep (older ones are the fallback if the newest is damaged), 1 to 1,000.</param>
    /// <param name="name">The storage name; <see cref="ForecastClusterOptions.StorageName"/> for the buckets.</param>
    /// <returns>The silo builder.</returns>
    public static ISiloBuilder AddSqliteCheckpointGrainStorage(this ISiloBuilder silo, string databasePath, int retainCount = 2, string name = ForecastClusterOptions.StorageName)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(databasePath);
        _ = new SqliteCheckpointStoreOptions(retainCount); // validates now, not at the first write
        return silo.AddCheckpointGrainStorage((_, stream) => new SqliteCheckpointStore(databasePath, new SqliteCheckpointStoreOptions(retainCount, streamName: stream)), name);
    }
}
