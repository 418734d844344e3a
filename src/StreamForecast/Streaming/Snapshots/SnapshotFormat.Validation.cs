using System.Buffers.Binary;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using System.Security.Cryptography;

namespace StreamForecast.Streaming;

/// <content>Checking a whole snapshot before anything is returned: checksum, section table, limits.</content>
internal static partial class SnapshotFormat
{
    /// <summary>Checks the checksum, then the section table, of a complete snapshot of the declared length.</summary>
    private static bool TryValidate(ReadOnlyMemory<byte> snapshot, [NotNullWhen(true)] out SnapshotContent? content, [NotNullWhen(false)] out string? problem)
    {
        content = null;
        ReadOnlySpan<byte> span = snapshot.Span;
        int bodyLength = span.Length - ChecksumLength;
        Span<byte> actual = stackalloc byte[ChecksumLength];
        SHA256.HashData(span[..bodyLength], actual);
        if (!actual.SequenceEqual(span[bodyLength..]))
        {
            problem = Invariant($"The snapshot is corrupted: the SHA-256 checksum stored in its last {ChecksumLength} bytes does not match its content.");
            return false;
        }

        long inputPosition = BinaryPrimitives.ReadInt64LittleEndian(span[PositionOffset..]);
        if (inputPosition < 0)
        {
            problem = Invariant($"The snapshot's input position is {inputPosition}; it must be 0 or more.");
            return false;
        }

        int count = BinaryPrimitives.ReadInt32LittleEndian(span[CountOffset..]);
        long maxCount = (bodyLength - HeaderLength) / 4;
        if (count < 0 || count > maxCount)
        {
            problem = Invariant($"The snapshot declares {count} sections; a snapshot of {span.Length} bytes can hold 0 to {maxCount}.");
            return false;
        }

        int offset = HeaderLength + (4 * count);
        var sections = new ReadOnlyMemory<byte>[count];
        for (int i = 0; i < count; i++)
        {
            int sectionLength = BinaryPrimitives.ReadInt32LittleEndian(span[(HeaderLength + (4 * i))..]);
            if (sectionLength < 0 || sectionLength > bodyLength - offset)
            {
                problem = Invariant($"Section {i} declares {sectionLength} bytes, but only {bodyLength - offset} bytes are left before the checksum.");
                return false;
            }

            sections[i] = snapshot.Slice(offset, sectionLength);
            offset += sectionLength;
        }

        if (offset != bodyLength)
        {
            problem = Invariant($"The sections end at byte {offset} but the checksum starts at byte {bodyLength}; {bodyLength - offset} bytes belong to no section.");
            return false;
        }

        problem = null;
        content = new SnapshotContent(BinaryPrimitives.ReadUInt16LittleEndian(span[VersionOffset..]), inputPosition, sections, span.Length);
        return true;
    }

    private static int ReadUpTo(Stream source, Span<byte> destination)
    {
        int filled = 0;
        while (filled < destination.Length)
        {
            int read = source.Read(destination[filled..]);
            if (read == 0)
            {
                break;
            }

            filled += read;
        }

        return filled;
    }

    private static void CheckMaxLength(long maxLength)
    {
        if (maxLength < MinLength || maxLength > MaxSupportedLength)
        {
            throw new ArgumentOutOfRangeException(nameof(maxLength), maxLength, Invariant($"The length limit must be between {MinLength} and {MaxSupportedLength} bytes."));
        }
    }

    private static string Truncated(long total, long present) =>
        Invariant($"The snapshot is truncated: its header declares {total} bytes but the data ends after {present}.");

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
