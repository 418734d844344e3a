using System.Buffers.Binary;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using System.Security.Cryptography;

namespace StreamForecast.Streaming;

/// <summary>A snapshot that passed every check of <see cref="SnapshotFormat"/>.</summary>
/// <remarks>Immutable. The sections are slices of the buffer the snapshot was read into.</remarks>
internal sealed class SnapshotContent
{
    public SnapshotContent(ushort version, long inputPosition, IReadOnlyList<ReadOnlyMemory<byte>> sections, long length)
    {
        Version = version;
        InputPosition = inputPosition;
        Sections = sections;
        Length = length;
    }

    /// <summary>The format version the snapshot was written with.</summary>
    public ushort Version { get; }

    /// <summary>The input position the snapshot was taken at.</summary>
    public long InputPosition { get; }

    /// <summary>The payload sections, in written order.</summary>
    public IReadOnlyList<ReadOnlyMemory<byte>> Sections { get; }

    /// <summary>The snapshot's total length in bytes, checksum included.</summary>
    public long Length { get; }
}
