using System.Buffers;
using System.Buffers.Binary;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Streaming;

namespace StreamForecast.Tests.Streaming;

public sealed class SnapshotPayloadTests
{
    [Fact]
    public void Write_EveryKind_ReadsBackInOrderBitForBit()
    {
        double[] specials = [0.0, -0.0, double.Epsilon, double.MaxValue, double.NegativeInfinity, double.PositiveInfinity,
            BitConverter.Int64BitsToDouble(0x7FF8_0000_0000_1234)]; // a NaN with a payload
        var writer = new SnapshotPayloadWriter(initialCapacity: 1);
        writer.WriteByte(200);
        writer.WriteBoolean(true);
        writer.WriteBoolean(false);
        writer.WriteInt32(-123_456);
        writer.WriteInt64(long.MaxValue);
        writer.WriteDouble(Math.PI);
        writer.WriteDoubles(specials);
        writer.WriteDoubles([]);
        writer.WriteString("Grüße, 東京 🍞");
        writer.WriteString("");
        writer.WriteBytes([5, 6, 7]);
        writer.WriteKey(SnapshotKeyCodecs.Utf8String, "shop-12");
        writer.WriteKey(SnapshotKeyCodecs.Int64LittleEndian, -9L);

        var reader = new SnapshotPayloadReader(writer.WrittenMemory);
        Assert.Equal(200, reader.ReadByte());
        Assert.True(reader.ReadBoolean());
        Assert.False(reader.ReadBoolean());
        Assert.Equal(-123_456, reader.ReadInt32());
        Assert.Equal(long.MaxValue, reader.ReadInt64());
        Assert.Equal(Math.PI, reader.ReadDouble());
        double[] back = reader.ReadDoubles();
        Assert.Equal(specials.Select(BitConverter.DoubleToInt64Bits), back.Select(BitConverter.DoubleToInt64Bits));
        Assert.Empty(reader.ReadDoubles());
        Assert.Equal("Grüße, 東京 🍞", reader.ReadString());
        Assert.Equal("", reader.ReadString());
        Assert.Equal([5, 6, 7], reader.ReadBytes().ToArray());
        Assert.Equal("shop-12", reader.ReadKey(SnapshotKeyCodecs.Utf8String));
        Assert.Equal(-9L, reader.ReadKey(SnapshotKeyCodecs.Int64LittleEndian));
        Assert.True(reader.IsAtEnd);
        reader.EnsureAtEnd();
    }

    [Fact]
    public void WriteDoubles_Layout_CountThenLittleEndianBits()
    {
        var writer = new SnapshotPayloadWriter();
        writer.WriteDoubles([1.0, -2.5]);
        byte[] bytes = writer.WrittenMemory.ToArray();

        Assert.Equal(4 + 16, bytes.Length);
        Assert.Equal(2, BinaryPrimitives.ReadInt32LittleEndian(bytes));
        Assert.Equal(BitConverter.DoubleToInt64Bits(1.0), BinaryPrimitives.ReadInt64LittleEndian(bytes.AsSpan(4)));
        Assert.Equal(BitConverter.DoubleToInt64Bits(-2.5), BinaryPrimitives.ReadInt64LittleEndian(bytes.AsSpan(12)));
    }

    [Fact]
    public void ReadDoubles_IntoSpan_RequiresExactCount()
    {
        var writer = new SnapshotPayloadWriter();
        writer.WriteDoubles([1, 2, 3]);
        var destination = new double[3];
        new SnapshotPayloadReader(writer.WrittenMemory).ReadDoubles(destination);
        Assert.Equal([1.0, 2, 3], destination);

        var reader = new SnapshotPayloadReader(writer.WrittenMemory);
        var ex = Assert.Throws<InvalidDataException>(() => reader.ReadDoubles(new double[4]));
        Assert.Contains("holds 3 numbers; 4 were expected", ex.Message, StringComparison.Ordinal);
        Assert.Equal(0, reader.Position); // a failed read consumes nothing
    }

    [Fact]
    public void Read_EveryTruncation_ThrowsInvalidData()
    {
        var writer = new SnapshotPayloadWriter();
        writer.WriteInt32(1);
        writer.WriteDoubles([1.5, 2.5]);
        writer.WriteString("abc");
        byte[] full = writer.WrittenMemory.ToArray();

        for (int length = 0; length < full.Length; length++)
        {
            var reader = new SnapshotPayloadReader(full.AsMemory(0, length));
            var ex = Assert.Throws<InvalidDataException>(() =>
            {
                reader.ReadInt32();
                reader.ReadDoubles();
                reader.ReadString();
            });
            Assert.False(string.IsNullOrWhiteSpace(ex.Message));
        }
    }

