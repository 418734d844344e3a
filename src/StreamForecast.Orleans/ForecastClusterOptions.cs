namespace StreamForecast.Orleans;

/// <summary>
/// How series are spread over grains and how the client talks to them. The same values must be used by every silo
/// and every client of one cluster: a key's bucket is computed from <see cref="BucketCount"/>, and a bucket refuses
/// keys that do not belong to it.
/// </summary>
/// <remarks>Immutable and validated at construction; thread-safe.</remarks>
public sealed record ForecastClusterOptions
{
    /// <summary>The default number of buckets (grains), 64.</summary>
    public const int DefaultBucketCount = 64;

    /// <summary>The most buckets a cluster may use, 65,536.</summary>
    public const int MaxBucketCount = 65_536;

    /// <summary>
    /// The name of the grain storage the buckets use. Register a storage under this name on every silo, for example with
    /// <see cref="ForecastClusterSiloExtensions.AddSqliteCheckpointGrainStorage"/>.
    /// </summary>
    public const string StorageName = "streamforecast";

    /// <summary>Creates options.</summary>
    /// <param name="bucketCount">How many buckets the key space is split into, 1 to 65,536. Each bucket is one grain holding every series whose key hashes to it; it is the unit of placement, of failover and of durable writes.</param>
    /// <param name="rememberedCommands">How many recent batch and command ids each bucket remembers to ignore retries, 16 to 100,000. A retry older than this many later commands to the same bucket would be applied twice.</param>
    /// <param name="maxBatchSize">The most observations sent to one bucket in one call, 1 to 100,000; a larger batch for one bucket is split (in order).</param>
    /// <param name="maxAttempts">How many times a call is tried before the error reaches the caller, 1 to 100. Retries reuse the call's id, so a retry that follows a lost acknowledgement is not applied twice.</param>
    /// <param name="retryDelay">The first wait between attempts; it doubles up to <paramref name="maxRetryDelay"/>. Between 0 and 1 minute.</param>
    /// <param name="maxRetryDelay">The longest wait between attempts, at least <paramref name="retryDelay"/> and at most 10 minutes.</param>
    /// <param name="subscriptionLease">How long a bucket keeps sending output to a subscriber that has not renewed; the client renews every third of it. Between 5 seconds and 1 day.</param>
    /// <param name="outputReorderWindow">How long a client holds a bucket's output that arrived ahead of an earlier one before it gives the earlier one up as lost. Between 100 milliseconds and 10 minutes; 5 seconds by default.</param>
    /// <exception cref="ArgumentOutOfRangeException">A value is outside its range.</exception>
    public ForecastClusterOptions(
        int bucketCount = DefaultBucketCount,
        int rememberedCommands = 1024,
        int maxBatchSize = 4096,
        int maxAttempts = 10,
        TimeSpan? retryDelay = null,
        TimeSpan? maxRetryDelay = null,
        TimeSpan? subscriptionLease = null,
        TimeSpan? outputReorderWindow = null)
    {
        TimeSpan first = retryDelay ?? TimeSpan.FromMilliseconds(200);
        TimeSpan longest = maxRetryDelay ?? TimeSpan.FromSeconds(5);
        TimeSpan lease = subscriptionLease ?? TimeSpan.FromMinutes(2);
        TimeSpan reorder = outputReorderWindow ?? TimeSpan.FromSeconds(5);
        Check(bucketCount is >= 1 and <= MaxBucketCount, nameof(bucketCount), bucketCount, "between 1 and 65,536 buckets");
        Check(rememberedCommands is >= 16 and <= 100_000, nameof(rememberedCommands), rememberedCommands, "between 16 and 100,000 remembered ids");
        Check(maxBatchSize is >= 1 and <= 100_000, nameof(maxBatchSize), maxBatchSize, "between 1 and 100,000 observations per call");
        Check(maxAttempts is >= 1 and <= 100, nameof(maxAttempts), maxAttempts, "between 1 and 100 attempts");
        Check(first >= TimeSpan.Zero && first <= TimeSpan.FromMinutes(1), nameof(retryDelay), first, "a first retry delay between 0 and 1 minute");
        Check(longest >= first && longest <= TimeSpan.FromMinutes(10), nameof(maxRetryDelay), longest, "a longest retry delay at least the first one and at most 10 minutes");
        Check(lease >= TimeSpan.FromSeconds(5) && lease <= TimeSpan.FromDays(1), nameof(subscriptionLease), lease, "a subscription lease between 5 seconds and 1 day");
        Check(reorder >= TimeSpan.FromMilliseconds(100) && reorder <= TimeSpan.FromMinutes(10), nameof(outputReorderWindow), reorder, "an output reorder window between 100 milliseconds and 10 minutes");
        BucketCount = bucketCount;
        RememberedCommands = rememberedCommands;
        MaxBatchSize = maxBatchSize;
        MaxAttempts = maxAttempts;
        RetryDelay = first;
        MaxRetryDelay = longest;
        SubscriptionLease = lease;
        OutputReorderWindow = reorder;
    }

    /// <summary>How many buckets (grains) the key space is split into.</summary>
    public int BucketCount { get; }

    /// <summary>How many recent batch and command ids each bucket remembers.</summary>
    public int RememberedCommands { get; }

    /// <summary>The most observations sent to one bucket in one call.</summary>
    public int MaxBatchSize { get; }

    /// <summary>How many times a call is tried.</summary>
    public int MaxAttempts { get; }

    /// <summary>The first wait between attempts.</summary>
    public TimeSpan RetryDelay { get; }

    /// <summary>The longest wait between attempts.</summary>
    public TimeSpan MaxRetryDelay { get; }

    /// <summary>How long a subscription lasts without renewal.</summary>
    public TimeSpan SubscriptionLease { get; }

    /// <summary>How long a client waits for a bucket's missing output before it delivers the later ones without it.</summary>
    public TimeSpan OutputReorderWindow { get; }

    private static void Check(bool ok, string name, object value, string allowed)
    {
        if (!ok)
        {
            throw new ArgumentOutOfRangeException(name, value, $"ForecastClusterOptions: {name} must be {allowed}.");
        }
    }
}
