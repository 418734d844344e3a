using System.Threading.Channels;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class PartitionQueueTests
{
    private static readonly TimeSpan s_guard = TimeSpan.FromSeconds(30);

    [Fact]
    public void TryWrite_RingWrapsWhileGrowing_KeepsOrderAndRefusesWhenFull()
    {
        // Capacity 150 grows from 64 through 128 to 150; taking in batches of 40 between writes makes the ring wrap.
        var queue = new PartitionQueue<int>(150);
        var taken = new List<int>();
        int[] batch = new int[40];
        int next = 0;
        int refused = 0;
        for (int round = 0; round < 15; round++)
        {
            for (int i = 0; i < 30 + (round * 9); i++)
            {
                if (queue.TryWrite(next))
                {
                    next++;
                }
                else
                {
                    refused++;
                    Assert.Equal(150, queue.Count);
                }
            }

            int n = queue.Take(batch);
            taken.AddRange(batch[..n]);
        }

        int rest;
        while ((rest = queue.Take(batch)) > 0)
        {
            taken.AddRange(batch[..rest]);
        }

        // First in, first out, nothing lost or repeated; the queue refused writes only while full.
        Assert.Equal(Enumerable.Range(0, next), taken);
        Assert.True(refused > 0);
        Assert.Equal(0, queue.Count);
    }

    [Fact]
    public async Task WriteAsync_Full_WaitsUntilTheQueueHasDrainedToHalf()
    {
        var queue = new PartitionQueue<int>(4);
        for (int i = 0; i < 4; i++)
        {
            Assert.True(queue.TryWrite(i));
        }

        ValueTask pending = queue.WriteAsync(4, CancellationToken.None);
        Assert.False(pending.IsCompleted);
        int[] one = new int[1];
        Assert.Equal(1, queue.Take(one)); // 3 left: more than half, the writer stays asleep
        await Task.Delay(20);
        Assert.False(pending.IsCompleted);
        Assert.Equal(1, queue.Take(one)); // 2 left: half, the writer goes on
        await pending.AsTask().WaitAsync(s_guard);

        int[] batch = new int[8];
        Assert.Equal(3, queue.Take(batch));
        Assert.Equal([2, 3, 4], batch[..3]);
    }

    [Fact]
    public async Task WriteAsync_CancelledWhileFull_ThrowsAndWritesNothing()
    {
        var queue = new PartitionQueue<int>(1);
        Assert.True(queue.TryWrite(1));
        using var cancel = new CancellationTokenSource();
        ValueTask pending = queue.WriteAsync(2, cancel.Token);
        Assert.False(pending.IsCompleted);
        await cancel.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(async () => await pending);
        int[] batch = new int[4];
        Assert.Equal(1, queue.Take(batch));
        Assert.Equal(1, batch[0]);
        Assert.Equal(0, queue.Count);
    }

    [Fact]
    public async Task Complete_WhileWriterWaits_WriterFailsAndReaderDrainsThenEnds()
    {
        var queue = new PartitionQueue<int>(2);
        Assert.True(queue.TryWrite(1));
        Assert.True(queue.TryWrite(2));
        ValueTask pending = queue.WriteAsync(3, CancellationToken.None);
        queue.Complete();
        await Assert.ThrowsAsync<ChannelClosedException>(async () => await pending.AsTask().WaitAsync(s_guard));
        Assert.False(queue.TryWrite(4));
        await Assert.ThrowsAsync<ChannelClosedException>(async () => await queue.WriteAsync(5, CancellationToken.None));

        Assert.True(await queue.WaitToReadAsync());
        int[] batch = new int[4];
        Assert.Equal(2, queue.Take(batch));
        Assert.Equal([1, 2], batch[..2]);
        Assert.False(await queue.WaitToReadAsync());
    }

    [Fact]
    public async Task WaitToReadAsync_Empty_CompletesOnWriteAndOnComplete()
    {
        var queue = new PartitionQueue<string>(8);
        ValueTask<bool> wait = queue.WaitToReadAsync();
        Assert.False(wait.IsCompleted);
        Assert.True(queue.TryWrite("a"));
        Assert.True(await wait.AsTask().WaitAsync(s_guard));
        string[] batch = new string[8];
        Assert.Equal(1, queue.Take(batch));

        // The same source is reused for the next wait; completing wakes it, and an empty completed queue ends the reader.
        wait = queue.WaitToReadAsync();
        Assert.False(wait.IsCompleted);
        queue.Complete();
        Assert.True(await wait.AsTask().WaitAsync(s_guard));
        Assert.Equal(0, queue.Take(batch));
        Assert.False(await queue.WaitToReadAsync());
    }

    [Fact]
    public async Task WriteAsync_ManyWritersOneReader_EveryItemOnceInEachWritersOrder()
    {
        const int writers = 4;
        const int each = 20_000;
        var queue = new PartitionQueue<(int Writer, int Index)>(64);
        var seen = new List<(int Writer, int Index)>();
        Task reader = Task.Run(async () =>
        {
            var batch = new (int, int)[16];
            while (await queue.WaitToReadAsync())
            {
                int n;
                while ((n = queue.Take(batch)) > 0)
                {
                    seen.AddRange(batch[..n]);
                }
            }
        });
        Task[] posting = Enumerable.Range(0, writers).Select(w => Task.Run(async () =>
        {
            for (int i = 0; i < each; i++)
            {
                if (!queue.TryWrite((w, i)))
                {
                    await queue.WriteAsync((w, i), CancellationToken.None);
                }
            }
        })).ToArray();
        await Task.WhenAll(posting).WaitAsync(s_guard);
        queue.Complete();
        await reader.WaitAsync(s_guard);

        Assert.Equal(writers * each, seen.Count);
        for (int w = 0; w < writers; w++)
        {
            Assert.Equal(Enumerable.Range(0, each), seen.Where(s => s.Writer == w).Select(s => s.Index));
        }
    }
}
