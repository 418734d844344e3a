using StreamForecast.Internal;

namespace StreamForecast.Tests.Internal;

/// <summary>
/// The error tracker's lag-m store. Checked against the plain history (the value m pushes back is history[count − m])
/// and against <see cref="RingWindow"/>, whose raw layout exported tracker states have always used.
/// </summary>
public sealed class LagWindowTests
{
    [Theory]
    [InlineData(1)] // the inline single value
    [InlineData(2)] // the array path
    [InlineData(7)]
    public void Lagged_AfterEveryPush_IsTheValueMPushesBack(int m)
    {
        var window = new LagWindow(m);
        var history = new List<double>();
        var rng = new Random(5);
        for (int count = 0; count < 40; count++)
        {
            if (count >= m)
            {
                Assert.Equal(history[count - m], window.Lagged(count));
            }

            double value = Math.Round(rng.NextDouble() * 100, 2);
            window.Push(value, count);
            history.Add(value);
        }
    }

    [Theory]
    [InlineData(1, 0)]
    [InlineData(1, 5)]
    [InlineData(3, 2)]
    [InlineData(3, 3)]
    [InlineData(3, 11)]
    public void CopyRawTo_AfterSamePushes_MatchesRingWindowLayout(int m, int pushes)
    {
        var lag = new LagWindow(m);
        var ring = new RingWindow(m);
        for (int i = 0; i < pushes; i++)
        {
            lag.Push(10 + i, i);
            ring.Push(10 + i);
        }

        var fromLag = new double[m];
        var fromRing = new double[m];
        lag.CopyRawTo(fromLag);
        ring.CopyRawTo(fromRing);
        Assert.Equal(fromRing, fromLag);
        Assert.Equal(m, lag.Length);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(4)]
    public void LoadRaw_ExportedMidStream_ContinuesLikeTheOriginal(int m)
    {
        var original = new LagWindow(m);
        for (int i = 0; i < 9; i++)
        {
            original.Push(i * 1.5, i);
        }

        var raw = new double[m];
        original.CopyRawTo(raw);
        var restored = new LagWindow(m);
        restored.LoadRaw(raw);
        for (int count = 9; count < 20; count++)
        {
            Assert.Equal(original.Lagged(count), restored.Lagged(count));
            original.Push(count * 2.5, count);
            restored.Push(count * 2.5, count);
        }
    }

    [Theory]
    [InlineData(1)]
    [InlineData(3)]
    public void Clear_AfterPushes_LeavesEveryRawSlotZero(int m)
    {
        var window = new LagWindow(m);
        for (int i = 0; i < 5; i++)
        {
            window.Push(i + 1, i);
        }

        window.Clear();
        var raw = new double[m];
        raw.AsSpan().Fill(double.NaN);
        window.CopyRawTo(raw);
        Assert.All(raw, v => Assert.Equal(0, v));
    }
}
