using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.InputLogs;

/// <summary>
/// What every <see cref="IInputLog"/> must do, run against each implementation (a class per implementation inherits
/// this one): consecutive positions that are never reused, records returned byte for byte, reads from any held
/// position, truncation that keeps later records, refusals that change nothing, concurrent appends, and contents that
/// outlive the instance that wrote them.
/// </summary>
public abstract class InputLogContractTests : IAsyncLifetime
{
    private readonly List<IInputLog> _opened = [];

    /// <summary>A new, empty log over fresh storage.</summary>
    protected abstract IInputLog CreateFresh();

    /// <summary>A new instance over the storage of the log last made by <see cref="CreateFresh"/> (as after a restart).</summary>
    protected abstract IInputLog Reopen();

    public Task InitializeAsync() => Task.CompletedTask;

    public virtual async Task DisposeAsync()
    {
        foreach (IInputLog log in _opened)
        {
            await log.DisposeAsync();
        }
    }

    [Fact]
    public async Task GetRangeAsync_NewLog_StartsAndEndsAtZero()
    {
        IInputLog log = Fresh();

        Assert.Equal(new InputLogRange(0, 0), await log.GetRangeAsync());
        Assert.Empty(await ReadAllAsync(log, 0));
    }

    [Fact]
    public async Task AppendAsync_TwoBatches_GetsConsecutivePositionsFromZero()
    {
        IInputLog log = Fresh();

        long first = await log.AppendAsync(Records("a", "b", "c"));
        long second = await log.AppendAsync(Records("d"));

        Assert.Equal(0, first);
        Assert.Equal(3, second);
        Assert.Equal(new InputLogRange(0, 4), await log.GetRangeAsync());
    }

    [Fact]
    public async Task ReadAsync_FromZero_ReturnsEveryRecordByteForByteWithItsPosition()
    {
        IInputLog log = Fresh();
        byte[][] payloads = [[0], [0, 0, 0], [255, 0, 1, 2], [.. Enumerable.Range(0, 5000).Select(i => (byte)(i * 7))], [42]];
        await log.AppendAsync([payloads[0], payloads[1]]);
        await log.AppendAsync([payloads[2], payloads[3], payloads[4]]);

        List<InputLogRecord> read = await ReadAllAsync(log, 0);

        Assert.Equal([0L, 1, 2, 3, 4], read.Select(r => r.Position));
        for (int i = 0; i < payloads.Length; i++)
        {
            Assert.Equal(payloads[i], read[i].Payload.ToArray());
        }
    }

    [Fact]
    public async Task ReadAsync_FromInsideABatch_StartsAtThatPosition()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a", "b", "c"));
        await log.AppendAsync(Records("d", "e"));

        List<InputLogRecord> read = await ReadAllAsync(log, 1);

