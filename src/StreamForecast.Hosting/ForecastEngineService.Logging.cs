using System.Globalization;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using StreamForecast.Alerts;
using StreamForecast.Sqlite;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <content>Log messages and the observers that log alert transitions and faults.</content>
internal sealed partial class ForecastEngineService<TKey>
{
    private string KeyText(TKey key) => _options.LogSeriesKeys ? key.ToString() ?? string.Empty : "(hidden)";

    [LoggerMessage(EventId = 1, Level = LogLevel.Information, Message = "Forecast engine started empty: no checkpoint store is configured, so no state survives a restart.")]
    private static partial void LogStartedWithoutCheckpoints(ILogger logger);

    [LoggerMessage(EventId = 2, Level = LogLevel.Information, Message = "Forecast engine started empty: the checkpoint store holds no checkpoint yet (first run). Replay the input from position 0.")]
    private static partial void LogStartedEmpty(ILogger logger);

    [LoggerMessage(EventId = 3, Level = LogLevel.Information, Message = "Forecast engine restored {SeriesCount} series from {CheckpointLocation}; replay the input from position {InputPosition}.")]
    private static partial void LogRestored(ILogger logger, int seriesCount, string checkpointLocation, long inputPosition);

    [LoggerMessage(EventId = 4, Level = LogLevel.Warning, Message = "A damaged checkpoint was skipped ({CheckpointLocation}): {Reason}. The engine restarts from an older checkpoint and more input is replayed.")]
    private static partial void LogCheckpointSkipped(ILogger logger, string checkpointLocation, string reason);

    [LoggerMessage(EventId = 5, Level = LogLevel.Critical, Message = "Forecast engine could not start.")]
    private static partial void LogStartFailed(ILogger logger, Exception exception);

    [LoggerMessage(EventId = 6, Level = LogLevel.Debug, Message = "Checkpoint saved at input position {InputPosition}: {SnapshotBytes} bytes, {SeriesCount} series.")]
    private static partial void LogCheckpointSaved(ILogger logger, long inputPosition, long snapshotBytes, int seriesCount);

    [LoggerMessage(EventId = 7, Level = LogLevel.Error, Message = "Checkpoint failed; the previous checkpoint still stands.")]
    private static partial void LogCheckpointFailed(ILogger logger, Exception exception);

    [LoggerMessage(EventId = 8, Level = LogLevel.Information, Message = "Forecast engine drained and stopped: {Observations} observations, {PeriodsClosed} periods closed, {SeriesCount} series.")]
    private static partial void LogDrained(ILogger logger, long observations, long periodsClosed, long seriesCount);

    [LoggerMessage(EventId = 9, Level = LogLevel.Warning, Message = "The host's shutdown timeout passed before the forecast engine drained ({QueueDepth} items still queued); they are lost unless replayed from the last checkpoint's position.")]
    private static partial void LogDrainTimedOut(ILogger logger, long queueDepth);

    [LoggerMessage(EventId = 10, Level = LogLevel.Warning, Message = "Drift alert raised on {SeriesKey}: {RuleName} on the {WatchedModel} model's errors, episode {EpisodeId}, {Direction}, signal {Signal:0.###} reached {Level:0.###} (period starting {PeriodStart:o}).")]
    private static partial void LogAlertRaised(ILogger logger, string seriesKey, string ruleName, WatchedModel watchedModel, long episodeId, DriftDirection direction, double signal, double level, DateTimeOffset periodStart);

    [LoggerMessage(EventId = 11, Level = LogLevel.Error, Message = "Drift alert escalated to critical on {SeriesKey}: {RuleName} on the {WatchedModel} model's errors, episode {EpisodeId}, {Direction}, signal {Signal:0.###} reached {Level:0.###} (period starting {PeriodStart:o}).")]
    private static partial void LogAlertEscalated(ILogger logger, string seriesKey, string ruleName, WatchedModel watchedModel, long episodeId, DriftDirection direction, double signal, double level, DateTimeOffset periodStart);

    [LoggerMessage(EventId = 12, Level = LogLevel.Information, Message = "Drift alert cleared on {SeriesKey}: {RuleName} on the {WatchedModel} model's errors, episode {EpisodeId} ({Reason}, period starting {PeriodStart:o}).")]
    private static partial void LogAlertCleared(ILogger logger, string seriesKey, string ruleName, WatchedModel watchedModel, long episodeId, DriftCloseReason reason, DateTimeOffset periodStart);

    [LoggerMessage(EventId = 13, Level = LogLevel.Warning, Message = "Series fault ({Kind}) on {SeriesKey}, period {Period}: {FaultMessage}")]
    private static partial void LogFault(ILogger logger, SeriesFaultKind kind, string seriesKey, long period, string faultMessage);

