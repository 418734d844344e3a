using System.Runtime.CompilerServices;
using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.InputLogs;

/// <summary>
/// An <see cref="IInputLog"/> in memory, for tests: the second implementation the contract suite runs on, and a log
/// whose contents a test can inspect, truncate or make fail. "Durable" here means: kept by the shared
/// <see cref="Storage"/>, which outlives the log instance (a new instance over the same storage sees everything).
/// </summary>
internal sealed class MemoryInputLog(MemoryInputLog.Storage storage) : IInputLog
{
    private int _disposed;

    public MemoryInputLog()
        : this(new Storage())
    {
    }

    public Storage Store => storage;

    /// <summary>When set, the next appends throw this (nothing is stored).</summary>
    public Exception? FailAppends { get; set; }

    public ValueTask<long> AppendAsync(IReadOnlyList<ReadOnlyMemory<byte>> records, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(records);
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        if (records.Count == 0)
        {
            throw new ArgumentException("An append needs at least one record.", nameof(records));
        }

        for (int i = 0; i < records.Count; i++)
        {
            if (records[i].IsEmpty)
            {
                throw new ArgumentException($"Record {i} is empty.", nameof(records));
            }
        }

        cancellationToken.ThrowIfCancellationRequested();
        if (FailAppends is { } failure)
        {
            return ValueTask.FromException<long>(failure);
        }

        lock (storage.Gate)
        {
            long first = storage.End;
            foreach (ReadOnlyMemory<byte> r in records)
            {
                storage.Records.Add(r.ToArray());
            }

            storage.Appends++;
            return ValueTask.FromResult(first);
        }
    }

    public IAsyncEnumerable<InputLogRecord> ReadAsync(long fromPosition, CancellationToken cancellationToken = default)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(fromPosition);
        return ReadCoreAsync(fromPosition, cancellationToken);
    }

    public ValueTask TruncateAsync(long beforePosition, CancellationToken cancellationToken = default)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(beforePosition);
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        lock (storage.Gate)
        {
            ArgumentOutOfRangeException.ThrowIfGreaterThan(beforePosition, storage.End);
            while (storage.Start < beforePosition)
            {
                storage.Records.RemoveAt(0);
                storage.Start++;
            }
        }

        return ValueTask.CompletedTask;
    }

    public ValueTask<InputLogRange> GetRangeAsync(CancellationToken cancellationToken = default)
    {
        lock (storage.Gate)
        {
            return ValueTask.FromResult(new InputLogRange(storage.Start, storage.End));
        }
    }

    public ValueTask DisposeAsync()
    {
        Interlocked.Exchange(ref _disposed, 1);
        return ValueTask.CompletedTask;
    }

    private async IAsyncEnumerable<InputLogRecord> ReadCoreAsync(long fromPosition, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        await Task.Yield();
        long next = fromPosition;
        lock (storage.Gate)
        {
            if (fromPosition < storage.Start || fromPosition > storage.End)
            {
                throw new ArgumentOutOfRangeException(nameof(fromPosition), fromPosition, $"The log holds positions {storage.Start} to {storage.End}.");
            }
        }

        while (true)
        {
            cancellationToken.ThrowIfCancellationRequested();
            byte[] payload;
            lock (storage.Gate)
            {
                if (next < storage.Start)
                {
                    throw new InvalidDataException($"The log was truncated to {storage.Start} while {next} was being read.");
                }

                if (next >= storage.End)
                {
                    yield break;
                }

                payload = storage.Records[(int)(next - storage.Start)];
            }

            yield return new InputLogRecord(next, payload);
            next++;
        }
    }

    /// <summary>What the log keeps; shared by every instance created over it.</summary>
    internal sealed class Storage
    {
        public Lock Gate { get; } = new();

        public List<byte[]> Records { get; } = [];

        public long Start { get; set; }

        public long End => Start + Records.Count;

        public int Appends { get; set; }
    }
}
