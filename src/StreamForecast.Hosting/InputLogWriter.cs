using System.Threading.Channels;
using Microsoft.Extensions.Logging;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting;

/// <summary>
/// The single writer between the application's posts and the engine when an input log is on: posts queue here; one
/// loop takes everything queued (up to 4,096 observations), appends it to the log in one call, posts it to the engine
/// in log order, moves the host's input position past it, and only then completes the posts. Because one loop does
/// both, the engine sees observations in exactly the order a replay of the log will, and every position below the
/// mark has been posted.
/// </summary>
/// <remarks>
/// <para><b>Group commit.</b> While one append is being made durable the next posts queue, and the next append takes
/// them all: one durable write per group, not per observation, with no timer.</para>
/// <para><b>Checkpoints.</b> The post gate is held while a group is posted and the mark moved; a checkpoint takes the
/// same gate to read the mark and snapshot, so a snapshot never holds part of a group beyond its mark.</para>
/// <para>Thread-safe: any number of callers may post concurrently.</para>
/// </remarks>
internal sealed partial class InputLogWriter<TKey>
    where TKey : notnull
{
    private const int MaxGroupObservations = 4_096;

    private readonly IInputLog _log;
    private readonly ObservationRecordCodec<TKey> _codec;
    private readonly ForecastEngine<TKey> _engine;
    private readonly SemaphoreSlim _postGate;
    private readonly Action<long> _mark;
    private readonly ILogger _logger;
    private readonly Channel<PendingPost> _queue;
    private readonly List<PendingPost> _group = [];
    private readonly List<ReadOnlyMemory<byte>> _records = [];
    private readonly Task _loop;
    private long _end;
    private long _refused;
    private bool _engineClosed;

    public InputLogWriter(
        IInputLog log, ObservationRecordCodec<TKey> codec, ForecastEngine<TKey> engine, long end, int maxPending,
        SemaphoreSlim postGate, Action<long> mark, ILogger logger)
    {
        _log = log;
        _codec = codec;
        _engine = engine;
        _end = end;
        _postGate = postGate;
        _mark = mark;
        _logger = logger;
        _queue = Channel.CreateBounded<PendingPost>(new BoundedChannelOptions(maxPending)
        {
            SingleReader = true,
            SingleWriter = false,
            FullMode = BoundedChannelFullMode.Wait,
        });
        _loop = Task.Run(RunAsync);
    }

    /// <summary>Observations the engine refused at its door after they were logged (only if its rules changed meanwhile).</summary>
    public long Refused => Interlocked.Read(ref _refused);

    /// <summary>Checks, encodes and queues observations, then waits until they are durable and posted.</summary>
    public async ValueTask PostAsync(Observation<TKey>[] observations, CancellationToken cancellationToken)
    {
        var records = new ReadOnlyMemory<byte>[observations.Length];
        DateTimeOffset? latest = ObservationRules.LatestEventTime(_engine.Options.MaxEventTimeAhead, _engine.Options.TimeProvider);
        for (int i = 0; i < observations.Length; i++)
        {
            if (ObservationRules.FindProblem(observations[i], latest) is { } problem)
            {
                string where = observations.Length == 1 ? "The observation" : $"Observation {i} of the batch";
                throw new ArgumentOutOfRangeException(nameof(observations), $"{where} is invalid: {problem}; nothing was posted.");
            }

            try
            {
                records[i] = _codec.Encode(observations[i]);
            }
            catch (ArgumentException ex) when (observations.Length > 1)
            {
                throw new ArgumentException($"Observation {i} of the batch cannot be logged: {ex.Message} Nothing was posted.", nameof(observations), ex);
            }
        }

        var pending = new PendingPost(observations, records);
        try
        {
            await _queue.Writer.WriteAsync(pending, cancellationToken).ConfigureAwait(false);
        }
        catch (ChannelClosedException)
        {
            throw new InvalidOperationException("The host is stopping; the observation was not logged or posted.");
        }

        await pending.Done.Task.WaitAsync(cancellationToken).ConfigureAwait(false);
    }

    /// <summary>Stops taking posts and waits until everything queued has been logged and posted.</summary>
    public async Task CompleteAsync(CancellationToken cancellationToken)
    {
        _queue.Writer.TryComplete();
        await _loop.WaitAsync(cancellationToken).ConfigureAwait(false);
    }

    private async Task RunAsync()
    {
        ChannelReader<PendingPost> reader = _queue.Reader;
        while (await reader.WaitToReadAsync().ConfigureAwait(false))
        {
            _group.Clear();
            _records.Clear();
            while (_records.Count < MaxGroupObservations && reader.TryRead(out PendingPost? post))
            {
                _group.Add(post);
                _records.AddRange(post.Records);
            }

            long first;
            try
            {
                first = await _log.AppendAsync(_records, CancellationToken.None).ConfigureAwait(false);
            }
            catch (Exception ex)
            {
                // Nothing of the group is durable: no caller is acknowledged, each gets the reason.
                LogAppendFailed(_logger, _records.Count, ex);
                var failure = new IOException($"The input log could not store the observations, so they were not accepted: {ex.Message}", ex);
                foreach (PendingPost p in _group)
                {
                    p.Done.TrySetException(failure);
                }

                continue;
            }

            if (first != _end)
            {
                // Another writer appended to the same log stream: positions no longer match what this host posted.
                LogForeignAppends(_logger, _end, first);
            }

            await PostGroupAsync(first).ConfigureAwait(false);

            // Durable: acknowledged even if the engine has stopped (the next start replays them).
            foreach (PendingPost p in _group)
            {
                p.Done.TrySetResult();
            }
        }
    }

    private async Task PostGroupAsync(long first)
    {
        await _postGate.WaitAsync().ConfigureAwait(false);
        try
        {
            if (_engineClosed)
            {
                return;
            }

            long position = first;
            foreach (PendingPost p in _group)
            {
                foreach (Observation<TKey> observation in p.Observations)
                {
                    try
                    {
                        await _engine.PostAsync(observation).ConfigureAwait(false);
                    }
                    catch (ArgumentOutOfRangeException ex)
                    {
                        // Checked before logging, so only reachable if the engine's rules differ from the check's.
                        Interlocked.Increment(ref _refused);
                        LogRefused(_logger, position, ex.Message);
                    }
                    catch (InvalidOperationException)
                    {
                        // The engine was completed (the host is stopping): the rest stays in the log for the next start.
                        _engineClosed = true;
                        return;
                    }

                    position++;
                }
            }

            _end = first + _records.Count;
            _mark(_end);
        }
        finally
        {
            _postGate.Release();
        }
    }

    [LoggerMessage(EventId = 30, Level = LogLevel.Error, Message = "The input log could not store {Count} observations; they were refused, not acknowledged.")]
    private static partial void LogAppendFailed(ILogger logger, int count, Exception exception);

    [LoggerMessage(EventId = 31, Level = LogLevel.Critical, Message = "The input log gave position {Actual} where this host expected {Expected}: another writer appends to the same log stream. Give each host its own stream.")]
    private static partial void LogForeignAppends(ILogger logger, long expected, long actual);

    [LoggerMessage(EventId = 32, Level = LogLevel.Warning, Message = "The engine refused the logged observation at input position {Position}: {Reason}")]
    private static partial void LogRefused(ILogger logger, long position, string reason);

    private sealed class PendingPost(Observation<TKey>[] observations, ReadOnlyMemory<byte>[] records)
    {
        public Observation<TKey>[] Observations { get; } = observations;

        public ReadOnlyMemory<byte>[] Records { get; } = records;

        public TaskCompletionSource Done { get; } = new(TaskCreationOptions.RunContinuationsAsynchronously);
    }
}
