using System.Buffers.Binary;
using System.Security.Cryptography;
using System.Text;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class SnapshotFormatTests
{
    private const long Position = 42;

    /// <summary>A small snapshot: a payload section built with the payload writer, an empty section and raw bytes.</summary>
    private static (byte[] Bytes, ReadOnlyMemory<byte>[] Sections) Sample()
    {
        var payload = new SnapshotPayloadWriter();
        payload.WriteString("store-7/rye loaf");
        payload.WriteDoubles([101.5, 99.25, double.NaN, -0.0]);
        payload.WriteInt64(long.MinValue);
        ReadOnlyMemory<byte>[] sections = [payload.WrittenMemory.ToArray(), ReadOnlyMemory<byte>.Empty, new byte[] { 1, 2, 3 }];
        var stream = new MemoryStream();
        SnapshotFormat.Write(stream, Position, sections);
        return (stream.ToArray(), sections);
    }

    [Fact]
    public void Write_ThenRead_RoundTripsPositionAndSections()
    {
        (byte[] bytes, ReadOnlyMemory<byte>[] sections) = Sample();

        SnapshotContent content = SnapshotFormat.Read(new MemoryStream(bytes));

        Assert.Equal(SnapshotFormat.CurrentVersion, content.Version);
        Assert.Equal(Position, content.InputPosition);
        Assert.Equal(bytes.Length, content.Length);
        Assert.Equal(sections.Length, content.Sections.Count);
        for (int i = 0; i < sections.Length; i++)
        {
            Assert.Equal(sections[i].ToArray(), content.Sections[i].ToArray());
        }
    }

    [Fact]
    public async Task WriteAsync_SameInput_SameBytesAsWrite()
    {
        (byte[] bytes, ReadOnlyMemory<byte>[] sections) = Sample();
        var stream = new MemoryStream();

        await SnapshotFormat.WriteAsync(stream, Position, sections);

        Assert.Equal(bytes, stream.ToArray());
        Assert.Equal(bytes.Length, SnapshotFormat.GetLength(sections));
    }

    [Fact]
    public void Write_Layout_MatchesDocumentedOffsetsAndSha256()
    {
        // The layout in SnapshotFormat's remarks, checked field by field; the checksum against the BCL's SHA-256.
        (byte[] bytes, ReadOnlyMemory<byte>[] sections) = Sample();

        Assert.Equal("SFSN"u8.ToArray(), bytes[..4]);
        Assert.Equal(2, BinaryPrimitives.ReadUInt16LittleEndian(bytes.AsSpan(4)));
        Assert.Equal(bytes.Length, BinaryPrimitives.ReadInt64LittleEndian(bytes.AsSpan(6)));
        Assert.Equal(Position, BinaryPrimitives.ReadInt64LittleEndian(bytes.AsSpan(14)));
        Assert.Equal(sections.Length, BinaryPrimitives.ReadInt32LittleEndian(bytes.AsSpan(22)));
        int offset = 26 + (4 * sections.Length);
        for (int i = 0; i < sections.Length; i++)
        {
            Assert.Equal(sections[i].Length, BinaryPrimitives.ReadInt32LittleEndian(bytes.AsSpan(26 + (4 * i))));
            Assert.Equal(sections[i].ToArray(), bytes[offset..(offset + sections[i].Length)]);
            offset += sections[i].Length;
        }

        Assert.Equal(bytes.Length - 32, offset);
        Assert.Equal(SHA256.HashData(bytes.AsSpan(0, offset)), bytes[offset..]);
    }

    [Fact]
    public void Write_NoSections_SmallestSnapshotRoundTrips()
    {
        var stream = new MemoryStream();
        SnapshotFormat.Write(stream, 0, []);

        Assert.Equal(SnapshotFormat.MinLength, stream.Length);
        SnapshotContent content = SnapshotFormat.Read(new MemoryStream(stream.ToArray()));
        Assert.Equal(0, content.InputPosition);
        Assert.Empty(content.Sections);
    }

    [Fact]
    public void Read_AnySingleBitFlipped_ThrowsInvalidData()
    {
        (byte[] bytes, _) = Sample();
        for (int i = 0; i < bytes.Length; i++)
        {
            for (int bit = 0; bit < 8; bit++)
            {
                byte[] damaged = (byte[])bytes.Clone();
                damaged[i] ^= (byte)(1 << bit);

                var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(damaged)));
                Assert.False(string.IsNullOrWhiteSpace(ex.Message));
                Assert.False(SnapshotFormat.TryParse(damaged, out _, out _));
            }
        }
    }

    [Fact]
    public void Read_EveryTruncation_ThrowsInvalidData()
    {
        (byte[] bytes, _) = Sample();
        for (int length = 0; length < bytes.Length; length++)
        {
            byte[] truncated = bytes[..length];

            Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(truncated)));
            Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new ForwardOnlyStream(truncated)));
            Assert.False(SnapshotFormat.TryParse(truncated, out _, out string? problem));
            Assert.Contains(length == 0 ? "empty" : "truncated", problem, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Read_ForwardOnlyStream_RoundTrips()
    {
        (byte[] bytes, ReadOnlyMemory<byte>[] sections) = Sample();

        SnapshotContent content = SnapshotFormat.Read(new ForwardOnlyStream(bytes, maxChunk: 7));

        Assert.Equal(Position, content.InputPosition);
        Assert.Equal(sections[0].ToArray(), content.Sections[0].ToArray());
    }

    [Fact]
    public void Read_WrongMagic_MessageNamesMagic()
    {
        (byte[] bytes, _) = Sample();
        Encoding.ASCII.GetBytes("PK\u0003\u0004").CopyTo(bytes, 0);

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("not a StreamForecast snapshot", ex.Message, StringComparison.Ordinal);
        Assert.Contains("504B0304", ex.Message, StringComparison.Ordinal);
        Assert.Contains("SFSN", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_UnsupportedVersion_MessageNamesBothVersions()
    {
        (byte[] bytes, _) = Sample();
        BinaryPrimitives.WriteUInt16LittleEndian(bytes.AsSpan(4), 4); // 3 is the version with known-event state

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("format version 4", ex.Message, StringComparison.Ordinal);
        Assert.Contains("reads versions 2 and 3 only", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_Version1Snapshot_RefusedNamingBothVersions()
    {
        // Version 1 payloads can hold a lagged model whose last actual the model refused; they are not converted.
        (byte[] bytes, _) = Sample();
        BinaryPrimitives.WriteUInt16LittleEndian(bytes.AsSpan(4), 1);

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("format version 1", ex.Message, StringComparison.Ordinal);
        Assert.Contains("reads versions 2 and 3 only", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_CorruptedPayload_MessageNamesChecksum()
    {
        (byte[] bytes, _) = Sample();
        bytes[40] ^= 0x10;

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("SHA-256 checksum", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_DeclaredLengthAboveLimit_RejectedBeforeReadingOn()
    {
        (byte[] bytes, _) = Sample();

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes), maxLength: bytes.Length - 1));

        Assert.Contains($"total length of {bytes.Length} bytes, more than the limit of {bytes.Length - 1}", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void Read_HugeDeclaredLengthButShortStream_RejectedWithoutAllocatingIt(bool seekable)
    {
        // A header that claims almost 1 GiB (within the default limit), followed by only a few hundred bytes.
        (byte[] bytes, _) = Sample();
        BinaryPrimitives.WriteInt64LittleEndian(bytes.AsSpan(6), SnapshotFormat.DefaultMaxLength - 1);
        Stream stream = seekable ? new MemoryStream(bytes) : new ForwardOnlyStream(bytes);

        long before = GC.GetAllocatedBytesForCurrentThread();
        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(stream));
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.Contains("truncated", ex.Message, StringComparison.Ordinal);
        Assert.True(allocated < 1 << 20, $"allocated {allocated} bytes");
    }

    [Fact]
    public void Read_SectionTableInconsistentButChecksummed_RejectedWithReason()
    {
        // A snapshot whose checksum is right but whose table is not (as a faulty writer would produce).
        (byte[] bytes, _) = Sample();
        BinaryPrimitives.WriteInt32LittleEndian(bytes.AsSpan(26), 100_000);
        Rehash(bytes);

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("Section 0 declares 100000 bytes", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_SectionsShorterThanBody_RejectedWithReason()
    {
        (byte[] bytes, ReadOnlyMemory<byte>[] sections) = Sample();
        BinaryPrimitives.WriteInt32LittleEndian(bytes.AsSpan(26 + 8), sections[2].Length - 1);
        Rehash(bytes);

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("belong to no section", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_NegativePositionButChecksummed_Rejected()
    {
        (byte[] bytes, _) = Sample();
        BinaryPrimitives.WriteInt64LittleEndian(bytes.AsSpan(14), -1);
        Rehash(bytes);

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains("input position is -1", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_HugeSectionCountButChecksummed_RejectedWithoutAllocating()
    {
        (byte[] bytes, _) = Sample();
        BinaryPrimitives.WriteInt32LittleEndian(bytes.AsSpan(22), int.MaxValue);
        Rehash(bytes);

        var ex = Assert.Throws<InvalidDataException>(() => SnapshotFormat.Read(new MemoryStream(bytes)));

        Assert.Contains($"declares {int.MaxValue} sections", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_TrailingBytes_Rejected()
    {
        (byte[] bytes, _) = Sample();
        byte[] longer = [.. bytes, 0];

        Assert.False(SnapshotFormat.TryParse(longer, out _, out string? problem));
        Assert.Contains("1 unexpected bytes follow it", problem, StringComparison.Ordinal);
        Assert.True(SnapshotFormat.TryParse(bytes, out SnapshotContent? content, out _));
        Assert.Equal(Position, content.InputPosition);
    }

    [Fact]
    public void Read_TwoSnapshotsBackToBack_ReadsEachAndStopsAfterIt()
    {
        var stream = new MemoryStream();
        SnapshotFormat.Write(stream, 5, [new byte[] { 9 }]);
        SnapshotFormat.Write(stream, 6, [new byte[] { 8, 7 }]);
        stream.Position = 0;

        SnapshotContent first = SnapshotFormat.Read(stream);
        SnapshotContent second = SnapshotFormat.Read(stream);

        Assert.Equal(5, first.InputPosition);
        Assert.Equal(6, second.InputPosition);
        Assert.Equal([8, 7], second.Sections[0].ToArray());
        Assert.Equal(stream.Length, stream.Position);
    }

    [Fact]
    public void Write_NegativePosition_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => SnapshotFormat.Write(new MemoryStream(), -1, []));
    }

    [Fact]
    public void Read_LimitOutOfRange_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => SnapshotFormat.Read(new MemoryStream(), maxLength: 10));
    }

    private static void Rehash(byte[] bytes) => SHA256.HashData(bytes.AsSpan(0, bytes.Length - 32), bytes.AsSpan(bytes.Length - 32));

    /// <summary>A stream that cannot seek and hands out at most a few bytes per read, like a socket or a pipe.</summary>
    private sealed class ForwardOnlyStream(byte[] data, int maxChunk = 4096) : Stream
    {
        private int _position;

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => throw new NotSupportedException();

        public override long Position
        {
            get => throw new NotSupportedException();
            set => throw new NotSupportedException();
        }

        public override int Read(byte[] buffer, int offset, int count)
        {
            int n = Math.Min(Math.Min(count, maxChunk), data.Length - _position);
            Array.Copy(data, _position, buffer, offset, n);
            _position += n;
            return n;
        }

        public override void Flush()
        {
        }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}
