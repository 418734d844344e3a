using StreamForecast.Streaming;

namespace StreamForecast.Hosting.Tests.Hosting;

/// <summary>The input log's record format: every observation the engine accepts reads back identical; damaged bytes are refused.</summary>
public sealed class ObservationRecordCodecTests
{
    private static readonly ObservationRecordCodec<string> s_codec = new(SnapshotKeyCodecs.Utf8String);

    public static TheoryData<string, DateTimeOffset, double, string?> Hostile => new()
    {
        { "mill-lane/rye-roll", new DateTimeOffset(2025, 10, 26, 1, 30, 0, TimeSpan.FromHours(1)), 3, "till-1/7" },
        { "k", DateTimeOffset.MinValue, 0, null },
        { "k", DateTimeOffset.MaxValue, -0.0, string.Empty },
        { "ünïcödé/ключ/😀", new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.FromHours(14)), NumericDomain.MaxMagnitude, "id-😀" },
        { string.Empty, new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.FromMinutes(-570)), -NumericDomain.MaxMagnitude, new string('x', 5000) },
        { "tiny", new DateTimeOffset(2026, 1, 1, 0, 0, 0, TimeSpan.FromHours(-12)), double.Epsilon, "a" },
    };

    [Theory]
    [MemberData(nameof(Hostile))]
    public void Decode_EncodedObservation_IsIdenticalIncludingOffsetAndSignOfZero(string key, DateTimeOffset time, double quantity, string? id)
    {
        var observation = new Observation<string>(key, time, quantity, id);

        Observation<string> back = s_codec.Decode(s_codec.Encode(observation));

        Assert.Equal(observation, back);
        Assert.Equal(time.Offset, back.Timestamp.Offset);
        Assert.Equal(BitConverter.DoubleToInt64Bits(quantity), BitConverter.DoubleToInt64Bits(back.Quantity));
        Assert.Equal(s_codec.Encode(observation), s_codec.Encode(back)); // encode → decode → encode is stable
    }

    [Fact]
    public void Decode_RandomObservations_RoundTrip()
    {
        var rng = new Random(20251013);
        for (int i = 0; i < 2_000; i++)
        {
            var time = new DateTimeOffset(2020, 1, 1, 0, 0, 0, TimeSpan.FromMinutes(rng.Next(-840, 841)))
                .AddTicks(rng.NextInt64(0, TimeSpan.TicksPerDay * 3650));
            double quantity = rng.Next(4) switch
            {
                0 => 0,
                1 => rng.Next(0, 10_000),
                2 => (rng.NextDouble() - 0.5) * 2 * NumericDomain.MaxMagnitude,
                _ => BitConverter.Int64BitsToDouble(rng.NextInt64(0, 0x7FEF_FFFF_FFFF_FFFF)) % NumericDomain.MaxMagnitude,
            };
            var observation = new Observation<string>($"shop-{rng.Next(50)}/item-{rng.Next(500)}", time, quantity, rng.Next(3) == 0 ? null : $"till/{i}");

            Assert.Equal(observation, s_codec.Decode(s_codec.Encode(observation)));
        }
    }

    [Fact]
    public void Decode_EveryTruncation_ThrowsInvalidDataNeverAnotherException()
    {
        byte[] record = s_codec.Encode(new Observation<string>("mill-lane/rye-roll", DateTimeOffset.UnixEpoch, 3, "till-1/7"));

        for (int length = 0; length < record.Length; length++)
        {
            Assert.Throws<InvalidDataException>(() => s_codec.Decode(record.AsSpan(0, length)));
        }
    }

    [Fact]
    public void Decode_TrailingBytesOrAnotherFormat_ThrowsInvalidData()
    {
        byte[] record = s_codec.Encode(new Observation<string>("k", DateTimeOffset.UnixEpoch, 1));
        byte[] longer = [.. record, 0];
        byte[] otherFormat = [.. record];
        otherFormat[0] = 2;

        Assert.Contains("bytes after its end", Assert.Throws<InvalidDataException>(() => s_codec.Decode(longer)).Message, StringComparison.Ordinal);
        Assert.Contains("format 2", Assert.Throws<InvalidDataException>(() => s_codec.Decode(otherFormat)).Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Decode_OffsetOutOfRange_ThrowsInvalidData()
    {
        byte[] record = s_codec.Encode(new Observation<string>("k", DateTimeOffset.UnixEpoch, 1));
        int offsetAt = 1 + 4 + 1 + 8; // format, key length prefix and key "k", ticks
        System.Buffers.Binary.BinaryPrimitives.WriteInt16LittleEndian(record.AsSpan(offsetAt), 15 * 60);

        Assert.Throws<InvalidDataException>(() => s_codec.Decode(record));
    }

    [Fact]
    public void Encode_EventIdWithUnpairedSurrogate_ThrowsArgumentException()
    {
        Assert.Throws<ArgumentException>(() => s_codec.Encode(new Observation<string>("k", DateTimeOffset.UnixEpoch, 1, "a\ud800b")));
    }
}
