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
public sealed class StreamForecastOptionsValidator<TKey> : IValidateOptions<StreamForecastOptions<TKey>>
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

        return failures.Count == 0 ? ValidateOptionsResult.Success : ValidateOptionsResult.Fail(failures);
    }

    private static string Capitalise(string? parameter) =>
        string.IsNullOrEmpty(parameter) ? "(engine)" : string.Concat(parameter[..1].ToUpperInvariant(), parameter.AsSpan(1));
}
