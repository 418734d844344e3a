namespace StreamForecast.Tests.Infrastructure;

/// <summary>Allocation checks that are robust to the runtime's own one-off work (tiered JIT promotion, caches).</summary>
public static class Allocations
{
    /// <summary>
    /// Runs <paramref name="run"/> once to warm up, then up to three more times, measuring the bytes the current thread
    /// allocates in each; passes as soon as one run allocates nothing. Code that allocates per call allocates in every
    /// run, so it still fails; the retries only absorb one-off runtime work such as tiered-compilation promotion.
    /// </summary>
    public static void AssertNone(Func<double> run)
    {
        double sink = run();
        long smallest = long.MaxValue;
        for (int attempt = 0; attempt < 3 && smallest != 0; attempt++)
        {
            long before = GC.GetAllocatedBytesForCurrentThread();
            sink += run();
            smallest = Math.Min(smallest, GC.GetAllocatedBytesForCurrentThread() - before);
        }

        Assert.False(double.IsNaN(sink));
        Assert.Equal(0, smallest);
    }
}
