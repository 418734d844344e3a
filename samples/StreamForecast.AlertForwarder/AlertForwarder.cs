using System.Text.Json;
using StreamForecast.Alerts;
using StreamForecast.Streaming;

namespace StreamForecast.Samples.AlertForwarder;

/// <summary>One forwarded alert transition, as a line of the JSON-lines file.</summary>
/// <param name="Series">The series key.</param>
/// <param name="Rule">The rule's label.</param>
/// <param name="EpisodeId">The episode id.</param>
/// <param name="Transition">Raised, Escalated or Cleared.</param>
/// <param name="Direction">UnderForecast or OverForecast.</param>
/// <param name="Severity">Warning or Critical.</param>
/// <param name="PeriodStart">The start of the period whose close caused it.</param>
/// <param name="Signal">The signal that explains it.</param>
public sealed record ForwardedAlert(string Series, string Rule, long EpisodeId, string Transition, string Direction, string Severity, DateTimeOffset PeriodStart, double Signal);

/// <summary>
/// Forwards drift-alert transitions to the console and to a JSON-lines file, once each: a transition is identified by
/// (series, rule, episode id, transition kind), and one already in the file is not forwarded again. After a restart
/// the engine replays input from its last checkpoint and republishes the transitions of the replayed periods with the
/// same episode ids; the file, read at start, makes those repeats harmless.
/// </summary>
/// <remarks>
/// A push subscriber: it has its own buffer (sized by the host's SubscriberCapacity), so a slow disk delays only it,
/// never ingestion. Delivery calls it one alert at a time, so it needs no lock.
/// </remarks>
public sealed class AlertForwarder : IObserver<DriftAlert<string>>, IDisposable
{
    private static readonly JsonSerializerOptions s_json = new(JsonSerializerDefaults.Web);
    private readonly HashSet<(string Series, string Rule, long Episode, string Transition)> _seen = [];
    private readonly StreamWriter _file;
    private readonly TextWriter _console;

    /// <summary>Opens (or creates) the JSON-lines file and remembers the transitions already in it.</summary>
    /// <param name="path">The JSON-lines file.</param>
    /// <param name="console">Where a readable line per forwarded alert goes.</param>
    public AlertForwarder(string path, TextWriter console)
    {
        _console = console;
        if (File.Exists(path))
        {
            foreach (string line in File.ReadLines(path))
            {
                if (line.Length > 0 && JsonSerializer.Deserialize<ForwardedAlert>(line, s_json) is { } a)
                {
                    _seen.Add((a.Series, a.Rule, a.EpisodeId, a.Transition));
                }
            }
        }

        _file = new StreamWriter(path, append: true) { AutoFlush = true };
    }

    /// <summary>Transitions forwarded by this instance.</summary>
    public int Forwarded { get; private set; }

    /// <summary>Transitions ignored because they had been forwarded already.</summary>
    public int Repeats { get; private set; }

    /// <inheritdoc/>
    public void OnNext(DriftAlert<string> value)
    {
        DriftTransition t = value.Transition;
        var alert = new ForwardedAlert(value.Key, value.RuleName, t.EpisodeId, t.Kind.ToString(), t.Direction.ToString(), t.Severity.ToString(), value.PeriodStart, Math.Round(t.Signal, 3));
        if (!_seen.Add((alert.Series, alert.Rule, alert.EpisodeId, alert.Transition)))
        {
            Repeats++;
            return;
        }

        _file.WriteLine(JsonSerializer.Serialize(alert, s_json));
        _console.WriteLine($"  forwarded: {alert.Series} {alert.Transition.ToLowerInvariant()} (episode {alert.EpisodeId}, {alert.Direction}, {alert.Severity}) for the day starting {alert.PeriodStart:yyyy-MM-dd}");
        Forwarded++;
    }

    /// <inheritdoc/>
    public void OnCompleted() => _file.Flush();

    /// <inheritdoc/>
    public void OnError(Exception error)
    {
    }

    /// <inheritdoc/>
    public void Dispose() => _file.Dispose();
}
