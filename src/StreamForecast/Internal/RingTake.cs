using System.Runtime.CompilerServices;

namespace StreamForecast.Internal;

/// <summary>
/// The copy-out step shared by the engine's partition queue and a push subscriber's delivery buffer: both keep a ring of
/// items (head, count) under their own lock and hand the oldest ones to their single reader a batch at a time.
/// </summary>
internal static class RingTake
{
    /// <summary>
    /// Moves up to <c>batch.Length</c> of the oldest items of <paramref name="ring"/> into <paramref name="batch"/> from
    /// index 0, clearing their slots when they hold references (so taken items are not kept alive by the ring), and
    /// advances <paramref name="head"/> and lowers <paramref name="count"/>.
    /// </summary>
    /// <returns>How many items were moved (0 when the ring is empty).</returns>
    /// <remarks>O(items moved); no allocation. The caller holds the ring's lock.</remarks>
    public static int Take<T>(T[] ring, ref int head, ref int count, T[] batch)
    {
        int n = Math.Min(count, batch.Length);
        if (n == 0)
        {
            return 0;
        }

        int first = Math.Min(n, ring.Length - head);
        Array.Copy(ring, head, batch, 0, first);
        Array.Copy(ring, 0, batch, first, n - first);
        if (RuntimeHelpers.IsReferenceOrContainsReferences<T>())
        {
            Array.Clear(ring, head, first);
            Array.Clear(ring, 0, n - first);
        }

        head += n;
        if (head >= ring.Length)
        {
            head -= ring.Length;
        }

        count -= n;
        return n;
    }
}