        Assert.Equal(["b", "c", "d", "e"], read.Select(Text));
        Assert.Equal([1L, 2, 3, 4], read.Select(r => r.Position));
    }

    [Fact]
    public async Task ReadAsync_FromTheEnd_YieldsNothing()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a", "b"));

        Assert.Empty(await ReadAllAsync(log, 2));
    }

    [Fact]
    public async Task ReadAsync_AfterTheEnd_ThrowsOutOfRange()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a"));

        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => ReadAllAsync(log, 2));
    }

    [Fact]
    public async Task ReadAsync_NegativePosition_ThrowsOutOfRange()
    {
        IInputLog log = Fresh();

        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => ReadAllAsync(log, -1));
    }

    [Fact]
    public async Task ReadAsync_ManyAppends_ReadsThemAllInOrder()
    {
        IInputLog log = Fresh();
        for (int i = 0; i < 300; i++)
        {
            await log.AppendAsync(i % 3 == 0 ? Records($"{i}-x", $"{i}-y") : Records($"{i}-x"));
        }

        List<InputLogRecord> read = await ReadAllAsync(log, 0);

        Assert.Equal(400, read.Count);
        Assert.Equal(Enumerable.Range(0, 400).Select(i => (long)i), read.Select(r => r.Position));
        Assert.Equal("0-x", Text(read[0]));
        Assert.Equal("0-y", Text(read[1]));
        Assert.Equal("299-x", Text(read[^1]));
    }

    [Fact]
    public async Task TruncateAsync_InsideABatch_KeepsLaterRecordsAndMovesTheStart()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a", "b", "c"));
        await log.AppendAsync(Records("d", "e"));

        await log.TruncateAsync(2);

        Assert.Equal(new InputLogRange(2, 5), await log.GetRangeAsync());
        Assert.Equal(["c", "d", "e"], (await ReadAllAsync(log, 2)).Select(Text));
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => ReadAllAsync(log, 1));
    }

    [Fact]
    public async Task TruncateAsync_EverythingThenAppend_NeverReusesAPosition()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a", "b"));

        await log.TruncateAsync(2);
        long next = await log.AppendAsync(Records("c"));

        Assert.Equal(2, next);
        Assert.Equal(new InputLogRange(2, 3), await log.GetRangeAsync());
        Assert.Equal(["c"], (await ReadAllAsync(log, 2)).Select(Text));
    }

    [Fact]
    public async Task TruncateAsync_AtOrBeforeTheStart_ChangesNothing()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a", "b", "c"));
        await log.TruncateAsync(2);

        await log.TruncateAsync(1);
        await log.TruncateAsync(2);

        Assert.Equal(new InputLogRange(2, 3), await log.GetRangeAsync());
    }

    [Fact]
    public async Task TruncateAsync_BeyondTheEnd_ThrowsAndChangesNothing()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a"));

        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => log.TruncateAsync(2).AsTask());

        Assert.Equal(new InputLogRange(0, 1), await log.GetRangeAsync());
    }

    [Fact]
    public async Task AppendAsync_EmptyBatch_ThrowsAndAppendsNothing()
    {
        IInputLog log = Fresh();

        await Assert.ThrowsAsync<ArgumentException>(() => log.AppendAsync([]).AsTask());

        Assert.Equal(new InputLogRange(0, 0), await log.GetRangeAsync());
    }

    [Fact]
    public async Task AppendAsync_BatchWithAnEmptyRecord_ThrowsAndAppendsNoneOfIt()
    {
        IInputLog log = Fresh();

        await Assert.ThrowsAsync<ArgumentException>(() => log.AppendAsync([new byte[] { 1 }, Array.Empty<byte>()]).AsTask());

        Assert.Equal(new InputLogRange(0, 0), await log.GetRangeAsync());
    }

    [Fact]
    public async Task AppendAsync_AlreadyCancelled_AppendsNothing()
    {
        IInputLog log = Fresh();
        using var cancelled = new CancellationTokenSource();
        await cancelled.CancelAsync();

        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => log.AppendAsync(Records("a"), cancelled.Token).AsTask());

        Assert.Equal(new InputLogRange(0, 0), await log.GetRangeAsync());
    }

    [Fact]
    public async Task AppendAsync_ManyConcurrentCallers_EachBatchIsContiguousAndEveryPositionHeldOnce()
    {
        IInputLog log = Fresh();
        const int callers = 40;

        long[] firsts = await Task.WhenAll(Enumerable.Range(0, callers).Select(c => Task.Run(async () =>
            await log.AppendAsync(Records(Enumerable.Range(0, 1 + (c % 3)).Select(i => $"{c}/{i}").ToArray())))));

        List<InputLogRecord> read = await ReadAllAsync(log, 0);
        int total = Enumerable.Range(0, callers).Sum(c => 1 + (c % 3));
        Assert.Equal(Enumerable.Range(0, total).Select(i => (long)i), read.Select(r => r.Position));
        for (int c = 0; c < callers; c++)
        {
            for (int i = 0; i <= c % 3; i++)
            {
                Assert.Equal($"{c}/{i}", Text(read[(int)firsts[c] + i]));
            }
        }
    }

    [Fact]
    public async Task Reopen_AfterDispose_HoldsEveryAppendedRecordAndTheStart()
    {
        IInputLog log = Fresh();
        await log.AppendAsync(Records("a", "b"));
        await log.AppendAsync(Records("c"));
        await log.TruncateAsync(1);
        await log.DisposeAsync();

        IInputLog again = Track(Reopen());

        Assert.Equal(new InputLogRange(1, 3), await again.GetRangeAsync());
        Assert.Equal(["b", "c"], (await ReadAllAsync(again, 1)).Select(Text));
        Assert.Equal(3, await again.AppendAsync(Records("d")));
    }

    [Fact]
    public async Task AppendAsync_AfterDispose_ThrowsObjectDisposed()
    {
        IInputLog log = Fresh();
        await log.DisposeAsync();

        await Assert.ThrowsAsync<ObjectDisposedException>(() => log.AppendAsync(Records("a")).AsTask());
    }

    protected static ReadOnlyMemory<byte>[] Records(params string[] texts) =>
        [.. texts.Select(t => (ReadOnlyMemory<byte>)System.Text.Encoding.UTF8.GetBytes(t))];

    protected static string Text(InputLogRecord record) => System.Text.Encoding.UTF8.GetString(record.Payload.Span);

    protected static async Task<List<InputLogRecord>> ReadAllAsync(IInputLog log, long from)
    {
        var list = new List<InputLogRecord>();
        await foreach (InputLogRecord r in log.ReadAsync(from))
        {
            list.Add(r);
        }

        return list;
    }

    protected IInputLog Fresh() => Track(CreateFresh());

    private IInputLog Track(IInputLog log)
    {
        _opened.Add(log);
        return log;
    }
}

/// <summary>The contract on the in-memory log the hosting tests use.</summary>
public sealed class MemoryInputLogTests : InputLogContractTests
{
    private MemoryInputLog.Storage? _storage;

    protected override IInputLog CreateFresh()
    {
        _storage = new MemoryInputLog.Storage();
        return new MemoryInputLog(_storage);
    }

    protected override IInputLog Reopen() => new MemoryInputLog(_storage!);
}
