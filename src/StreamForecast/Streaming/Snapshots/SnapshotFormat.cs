using System.Buffers.Binary;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using System.Security.Cryptography;

namespace StreamForecast.Streaming;

/// <summary>
/// The versioned binary envelope around an engine snapshot: a header, the input position the snapshot was taken at,
/// opaque payload sections, and a SHA-256 checksum. Reading validates everything before returning anything, so a
/// corrupted or truncated snapshot is rejected whole and never half-loaded.
/// </summary>
/// <remarks>
/// <para><b>Layout, version 2</b> (all integers little-endian):</para>
/// <code>
/// offset      size  field
/// 0           4     magic, ASCII "SFSN"
/// 4           2     format version (ushort), 2
/// 6           8     total length in bytes, checksum included (long)
/// 14          8     input position (long, ≥ 0)
/// 22          4     section count n (int, ≥ 0)
/// 26          4·n   the length of each section (int, ≥ 0)
/// 26+4n       …     the sections' bytes, back to back
/// total−32    32    SHA-256 of every byte before it
/// </code>
/// <para><b>Versions.</b> 2: the current one. The envelope and the payload layouts are those of version 1, but the
/// payload's meaning changed: the lagged model of a series' restatement window keeps the last actual its model took
/// (version 1 could keep one the model refused), and restoring checks that every series is a state the engine can reach.
/// Version 3: version 2 plus one last section, the known events declared at run time and the event lift per series
/// (<see cref="SnapshotEvents"/>); written only when an engine holds such state, so an engine without known events keeps
/// writing version 2, byte for byte. Both are read. Version 1 snapshots are refused with a message naming both versions; no conversion is offered before the first
/// release (rebuild the state by replaying the input).</para>
/// <para><b>Reading order.</b> Magic, then version, then the declared length against the caller's limit, then the
/// bytes themselves (a stream that ends early is reported as truncated), then the checksum, then the section table.
/// Memory grows with the bytes actually read, never with a declared length alone.</para>
/// <para><b>Thread safety.</b> Stateless; every method is thread-safe for distinct streams.</para>
/// </remarks>
internal static partial class SnapshotFormat
{
    /// <summary>The format version this library writes (and the only one it reads).</summary>
    public const ushort CurrentVersion = 2;

    /// <summary>The format version written when the engine holds known-event state: <see cref="CurrentVersion"/> plus the event section.</summary>
    public const ushort EventsVersion = 3;

    /// <summary>The length of the fixed header, before the section table.</summary>
    public const int HeaderLength = 26;

    /// <summary>The length of the trailing SHA-256 checksum.</summary>
    public const int ChecksumLength = SHA256.HashSizeInBytes;

    /// <summary>The smallest possible snapshot: a header with no sections and the checksum.</summary>
    public const int MinLength = HeaderLength + ChecksumLength;

    /// <summary>The default limit on a snapshot's total length when reading: 1 GiB.</summary>
    public const long DefaultMaxLength = 1L << 30;

    private const int MagicOffset = 0;
    private const int VersionOffset = 4;
    private const int LengthOffset = 6;
    private const int PositionOffset = 14;
    private const int CountOffset = 22;
    private const int InitialReadBuffer = 1 << 16;

    /// <summary>The four magic bytes, ASCII "SFSN".</summary>
    public static ReadOnlySpan<byte> Magic => "SFSN"u8;

    /// <summary>The largest snapshot this implementation can hold in memory (<see cref="Array.MaxLength"/>).</summary>
    public static long MaxSupportedLength => Array.MaxLength;

    /// <summary>The total length of the snapshot <see cref="Write"/> produces for these sections.</summary>
    /// <param name="sections">The payload sections.</param>
    /// <returns>The length in bytes, checksum included.</returns>
    public static long GetLength(IReadOnlyList<ReadOnlyMemory<byte>> sections)
    {
        ArgumentNullException.ThrowIfNull(sections);
        long total = MinLength + (4L * sections.Count);
        for (int i = 0; i < sections.Count; i++)
        {
            total += sections[i].Length;
        }

        return total;
    }

    /// <summary>Writes a snapshot envelope.</summary>
    /// <param name="destination">A writable stream; the snapshot is written at its current position.</param>
    /// <param name="inputPosition">The position in the input up to which the snapshot accounts for everything, ≥ 0.</param>
    /// <param name="sections">The opaque payload sections, in the order the reader expects them.</param>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <exception cref="ArgumentException">The snapshot would be longer than <see cref="MaxSupportedLength"/>.</exception>
    /// <remarks>O(total length): one pass that writes and hashes. Allocates the section table once.</remarks>
    /// <param name="version">The format version to stamp: <see cref="CurrentVersion"/> (default) or <see cref="EventsVersion"/>.</param>
    public static void Write(Stream destination, long inputPosition, IReadOnlyList<ReadOnlyMemory<byte>> sections, ushort version = CurrentVersion)
    {
        ArgumentNullException.ThrowIfNull(destination);
        byte[] prefix = BuildPrefix(inputPosition, sections, version);
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        hash.AppendData(prefix);
        destination.Write(prefix);
        for (int i = 0; i < sections.Count; i++)
        {
            ReadOnlySpan<byte> section = sections[i].Span;
            hash.AppendData(section);
            destination.Write(section);
        }

        Span<byte> checksum = stackalloc byte[ChecksumLength];
        hash.GetHashAndReset(checksum);
        destination.Write(checksum);
    }

