namespace StreamForecast.Orleans.Tests;

/// <summary>The compact window of applied call ids a bucket stores to recognise retries.</summary>
public sealed class CallIdWindowTests
{
    [Fact]
    public void Add_MoreIdsThanCapacity_ForgetsTheOldestOnly()
    {
        var window = new CallIdWindow(16);
        Guid[] ids = Enumerable.Range(0, 40).Select(_ => Guid.NewGuid()).ToArray();
        for (int i = 0; i < ids.Length; i++)
        {
            window.Add(ids[i], 100 + i);
        }

        Assert.Equal(16, window.Count);
        Assert.Equal(16 * CallIdWindow.RecordLength, window.Ring.Length);
        for (int i = 0; i < ids.Length; i++)
        {
            Assert.Equal(i >= 24, window.TryGet(ids[i], out long sequence));
            Assert.Equal(i >= 24 ? 100 + i : 0, sequence);
        }
    }

    [Theory]
    [InlineData(0)]
    [InlineData(5)]
    [InlineData(16)]
    [InlineData(17)]
    [InlineData(50)]
    public void Load_StoredForm_RemembersTheSameIdsWithTheirNumbers(int added)
    {
        var window = new CallIdWindow(20);
        Guid[] ids = Enumerable.Range(0, added).Select(_ => Guid.NewGuid()).ToArray();
        for (int i = 0; i < ids.Length; i++)
        {
            window.Add(ids[i], i + 1);
        }

        var loaded = new CallIdWindow(20);
        loaded.Load((byte[])window.Ring.Clone(), window.Count, window.Next);

        Assert.Equal(window.Count, loaded.Count);
        for (int i = 0; i < ids.Length; i++)
        {
            Assert.Equal(window.TryGet(ids[i], out long expected), loaded.TryGet(ids[i], out long actual));
            Assert.Equal(expected, actual);
        }
    }

    [Fact]
    public void Load_MoreIdsThanTheNewCapacity_KeepsTheNewest()
    {
        var window = new CallIdWindow(64);
        Guid[] ids = Enumerable.Range(0, 70).Select(_ => Guid.NewGuid()).ToArray();
        for (int i = 0; i < ids.Length; i++)
        {
            window.Add(ids[i], i);
        }

        var smaller = new CallIdWindow(16);
        smaller.Load(window.Ring, window.Count, window.Next);

        Assert.Equal(16, smaller.Count);
        for (int i = 0; i < ids.Length; i++)
        {
            Assert.Equal(i >= 54, smaller.Contains(ids[i]));
        }
    }

    [Theory]
    [InlineData(25, 1, 0)] // not a whole number of records
    [InlineData(48, 3, 0)] // more ids than records
    [InlineData(48, 1, 0)] // not full, but the next record is not after the last id
    [InlineData(48, 2, 3)] // wrapped, next outside the ring
    [InlineData(48, -1, 0)]
    public void Load_InconsistentStoredForm_ThrowsInvalidData(int length, int count, int next)
    {
        var window = new CallIdWindow(16);
        Assert.Throws<InvalidDataException>(() => window.Load(new byte[length], count, next));
        Assert.Equal(0, window.Count);
    }
}