    [Fact]
    public void ReadDoubles_HugeDeclaredCount_RejectedWithoutAllocating()
    {
        byte[] bytes = new byte[12];
        BinaryPrimitives.WriteInt32LittleEndian(bytes, int.MaxValue);
        var reader = new SnapshotPayloadReader(bytes);

        long before = GC.GetAllocatedBytesForCurrentThread();
        var ex = Assert.Throws<InvalidDataException>(() => reader.ReadDoubles());
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.Contains($"declares {int.MaxValue} items", ex.Message, StringComparison.Ordinal);
        Assert.True(allocated < 64 * 1024, $"allocated {allocated} bytes");
    }

    [Fact]
    public void ReadString_NegativeLength_Rejected()
    {
        byte[] bytes = new byte[8];
        BinaryPrimitives.WriteInt32LittleEndian(bytes, -1);

        Assert.Throws<InvalidDataException>(() => new SnapshotPayloadReader(bytes).ReadString());
    }

    [Fact]
    public void ReadString_InvalidUtf8_Rejected()
    {
        byte[] bytes = [1, 0, 0, 0, 0xFF];

        var ex = Assert.Throws<InvalidDataException>(() => new SnapshotPayloadReader(bytes).ReadString());
        Assert.Contains("not valid UTF-8", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ReadBoolean_NotZeroOrOne_Rejected()
    {
        var ex = Assert.Throws<InvalidDataException>(() => new SnapshotPayloadReader(new byte[] { 2 }).ReadBoolean());
        Assert.Contains("stored as 0 or 1", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void EnsureAtEnd_BytesLeft_Throws()
    {
        var reader = new SnapshotPayloadReader(new byte[] { 1, 2, 3 });
        reader.ReadByte();

        var ex = Assert.Throws<InvalidDataException>(reader.EnsureAtEnd);
        Assert.Contains("2 unread bytes after offset 1", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void WriteString_UnpairedSurrogate_Throws()
    {
        var writer = new SnapshotPayloadWriter();
        Assert.ThrowsAny<ArgumentException>(() => writer.WriteString("a\uD800b"));
    }

    [Fact]
    public void Clear_AfterWrites_StartsOver()
    {
        var writer = new SnapshotPayloadWriter();
        writer.WriteInt64(1);
        writer.Clear();
        writer.WriteInt32(7);

        Assert.Equal(4, writer.Length);
        Assert.Equal(7, new SnapshotPayloadReader(writer.WrittenMemory).ReadInt32());
    }

    [Property(MaxTest = 200)]
    public Property WriteDoubles_AnyBitPatterns_RoundTripExactly()
    {
        Gen<double[]> gen = ArbMap.Default.GeneratorFor<long>().Select(BitConverter.Int64BitsToDouble).ArrayOf();
        return Prop.ForAll(gen.ToArbitrary(), values =>
        {
            var writer = new SnapshotPayloadWriter();
            writer.WriteDoubles(values);
            double[] back = new SnapshotPayloadReader(writer.WrittenMemory).ReadDoubles();
            return values.Select(BitConverter.DoubleToInt64Bits).SequenceEqual(back.Select(BitConverter.DoubleToInt64Bits));
        });
    }
}

public sealed class SnapshotKeyCodecsTests
{
    [Fact]
    public void Int64LittleEndian_KnownValue_LeastSignificantByteFirst()
    {
        byte[] bytes = Encode(SnapshotKeyCodecs.Int64LittleEndian, 0x0102030405060708L);

        Assert.Equal([8, 7, 6, 5, 4, 3, 2, 1], bytes);
        Assert.Equal(0x0102030405060708L, SnapshotKeyCodecs.Int64LittleEndian.Read(bytes, out int consumed));
        Assert.Equal(8, consumed);
    }

    [Fact]
    public void Int32LittleEndian_KnownValue_LeastSignificantByteFirst()
    {
        byte[] bytes = Encode(SnapshotKeyCodecs.Int32LittleEndian, -2);

        Assert.Equal([0xFE, 0xFF, 0xFF, 0xFF], bytes);
        Assert.Equal(-2, SnapshotKeyCodecs.Int32LittleEndian.Read(bytes, out int consumed));
        Assert.Equal(4, consumed);
    }

    [Fact]
    public void Utf8String_KnownValue_LengthThenUtf8Bytes()
    {
        // U+00E9 is C3 A9 in UTF-8 (RFC 3629 §3 encoding rule, two-byte form).
        byte[] bytes = Encode(SnapshotKeyCodecs.Utf8String, "é");

        Assert.Equal([2, 0, 0, 0, 0xC3, 0xA9], bytes);
        Assert.Equal("é", SnapshotKeyCodecs.Utf8String.Read([.. bytes, 99], out int consumed));
        Assert.Equal(6, consumed);
    }

    [Fact]
    public void GuidBytes_AnyGuid_SameBytesAsToByteArray()
    {
        var key = new Guid("00112233-4455-6677-8899-aabbccddeeff");
        byte[] bytes = Encode(SnapshotKeyCodecs.GuidBytes, key);

        Assert.Equal(key.ToByteArray(), bytes);
        Assert.Equal(key, SnapshotKeyCodecs.GuidBytes.Read(bytes, out int consumed));
        Assert.Equal(16, consumed);
    }

    [Fact]
    public void Read_TooFewBytes_ThrowsInvalidData()
    {
        Assert.Throws<InvalidDataException>(() => SnapshotKeyCodecs.Int64LittleEndian.Read(new byte[7], out _));
        Assert.Throws<InvalidDataException>(() => SnapshotKeyCodecs.Int32LittleEndian.Read(new byte[3], out _));
        Assert.Throws<InvalidDataException>(() => SnapshotKeyCodecs.GuidBytes.Read(new byte[15], out _));
        Assert.Throws<InvalidDataException>(() => SnapshotKeyCodecs.Utf8String.Read(new byte[3], out _));
        var ex = Assert.Throws<InvalidDataException>(() => SnapshotKeyCodecs.Utf8String.Read([5, 0, 0, 0, 65], out _));
        Assert.Contains("declares 5 bytes", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Utf8String_InvalidBytes_ThrowsInvalidData()
    {
        Assert.Throws<InvalidDataException>(() => SnapshotKeyCodecs.Utf8String.Read([2, 0, 0, 0, 0xC3, 0x28], out _));
    }

    [Fact]
    public void Utf8String_NullKey_Throws()
    {
        Assert.Throws<ArgumentNullException>(() => SnapshotKeyCodecs.Utf8String.Write(null!, new ArrayBufferWriter<byte>()));
    }

    [Fact]
    public void TryGetBuiltIn_SupportedAndUnsupportedTypes()
    {
        Assert.True(SnapshotKeyCodecs.TryGetBuiltIn(out ISnapshotKeyCodec<string>? s));
        Assert.Same(SnapshotKeyCodecs.Utf8String, s);
        Assert.True(SnapshotKeyCodecs.TryGetBuiltIn(out ISnapshotKeyCodec<long>? l));
        Assert.Same(SnapshotKeyCodecs.Int64LittleEndian, l);
        Assert.True(SnapshotKeyCodecs.TryGetBuiltIn(out ISnapshotKeyCodec<int>? i));
        Assert.Same(SnapshotKeyCodecs.Int32LittleEndian, i);
        Assert.True(SnapshotKeyCodecs.TryGetBuiltIn(out ISnapshotKeyCodec<Guid>? g));
        Assert.Same(SnapshotKeyCodecs.GuidBytes, g);
        Assert.False(SnapshotKeyCodecs.TryGetBuiltIn(out ISnapshotKeyCodec<double>? _));
    }

    [Fact]
    public void FormatName_BuiltIns_AreDistinct()
    {
        string[] names = [SnapshotKeyCodecs.Utf8String.FormatName, SnapshotKeyCodecs.Int64LittleEndian.FormatName,
            SnapshotKeyCodecs.Int32LittleEndian.FormatName, SnapshotKeyCodecs.GuidBytes.FormatName];

        Assert.Equal(names.Length, names.Distinct(StringComparer.Ordinal).Count());
    }

    [Property(MaxTest = 200)]
    public Property Utf8String_AnyScalarValues_RoundTrips()
    {
        // Strings of Unicode scalar values (no lone surrogates), including astral characters.
        Gen<string> gen = Gen.Choose(0, 0x10FFFF)
            .Where(cp => cp is < 0xD800 or > 0xDFFF)
            .Select(char.ConvertFromUtf32)
            .ArrayOf()
            .Select(parts => string.Concat(parts));
        return Prop.ForAll(gen.ToArbitrary(), key =>
        {
            byte[] bytes = Encode(SnapshotKeyCodecs.Utf8String, key);
            string back = SnapshotKeyCodecs.Utf8String.Read(bytes, out int consumed);
            return back == key && consumed == bytes.Length;
        });
    }

    [Property(MaxTest = 200)]
    public Property Int64AndGuid_AnyValue_RoundTrip(long value, Guid guid) =>
        (SnapshotKeyCodecs.Int64LittleEndian.Read(Encode(SnapshotKeyCodecs.Int64LittleEndian, value), out _) == value
            && SnapshotKeyCodecs.GuidBytes.Read(Encode(SnapshotKeyCodecs.GuidBytes, guid), out _) == guid).ToProperty();

    private static byte[] Encode<TKey>(ISnapshotKeyCodec<TKey> codec, TKey key)
    {
        var buffer = new ArrayBufferWriter<byte>();
        codec.Write(key, buffer);
        return buffer.WrittenSpan.ToArray();
    }
}
