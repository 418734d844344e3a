namespace StreamForecast.Streaming;

/// <summary>
/// A durable, append-only log of input records for hosts whose input cannot be replayed from its source (HTTP posts,
/// MQTT without retained history): the host appends what it accepts, acknowledges only once the append is durable,
/// records the log position in each checkpoint, and after a restart replays the log from the checkpoint's position.
/// </summary>
/// <remarks>
/// <para><b>Positions.</b> Every record gets a position: 0 for the first record ever appended, then one more for each
/// record, in append order, never reused. <see cref="GetRangeAsync"/> tells which positions the log still holds:
/// records from <see cref="InputLogRange.Start"/> (everything before was truncated) up to, not including,
/// <see cref="InputLogRange.End"/> (the position the next record will get). A checkpoint stores the position of the
/// first record it does not account for, so replaying from it repeats nothing and skips nothing.</para>
/// <para><b>Records</b> are opaque bytes (1 byte or more); the host decides their format. A log returns each record
/// exactly as appended and must detect damaged records when reading rather than return them.</para>
/// <para><b>Durability.</b> When <see cref="AppendAsync"/> completes, the records survive a crash of the process (and,
/// for logs on disk, a power failure). A batch is appended all or nothing: after a crash either every record of it is
/// there or none is. Implementations may commit several concurrent appends together (group commit) as long as each
/// caller waits until its own records are durable.</para>
/// <para><b>Thread safety.</b> Implementations must allow concurrent calls of every member; positions follow the order
/// in which appends are committed.</para>
/// </remarks>
public interface IInputLog : IAsyncDisposable
{
    /// <summary>Appends records durably, as one unit, at consecutive positions.</summary>
    /// <param name="records">The records, in order; at least one, none empty. The bytes are copied or written before the task completes.</param>
    /// <param name="cancellationToken">Cancels the append only before its records are handed to the commit; once handed over, the append completes or fails regardless.</param>
    /// <returns>The position of the first record; the others follow it (the last is this plus the count, minus 1).</returns>
    /// <exception cref="ArgumentException"><paramref name="records"/> is empty, holds an empty record, or a record longer than the log allows.</exception>
    /// <exception cref="ArgumentNullException"><paramref name="records"/> is null.</exception>
    /// <exception cref="ObjectDisposedException">The log has been disposed.</exception>
    ValueTask<long> AppendAsync(IReadOnlyList<ReadOnlyMemory<byte>> records, CancellationToken cancellationToken = default);

    /// <summary>Reads the records at and after <paramref name="fromPosition"/>, in position order, up to the end at the time each chunk is read.</summary>
    /// <param name="fromPosition">The first position to read; between the log's <see cref="InputLogRange.Start"/> and <see cref="InputLogRange.End"/> (reading from the end yields nothing).</param>
    /// <param name="cancellationToken">Ends the enumeration.</param>
    /// <returns>The records with their positions, consecutive from <paramref name="fromPosition"/>.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="fromPosition"/> is before the log's start (those records were truncated) or after its end.</exception>
    /// <exception cref="InvalidDataException">A stored record is damaged, or records were truncated while being read.</exception>
    IAsyncEnumerable<InputLogRecord> ReadAsync(long fromPosition, CancellationToken cancellationToken = default);

    /// <summary>Deletes the records before <paramref name="beforePosition"/> (a checkpoint accounts for them); later records stay.</summary>
    /// <param name="beforePosition">The new start: between 0 and the log's <see cref="InputLogRange.End"/>. A position at or before the current start changes nothing.</param>
    /// <param name="cancellationToken">Cancels the truncation; the log then holds what it held before.</param>
    /// <returns>A task that completes once the new start is durable.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="beforePosition"/> is negative or after the log's end.</exception>
    ValueTask TruncateAsync(long beforePosition, CancellationToken cancellationToken = default);

    /// <summary>Reads which positions the log holds.</summary>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The start (first position held) and end (the next position to be given); both 0 for a new log.</returns>
    ValueTask<InputLogRange> GetRangeAsync(CancellationToken cancellationToken = default);
}