    [LoggerMessage(EventId = 14, Level = LogLevel.Debug, Message = "Observation rejected on {SeriesKey}: {FaultMessage}")]
    private static partial void LogObservationRejected(ILogger logger, string seriesKey, string faultMessage);

    [LoggerMessage(EventId = 15, Level = LogLevel.Error, Message = "Internal error in the forecast engine on {SeriesKey}, period {Period}: {FaultMessage}")]
    private static partial void LogInternalError(ILogger logger, string seriesKey, long period, string faultMessage);

    [LoggerMessage(EventId = 16, Level = LogLevel.Information, Message = "Replayed {Replayed} observations from the input log (positions {From} to {End}, exclusive) before serving; {Refused} refused.")]
    private static partial void LogReplayed(ILogger logger, long replayed, long from, long end, long refused);

    [LoggerMessage(EventId = 17, Level = LogLevel.Warning, Message = "The engine refused the logged observation at input position {Position} during the replay: {Reason}")]
    private static partial void LogReplayRefused(ILogger logger, long position, string reason);

    [LoggerMessage(EventId = 18, Level = LogLevel.Debug, Message = "Input log truncated before position {Position}.")]
    private static partial void LogTruncated(ILogger logger, long position);

    [LoggerMessage(EventId = 19, Level = LogLevel.Warning, Message = "The input log could not be truncated before position {Position}; it keeps growing until a later checkpoint truncates it.")]
    private static partial void LogTruncateFailed(ILogger logger, long position, Exception exception);

    [LoggerMessage(EventId = 20, Level = LogLevel.Warning, Message = "The host's shutdown timeout passed before the posts waiting for the input log were logged; those not logged were not acknowledged.")]
    private static partial void LogLogDrainTimedOut(ILogger logger);

    private sealed class AlertLogger(ForecastEngineService<TKey> owner) : IObserver<DriftAlert<TKey>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(DriftAlert<TKey> value)
        {
            DriftTransition t = value.Transition;
            ILogger log = owner._logger;
            LogLevel level = t.Kind switch
            {
                DriftTransitionKind.Raised => LogLevel.Warning,
                DriftTransitionKind.Escalated => LogLevel.Error,
                _ => LogLevel.Information,
            };
            if (!log.IsEnabled(level))
            {
                return;
            }

            string key = owner.KeyText(value.Key);
            switch (t.Kind)
            {
                case DriftTransitionKind.Raised:
                    LogAlertRaised(log, key, value.RuleName, t.Watched, t.EpisodeId, t.Direction, t.Signal, t.Level, value.PeriodStart);
                    break;
                case DriftTransitionKind.Escalated:
                    LogAlertEscalated(log, key, value.RuleName, t.Watched, t.EpisodeId, t.Direction, t.Signal, t.Level, value.PeriodStart);
                    break;
                case DriftTransitionKind.Cleared:
                    LogAlertCleared(log, key, value.RuleName, t.Watched, t.EpisodeId, t.Reason, value.PeriodStart);
                    break;
                default:
                    break;
            }
        }
    }

    private sealed class FaultLogger(ForecastEngineService<TKey> owner) : IObserver<SeriesFault<TKey>>
    {
        public void OnCompleted()
        {
        }

        public void OnError(Exception error)
        {
        }

        public void OnNext(SeriesFault<TKey> value)
        {
            ILogger log = owner._logger;
            LogLevel level = value.Kind switch
            {
                SeriesFaultKind.ObservationRejected => LogLevel.Debug,
                SeriesFaultKind.InternalError => LogLevel.Error,
                _ => LogLevel.Warning,
            };
            if (!log.IsEnabled(level))
            {
                return;
            }

            // A fault that concerns no series (a subscriber's) carries the default key.
            string key = value.Kind == SeriesFaultKind.SubscriberFailed || value.Key is null ? "(no series)" : owner.KeyText(value.Key);
            switch (value.Kind)
            {
                case SeriesFaultKind.ObservationRejected:
                    // Can be frequent (a producer with a broken clock): debug level, counted in the engine's meter anyway.
                    LogObservationRejected(log, key, value.Message);
                    break;
                case SeriesFaultKind.InternalError:
                    LogInternalError(log, key, value.Period, value.Message);
                    break;
                case SeriesFaultKind.ActualRejected or SeriesFaultKind.SubscriberFailed:
                    LogFault(log, value.Kind, key, value.Period, value.Message);
                    break;
                default:
                    break;
            }
        }
    }
}
