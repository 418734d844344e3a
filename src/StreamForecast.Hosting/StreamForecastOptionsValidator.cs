using Microsoft.Extensions.Options;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// Checks <see cref="StreamForecastOptions{TKey}"/> when the host starts: the engine's own validation of every number,
/// the series defaults, the checkpoint schedule and that checkpointed keys can be written. Each failure names the
/// setting (as its configuration key), what was wrong and what is allowed.
/// </summary>
/// <typeparam name="TKey">The series key type.</typeparam>
/// <remarks>Stateless and thread-safe. Registered by <see cref="StreamForecastServiceCollectionExtensions.AddStreamForecast{TKey}"/>.</remarks>
internal sealed class StreamForecastOptionsValidator<TKey> : IValidateOptions<StreamForecastOptions<TKey>>
    where TKey : notnull
{
    /// <summary>Validates the settings.</summary>
    /// <param name="name">The options name (unused: one engine per key type).</param>
    /// <param name="options">The settings.</param>
    /// <returns>Success, or a failure listing every problem found.</returns>
    public ValidateOptionsResult Validate(string? name, StreamForecastOptions<TKey> options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var failures = new List<string>();
        if (options.DefaultSeries is null)
        {
            failures.Add("StreamForecast DefaultSeries is not set: set it in the AddStreamForecast callback (options.DefaultSeries = new SeriesOptions(method, calendar, ...)).");
        }
        else
        {
            try
            {
                _ = options.ToEngineOptions(TimeProvider.System);
            }
            catch (ArgumentException ex)
            {
                failures.Add($"StreamForecast:{Capitalise(ex.ParamName)} is invalid: {ex.Message}");
            }
        }

        StreamForecastCheckpointOptions checkpoints = options.Checkpoints ?? new StreamForecastCheckpointOptions();
        if (checkpoints.Interval < StreamForecastCheckpointOptions.MinInterval || checkpoints.Interval > StreamForecastCheckpointOptions.MaxInterval)
        {
            failures.Add($"StreamForecast:Checkpoints:Interval is {checkpoints.Interval}; it must be between 1 second and 7 days (for example \"00:05:00\").");
        }

        if (checkpoints.RetainCount is < 1 or > Sqlite.SqliteCheckpointStoreOptions.MaxRetainCount)
        {
            failures.Add($"StreamForecast:Checkpoints:RetainCount is {checkpoints.RetainCount}; between 1 and 1,000 checkpoints can be kept.");
        }

        if (options.HasCheckpointStore && options.KeyCodec is null && !SnapshotKeyCodecs.TryGetBuiltIn<TKey>(out _))
        {
            failures.Add($"StreamForecast checkpoints are configured but keys of type {typeof(TKey).Name} have no built-in codec: set options.KeyCodec to an ISnapshotKeyCodec<{typeof(TKey).Name}>.");
        }

        StreamForecastInputLogOptions log = options.InputLog ?? new StreamForecastInputLogOptions();
        if (options.HasInputLog)
        {
            if (!options.HasCheckpointStore)
            {
                failures.Add("StreamForecast:InputLog needs checkpoints: set StreamForecast:Checkpoints:File (or a CheckpointStoreFactory); without checkpoints the log is never truncated and every start replays all of it.");
            }

            if (options.FullMode != IngestionFullMode.Wait)
            {
                failures.Add($"StreamForecast:InputLog needs StreamForecast:FullMode Wait (it is {options.FullMode}): an observation acknowledged as logged must never be dropped by a full queue.");
            }

            if (log.MaxPendingPosts is < 1 or > 1_000_000)
            {
                failures.Add($"StreamForecast:InputLog:MaxPendingPosts is {log.MaxPendingPosts}; between 1 and 1,000,000 posts can wait to be logged.");
            }

            if (options.InputLogFactory is null && string.IsNullOrWhiteSpace(log.File) && string.IsNullOrWhiteSpace(options.Checkpoints?.File))
            {
                failures.Add("StreamForecast:InputLog:Enabled is true but no file is set: set StreamForecast:InputLog:File or StreamForecast:Checkpoints:File (the log then shares it).");
            }

            if (options.InputLogFactory is null)
            {
                try
                {
                    _ = new Sqlite.SqliteInputLogOptions(log.StreamName ?? string.Empty);
                }
                catch (ArgumentException ex)
                {
                    failures.Add($"StreamForecast:InputLog:StreamName is invalid: {ex.Message}");
                }
            }
        }

        return failures.Count == 0 ? ValidateOptionsResult.Success : ValidateOptionsResult.Fail(failures);
    }

    private static string Capitalise(string? parameter) =>
        string.IsNullOrEmpty(parameter) ? "(engine)" : string.Concat(parameter[..1].ToUpperInvariant(), parameter.AsSpan(1));
}
