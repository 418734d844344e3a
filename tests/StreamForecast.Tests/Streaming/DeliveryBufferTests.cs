using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class DeliveryBufferTests
{
    [Fact]
    public void Write_RingWrapsWhileGrowingToCapacity_KeepsOrderThenDropsOldest()
    {
        // Capacity 200 grows from 64 through 128 to 200; taking in batches of 50 between writes makes the ring wrap.
        var buffer = new DeliveryBuffer<int>(200);
        var taken = new List<int>();
        var dropped = new List<int>();
        int[] batch = new int[50];
        int next = 0;
        for (int round = 0; round < 20; round++)
        {
            for (int i = 0; i < 37 + (round * 11); i++)
            {
                if (buffer.Write(next++, out int d))
                {
                    dropped.Add(d);
                }
            }

            int n = buffer.Take(batch);
            taken.AddRange(batch[..n]);
        }

        int rest;
        while ((rest = buffer.Take(batch)) > 0)
        {
            taken.AddRange(batch[..rest]);
        }

        // Every item is either taken or dropped, exactly once; each list keeps writing order; drops are the oldest
        // waiting items, so every dropped item is older than every item taken after it was dropped.
        Assert.Equal(Enumerable.Range(0, next), taken.Concat(dropped).Order());
        Assert.Equal(taken.Order(), taken);
        Assert.Equal(dropped.Order(), dropped);
        Assert.NotEmpty(dropped);
        Assert.True(buffer.Count == 0);
    }

    [Fact]
    public void Pending_BatchTakenAndNotEnded_CountsItsItemsUntilEndBatch()
    {
        // The reader's batch moves from Count to Pending's in-flight part in one step (the alert-forwarder sample's
        // "waiting" figure once read 0 while a stuck subscriber's first item sat between the ring and the reader).
        var buffer = new DeliveryBuffer<int>(16);
        for (int i = 0; i < 5; i++)
        {
            buffer.Write(i, out _);
        }

        int[] batch = new int[3];
        Assert.Equal(5, buffer.Pending);
        Assert.Equal(3, buffer.Take(batch));
        Assert.Equal(2, buffer.Count);
        Assert.Equal(5, buffer.Pending); // the taken batch is still pending
        buffer.Write(5, out _);
        Assert.Equal(6, buffer.Pending);
        buffer.EndBatch();
        Assert.Equal(3, buffer.Pending);
        Assert.Equal(3, buffer.Take(batch));
        buffer.EndBatch();
        Assert.Equal(0, buffer.Take(batch));
        Assert.Equal(0, buffer.Pending);
    }

    private static readonly TimeSpan s_guard = TimeSpan.FromSeconds(30);

    [Fact]
    public async Task WaitToRead_EmptyThenWritten_ReturnsTrueAndAfterCloseDrainsThenFalse()
    {
        var buffer = new DeliveryBuffer<int>(10);
        Task<bool> wait = Task.Run(buffer.WaitToRead);
        await AsleepAsync(buffer);
        buffer.Write(1, out _);
        Assert.True(await wait.WaitAsync(s_guard));

        buffer.Write(2, out _);
        buffer.Close(discard: false);
        buffer.Write(3, out _); // ignored after close
        Assert.True(buffer.WaitToRead());
        int[] batch = new int[10];
        Assert.Equal(2, buffer.Take(batch));
        Assert.Equal([1, 2], batch[..2]);
        Assert.False(buffer.WaitToRead());
    }

    [Fact]
    public async Task Close_DiscardWhileReaderWaits_WakesReaderWithFalse()
    {
        var buffer = new DeliveryBuffer<string>(4);
        Task<bool> wait = Task.Run(buffer.WaitToRead);
        await AsleepAsync(buffer);
        buffer.Close(discard: true);
        Assert.False(await wait.WaitAsync(s_guard));

        var other = new DeliveryBuffer<string>(4);
        other.Write("a", out _);
        other.Close(discard: true);
        Assert.Equal(0, other.Count);
        Assert.False(other.WaitToRead());
    }

    [Fact]
    public async Task Write_DeferredWake_ReaderSleepsUntilWakeIfPendingOrARunOfItems()
    {
        var buffer = new DeliveryBuffer<int>(1000);
        int[] batch = new int[256];

        // Fewer deferred items than the run that wakes by itself: the reader sleeps until WakeIfPending.
        Task<bool> wait = Task.Run(buffer.WaitToRead);
        await AsleepAsync(buffer);
        for (int i = 0; i < buffer.WakeAt - 1; i++)
        {
            buffer.Write(i, out _, deferWake: true);
        }

        Assert.True(buffer.IsReaderWaiting); // only a wake-up clears it
        buffer.WakeIfPending();
        Assert.True(await wait.WaitAsync(s_guard));
        Assert.Equal(buffer.WakeAt - 1, buffer.Take(batch));

        // A full run of deferred items wakes the reader without WakeIfPending; WakeIfPending on an empty ring does nothing.
        wait = Task.Run(buffer.WaitToRead);
        await AsleepAsync(buffer);
        buffer.WakeIfPending();
        Assert.True(buffer.IsReaderWaiting);
        for (int i = 0; i < buffer.WakeAt; i++)
        {
            buffer.Write(i, out _, deferWake: true);
        }

        Assert.True(await wait.WaitAsync(s_guard));
        Assert.Equal(buffer.WakeAt, buffer.Take(batch));
    }

    [Fact]
    public async Task Write_DeferredWakeInABufferSmallerThanARun_WakesTheReaderAtAQuarterOfItsCapacity()
    {
        // A 40-item buffer could never hold a full run of deferred items: its reader must be woken well before it fills
        // (at 10 items), or a writer that never runs out of work would overflow it while the reader sleeps.
        var buffer = new DeliveryBuffer<int>(40);
        Assert.Equal(10, buffer.WakeAt);
        Assert.Equal(1, new DeliveryBuffer<int>(3).WakeAt);
        Assert.Equal(DeliveryBuffer<int>.DeferredWakeItems, new DeliveryBuffer<int>(10_000).WakeAt);
        Task<bool> wait = Task.Run(buffer.WaitToRead);
        await AsleepAsync(buffer);
        for (int i = 0; i < 9; i++)
        {
            buffer.Write(i, out _, deferWake: true);
        }

        Assert.True(buffer.IsReaderWaiting);
        buffer.Write(9, out _, deferWake: true);
        Assert.True(await wait.WaitAsync(s_guard));
        Assert.Equal(10, buffer.Take(new int[64]));
    }

    [Fact]
    public async Task WaitForRoomAsync_Full_CompletesOnceTheReaderHasTakenEnoughAndOnClose()
    {
        var buffer = new DeliveryBuffer<int>(100);
        Assert.True(buffer.WaitForRoomAsync(100).IsCompleted); // empty: room already, no wait
        for (int i = 0; i < 100; i++)
        {
            buffer.Write(i, out _);
        }

        Task room = buffer.WaitForRoomAsync(30);
        Assert.False(room.IsCompleted);
        int[] batch = new int[20];
        Assert.Equal(20, buffer.Take(batch)); // 20 free: not yet
        Assert.False(room.IsCompleted);
        Assert.Equal(20, buffer.Take(batch)); // 40 free
        await room.WaitAsync(s_guard);

        // More room than the capacity is capped at the capacity; closing releases a waiter.
        Task all = buffer.WaitForRoomAsync(1_000);
        Assert.False(all.IsCompleted);
        buffer.Close(discard: false);
        await all.WaitAsync(s_guard);
        Assert.True(buffer.WaitForRoomAsync(1).IsCompleted);
    }

    private static async Task AsleepAsync<T>(DeliveryBuffer<T> buffer)
    {
        // Waits (bounded by the guard) until the reader has found the ring empty and gone to sleep.
        using var guard = new CancellationTokenSource(s_guard);
        while (!buffer.IsReaderWaiting)
        {
            await Task.Delay(1, guard.Token);
        }
    }
}
