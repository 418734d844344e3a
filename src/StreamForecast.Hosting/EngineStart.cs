using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>How the host started the engine.</summary>
/// <param name="ReplayFrom">
/// The input position to replay the application's input from (0 when no checkpoint was loaded). With an input log the
/// host has already replayed the log from here (see <paramref name="LogRecordsReplayed"/>); the application replays nothing.
/// </param>
/// <param name="CheckpointLocation">Where the restored checkpoint was stored, or null when the engine started empty.</param>
/// <param name="SeriesRestored">How many series the checkpoint held.</param>
/// <param name="Rejected">Newer checkpoints skipped because they were damaged, newest first; empty normally.</param>
/// <param name="LogRecordsReplayed">Observations replayed from the input log into the engine before it was handed out (0 without a log).</param>
/// <param name="LogRecordsRefused">
/// Of those, how many the engine refused at its door (only possible when its rules changed between runs); each is logged
/// with its position. Late, duplicate and out-of-range observations are counted by the engine (<see cref="EngineCounters"/>).
/// </param>
/// <remarks>An immutable value.</remarks>
public sealed record EngineStart(
    long ReplayFrom,
    string? CheckpointLocation,
    int SeriesRestored,
    IReadOnlyList<CheckpointRejection> Rejected,
    long LogRecordsReplayed = 0,
    long LogRecordsRefused = 0);