    /// <summary>Writes a snapshot envelope asynchronously; see <see cref="Write"/>.</summary>
    /// <param name="destination">A writable stream.</param>
    /// <param name="inputPosition">The input position, ≥ 0.</param>
    /// <param name="sections">The payload sections.</param>
    /// <param name="cancellationToken">Cancels the writes; a cancelled write leaves a partial snapshot behind.</param>
    /// <returns>A task that completes when everything has been written (not flushed).</returns>
    /// <exception cref="ArgumentNullException">An argument is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="inputPosition"/> is negative.</exception>
    /// <exception cref="ArgumentException">The snapshot would be longer than <see cref="MaxSupportedLength"/>.</exception>
    /// <param name="version">The format version to stamp: <see cref="CurrentVersion"/> (default) or <see cref="EventsVersion"/>.</param>
    public static async ValueTask WriteAsync(Stream destination, long inputPosition, IReadOnlyList<ReadOnlyMemory<byte>> sections, ushort version = CurrentVersion, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(destination);
        byte[] prefix = BuildPrefix(inputPosition, sections, version);
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        hash.AppendData(prefix);
        await destination.WriteAsync(prefix, cancellationToken).ConfigureAwait(false);
        for (int i = 0; i < sections.Count; i++)
        {
            ReadOnlyMemory<byte> section = sections[i];
            hash.AppendData(section.Span);
            await destination.WriteAsync(section, cancellationToken).ConfigureAwait(false);
        }

        byte[] checksum = hash.GetHashAndReset();
        await destination.WriteAsync(checksum, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>Reads and validates one snapshot from a stream, leaving the stream just after it.</summary>
    /// <param name="source">A readable stream positioned at the start of a snapshot.</param>
    /// <param name="maxLength">The largest total length accepted, from <see cref="MinLength"/> to <see cref="MaxSupportedLength"/>; default 1 GiB.</param>
    /// <returns>The validated snapshot; its sections are slices of one buffer.</returns>
    /// <exception cref="InvalidDataException">
    /// The bytes are not a valid snapshot: wrong magic, unsupported version, a declared length out of range, a stream
    /// that ends early, a checksum mismatch, or an inconsistent section table. The message says which.
    /// </exception>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="maxLength"/> is out of range.</exception>
    /// <exception cref="IOException">The stream failed.</exception>
    public static SnapshotContent Read(Stream source, long maxLength = DefaultMaxLength)
    {
        if (!TryRead(source, out SnapshotContent? content, out string? problem, maxLength))
        {
            throw new InvalidDataException(problem);
        }

        return content;
    }

    /// <summary>Reads and validates one snapshot from a stream; see <see cref="Read(Stream, long)"/>.</summary>
    /// <param name="source">A readable stream positioned at the start of a snapshot.</param>
    /// <param name="content">The snapshot when the result is <see langword="true"/>.</param>
    /// <param name="problem">What was wrong when the result is <see langword="false"/>.</param>
    /// <param name="maxLength">The largest total length accepted; default 1 GiB.</param>
    /// <returns>Whether the snapshot is valid.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="maxLength"/> is out of range.</exception>
    /// <exception cref="IOException">The stream failed.</exception>
    public static bool TryRead(Stream source, [NotNullWhen(true)] out SnapshotContent? content, [NotNullWhen(false)] out string? problem, long maxLength = DefaultMaxLength)
    {
        ArgumentNullException.ThrowIfNull(source);
        CheckMaxLength(maxLength);
        content = null;

        Span<byte> header = stackalloc byte[HeaderLength];
        int got = ReadUpTo(source, header);
        problem = CheckHeader(header[..got], maxLength, out long total);
        if (problem is not null)
        {
            return false;
        }

        if (!TryReadRest(source, header, total, out byte[]? buffer, out problem))
        {
            return false;
        }

        return TryValidate(buffer, out content, out problem);
    }

    /// <summary>Validates a snapshot held in memory, which must be exactly one snapshot with nothing after it.</summary>
    /// <param name="snapshot">The bytes.</param>
    /// <param name="content">The snapshot when the result is <see langword="true"/>; its sections are slices of <paramref name="snapshot"/>.</param>
    /// <param name="problem">What was wrong when the result is <see langword="false"/>.</param>
    /// <param name="maxLength">The largest total length accepted; default 1 GiB.</param>
    /// <returns>Whether the bytes are one valid snapshot.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="maxLength"/> is out of range.</exception>
    public static bool TryParse(ReadOnlyMemory<byte> snapshot, [NotNullWhen(true)] out SnapshotContent? content, [NotNullWhen(false)] out string? problem, long maxLength = DefaultMaxLength)
    {
        CheckMaxLength(maxLength);
        content = null;
        ReadOnlySpan<byte> span = snapshot.Span;
        problem = CheckHeader(span[..Math.Min(span.Length, HeaderLength)], maxLength, out long total);
        if (problem is not null)
        {
            return false;
        }

        if (span.Length < total)
        {
            problem = Invariant($"The snapshot is truncated: its header declares {total} bytes but only {span.Length} are present.");
            return false;
        }

        if (span.Length > total)
        {
            problem = Invariant($"The data holds {span.Length} bytes but the snapshot declares {total}; {span.Length - total} unexpected bytes follow it.");
            return false;
        }

        return TryValidate(snapshot, out content, out problem);
    }

    private static byte[] BuildPrefix(long inputPosition, IReadOnlyList<ReadOnlyMemory<byte>> sections, ushort version)
    {
        if (version is not (CurrentVersion or EventsVersion))
        {
            throw new ArgumentOutOfRangeException(nameof(version), version, "Only format versions 2 and 3 are written.");
        }

        ArgumentNullException.ThrowIfNull(sections);
        ArgumentOutOfRangeException.ThrowIfNegative(inputPosition);
        long total = GetLength(sections);
        if (total > MaxSupportedLength)
        {
            throw new ArgumentException(Invariant($"The snapshot would be {total} bytes long; at most {MaxSupportedLength} bytes are supported."), nameof(sections));
        }

        byte[] prefix = new byte[HeaderLength + (4 * sections.Count)];
        Magic.CopyTo(prefix.AsSpan(MagicOffset));
        BinaryPrimitives.WriteUInt16LittleEndian(prefix.AsSpan(VersionOffset), version);
        BinaryPrimitives.WriteInt64LittleEndian(prefix.AsSpan(LengthOffset), total);
        BinaryPrimitives.WriteInt64LittleEndian(prefix.AsSpan(PositionOffset), inputPosition);
        BinaryPrimitives.WriteInt32LittleEndian(prefix.AsSpan(CountOffset), sections.Count);
        for (int i = 0; i < sections.Count; i++)
        {
            BinaryPrimitives.WriteInt32LittleEndian(prefix.AsSpan(HeaderLength + (4 * i)), sections[i].Length);
        }

        return prefix;
    }

    /// <summary>Checks magic, version and declared length on as much of the header as is present.</summary>
    private static string? CheckHeader(ReadOnlySpan<byte> header, long maxLength, out long total)
    {
        total = 0;
        if (header.IsEmpty)
        {
            return "The snapshot is empty (no bytes at all).";
        }

        int magicBytes = Math.Min(header.Length, Magic.Length);
        if (!header[..magicBytes].SequenceEqual(Magic[..magicBytes]))
        {
            return Invariant($"This is not a StreamForecast snapshot: it starts with bytes {Convert.ToHexString(header[..magicBytes])}, expected {Convert.ToHexString(Magic)} (ASCII \"SFSN\").");
        }

        if (header.Length < HeaderLength)
        {
            return Invariant($"The snapshot is truncated: it ends after {header.Length} bytes, inside the {HeaderLength}-byte header.");
        }

        ushort version = BinaryPrimitives.ReadUInt16LittleEndian(header[VersionOffset..]);
        if (version is not (CurrentVersion or EventsVersion))
        {
            return Invariant($"The snapshot has format version {version}, which this library does not support; it reads versions {CurrentVersion} and {EventsVersion} only (earlier versions are not converted: rebuild the state by replaying the input).");
        }

        total = BinaryPrimitives.ReadInt64LittleEndian(header[LengthOffset..]);
        if (total < MinLength)
        {
            return Invariant($"The snapshot declares a total length of {total} bytes, less than the smallest possible snapshot ({MinLength} bytes).");
        }

        if (total > maxLength)
        {
            return Invariant($"The snapshot declares a total length of {total} bytes, more than the limit of {maxLength} bytes.");
        }

        return null;
    }

    /// <summary>Reads the bytes after the header; memory grows with what arrives, never with the declared length alone.</summary>
    private static bool TryReadRest(Stream source, ReadOnlySpan<byte> header, long total, [NotNullWhen(true)] out byte[]? buffer, [NotNullWhen(false)] out string? problem)
    {
        problem = null;
        buffer = null;
        int length = (int)total;
        int initial = Math.Min(length, InitialReadBuffer);
        if (source.CanSeek)
        {
            long available = source.Length - source.Position;
            if (available < length - HeaderLength)
            {
                problem = Truncated(total, HeaderLength + Math.Max(available, 0));
                return false;
            }

            initial = length;
        }

        buffer = new byte[initial];
        header.CopyTo(buffer);
        int filled = HeaderLength;
        while (filled < length)
        {
            if (filled == buffer.Length)
            {
                Array.Resize(ref buffer, (int)Math.Min(length, 2L * buffer.Length));
            }

            int read = source.Read(buffer, filled, buffer.Length - filled);
            if (read == 0)
            {
                problem = Truncated(total, filled);
                buffer = null;
                return false;
            }

            filled += read;
        }

        return true;
    }
}
