using System.Buffers.Binary;

namespace StreamForecast.Orleans;

/// <summary>
/// The ids of a bucket's most recent applied calls, each with the number it was applied as: what lets a bucket
/// recognise a retry. Kept in memory as a dictionary for look-ups and, for storage, as one byte array used as a ring
/// of fixed 24-byte records (the id's 16 bytes, then the number as 8 bytes little-endian), so a write stores the window
/// as one block of bytes instead of a list of objects, and adding an id changes one record in place.
/// </summary>
/// <remarks>Single writer (the bucket's turn). Adding is O(1) amortised; the ring grows by doubling up to the capacity.</remarks>
internal sealed class CallIdWindow
{
    /// <summary>Bytes per stored record.</summary>
    public const int RecordLength = 24;

    private readonly Dictionary<Guid, long> _sequences = [];
    private readonly int _capacity;
    private byte[] _ring = [];
    private int _count;
    private int _next;

    /// <summary>Creates an empty window.</summary>
    /// <param name="capacity">How many ids are kept (<see cref="ForecastClusterOptions.RememberedCommands"/>).</param>
    public CallIdWindow(int capacity) => _capacity = capacity;

    /// <summary>How many ids are kept now.</summary>
    public int Count => _count;

    /// <summary>The stored form: the ring's bytes (only the first <see cref="Count"/> records, from <see cref="Next"/> on when full, hold ids).</summary>
    public byte[] Ring => _ring;

    /// <summary>Where the next record goes: the oldest record once the ring is full.</summary>
    public int Next => _next;

    /// <summary>The number a call id was applied as, if it is still remembered.</summary>
    public bool TryGet(Guid id, out long sequence) => _sequences.TryGetValue(id, out sequence);

    /// <summary>Whether a call id is remembered.</summary>
    public bool Contains(Guid id) => _sequences.ContainsKey(id);

    /// <summary>Remembers an applied call, forgetting the oldest one when the window is full.</summary>
    public void Add(Guid id, long sequence)
    {
        if (_count == _capacity)
        {
            _sequences.Remove(ReadId(_next));
        }
        else
        {
            if (_count * RecordLength == _ring.Length)
            {
                Array.Resize(ref _ring, Math.Min(Math.Max(16, _count * 2), _capacity) * RecordLength);
            }

            _count++;
        }

        Span<byte> record = _ring.AsSpan(_next * RecordLength, RecordLength);
        bool written = id.TryWriteBytes(record[..16]);
        System.Diagnostics.Debug.Assert(written, "A Guid is 16 bytes.");
        BinaryPrimitives.WriteInt64LittleEndian(record[16..], sequence);
        _sequences[id] = sequence;
        _next = (_next + 1) % _capacity;
    }

    /// <summary>Loads the stored form, oldest first; when it holds more ids than the capacity, the newest are kept.</summary>
    /// <param name="ring">The stored ring.</param>
    /// <param name="count">How many records hold ids.</param>
    /// <param name="next">The stored <see cref="Next"/>.</param>
    /// <exception cref="InvalidDataException">The stored form is inconsistent.</exception>
    public void Load(byte[] ring, int count, int next)
    {
        // Not yet wrapped: records 0 .. count - 1, oldest first, and next == count. Wrapped: every record holds an id and
        // the oldest is at next.
        int slots = ring.Length / RecordLength;
        bool wrapped = next != count;
        if (ring.Length % RecordLength != 0 || count < 0 || count > slots || next < 0 || (wrapped && (count != slots || next >= slots)))
        {
            throw new InvalidDataException($"The stored call ids are damaged ({ring.Length} bytes, {count} ids, next {next}).");
        }

        int oldest = wrapped ? next : 0;
        for (int i = 0; i < count; i++)
        {
            ReadOnlySpan<byte> record = ring.AsSpan(((oldest + i) % slots) * RecordLength, RecordLength);
            Add(new Guid(record[..16]), BinaryPrimitives.ReadInt64LittleEndian(record[16..]));
        }
    }

    private Guid ReadId(int slot) => new(_ring.AsSpan(slot * RecordLength, 16));
}
