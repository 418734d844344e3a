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
    public async Task WaitToReadAsync_EmptyThenWritten_CompletesTrueAndAfterCloseDrainsThenFalse()
    {
        var buffer = new DeliveryBuffer<int>(10);
        ValueTask<bool> wait = buffer.WaitToReadAsync();
        Assert.False(wait.IsCompleted);
        buffer.Write(1, out _);
        Assert.True(await wait.AsTask().WaitAsync(TimeSpan.FromSeconds(30)));

        buffer.Write(2, out _);
        buffer.Close(discard: false);
        buffer.Write(3, out _); // ignored after close
        Assert.True(await buffer.WaitToReadAsync());
        int[] batch = new int[10];
        Assert.Equal(2, buffer.Take(batch));
        Assert.Equal([1, 2], batch[..2]);
        Assert.False(await buffer.WaitToReadAsync());
    }

    [Fact]
    public async Task Close_DiscardWhileReaderWaits_WakesReaderWithFalse()
    {
        var buffer = new DeliveryBuffer<string>(4);
        ValueTask<bool> wait = buffer.WaitToReadAsync();
        buffer.Close(discard: true);
        Assert.False(await wait.AsTask().WaitAsync(TimeSpan.FromSeconds(30)));

        var other = new DeliveryBuffer<string>(4);
        other.Write("a", out _);
        other.Close(discard: true);
        Assert.Equal(0, other.Count);
        Assert.False(await other.WaitToReadAsync());
    }

    [Fact]
    public async Task Write_DeferredWake_ReaderSleepsUntilWakeIfPendingOrARunOfItems()
    {
        var buffer = new DeliveryBuffer<int>(1000);
        int[] batch = new int[256];

        // Fewer deferred items than the run that wakes by itself: the reader sleeps until WakeIfPending.
        ValueTask<bool> wait = buffer.WaitToReadAsync();
        for (int i = 0; i < DeliveryBuffer<int>.DeferredWakeItems - 1; i++)
        {
            buffer.Write(i, out _, deferWake: true);
        }

        Assert.False(wait.IsCompleted);
        buffer.WakeIfPending();
        Assert.True(await wait.AsTask().WaitAsync(TimeSpan.FromSeconds(30)));
        Assert.Equal(DeliveryBuffer<int>.DeferredWakeItems - 1, buffer.Take(batch));

        // A full run of deferred items wakes the reader without WakeIfPending; WakeIfPending on an empty ring does nothing.
        wait = buffer.WaitToReadAsync();
        buffer.WakeIfPending();
        Assert.False(wait.IsCompleted);
        for (int i = 0; i < DeliveryBuffer<int>.DeferredWakeItems; i++)
        {
            buffer.Write(i, out _, deferWake: true);
        }

        Assert.True(await wait.AsTask().WaitAsync(TimeSpan.FromSeconds(30)));
        Assert.Equal(DeliveryBuffer<int>.DeferredWakeItems, buffer.Take(batch));
    }
}
