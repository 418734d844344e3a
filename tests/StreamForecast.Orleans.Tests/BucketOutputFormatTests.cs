using System.Buffers.Binary;
using System.Globalization;
using System.IO.Hashing;
using Microsoft.Extensions.DependencyInjection;
using Orleans.Serialization;
using StreamForecast.Alerts;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Orleans.Tests;

/// <summary>
/// The compact stored form of a bucket's newest output: every value comes back bit for bit (checked field by field,
/// doubles by their bits), a stored form read back and sent gives the receiver what the original would have, and a
/// damaged or truncated form is refused. Values are invented, chosen to be hostile (IEEE 754 special values, integer
/// extremes, null and unusual strings).
/// </summary>
public sealed class BucketOutputFormatTests
{
    private static readonly Serializer Serializer = new ServiceCollection().AddSerializer().BuildServiceProvider().GetRequiredService<Serializer>();

    // IEEE 754 special and boundary values (common practice): NaN with another payload, infinities, both zeros, the
    // smallest subnormal and a larger one, the largest and smallest finite doubles.
    private static readonly double[] HostileDoubles =
    [
        double.NaN, BitConverter.Int64BitsToDouble(unchecked((long)0xFFF8_0000_0000_0001UL)), BitConverter.Int64BitsToDouble(0x7FF0_0000_0000_0F00),
        double.PositiveInfinity, double.NegativeInfinity, 0.0, -0.0, double.Epsilon, -double.Epsilon, 2.2250738585072e-310,
        double.MaxValue, double.MinValue, 1.0, -3.75, 12.5, 1e15,
    ];

    private static readonly long[] HostileLongs = [long.MinValue, long.MaxValue, 0, -1, 1, 41, int.MaxValue + 1L];

    private static readonly string?[] HostileStrings =
    [
        null, "", "MA(12)", "Holt α=0.3 β=0.1", "日本語の方法", "emoji 🥐 croissant", "\ud800 lone high", "tail \udc00",
        "\0nul inside", new string('x', 3000),
    ];

    private static readonly string[] Keys = ["", "bakery-1/rye", "Zürich/Brötchen", "東京/パン", "🥐", new string('k', 500)];

    private static readonly DateTimeOffset[] Times =
    [
        DateTimeOffset.MinValue, DateTimeOffset.MaxValue, DateTimeOffset.UnixEpoch,
        new(2026, 3, 2, 0, 0, 0, TimeSpan.FromHours(14)), new(2026, 3, 2, 0, 0, 0, TimeSpan.FromHours(-14)),
        new(2026, 3, 2, 5, 30, 0, TimeSpan.FromMinutes(345)),
    ];

    [Fact]
    public void Read_HostileValuesWritten_EveryFieldComesBackBitForBit()
    {
        for (int seed = 0; seed < 20; seed++)
        {
            BucketOutput<string> original = HostileOutput(new Random(seed), items: seed == 0 ? 0 : 40 * seed);

            BucketOutput<string> read = WriteAndRead(original);

            AssertSame(original, read);
        }
    }

    [Fact]
    public void Read_EmptyOutputAndExtremeHeader_ComesBackExactly()
    {
        var original = new BucketOutput<string>(int.MaxValue, long.MaxValue, long.MinValue, [], [], []);

        BucketOutput<string> read = WriteAndRead(original);

        AssertSame(original, read);
    }

    [Fact]
    public void Read_ManyUpdatesAlike_ComesBackExactlyAndSmallerThanWrittenOneByOne()
    {
        // Many updates of one period (a bucket's flush): most fields repeat and are left out of the stored form.
        var errors = new ErrorSummary(30, 1.5, 2.25, 2.1, 7.5, 0.05, double.NaN, 0.8, 0.7, 0.2, 2.8);
        var start = new DateTimeOffset(2026, 3, 2, 10, 0, 0, TimeSpan.Zero);
        var forecasts = new ForecastUpdate<string>[500];
        for (int i = 0; i < forecasts.Length; i++)
        {
            var next = new ForecastPoint(1, 10 + i, 5 + i, 15 + i, IntervalKind.Normal, 0.95);
            forecasts[i] = new ForecastUpdate<string>("shop-" + i.ToString(CultureInfo.InvariantCulture), 100, start, i, false, 9 + i, -1, next, next, errors with { Rsfe = i }, "MA(12)", false);
        }

        var original = new BucketOutput<string>(3, 7, 9, forecasts, [], []);
        byte[] bytes = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(original);

        AssertSame(original, BucketOutputReader.Read(bytes, SnapshotKeyCodecs.Utf8String));
        Assert.True(bytes.Length < Serializer.SerializeToArray(original).Length / 2, $"{bytes.Length} B stored");
    }

    [Fact]
    public void Read_HostileOutputReadAndSent_ReceiverGetsWhatTheOriginalWouldHaveGiven()
    {
        // What a subscriber receives goes through Orleans' wire form: the re-sent output must give the same values.
        BucketOutput<string> original = HostileOutput(new Random(7), items: 200);

        BucketOutput<string> read = WriteAndRead(original);

        AssertSame(Serializer.Deserialize<BucketOutput<string>>(Serializer.SerializeToArray(original))!, Serializer.Deserialize<BucketOutput<string>>(Serializer.SerializeToArray(read))!);
    }

    [Fact]
    public void Read_LongKeys_ComesBackExactly()
    {
        var forecasts = new ForecastUpdate<long>[HostileLongs.Length];
        for (int i = 0; i < forecasts.Length; i++)
        {
            forecasts[i] = new ForecastUpdate<long>(HostileLongs[i], HostileLongs[^(i + 1)], Times[i % Times.Length], -0.0, true, double.NaN, double.Epsilon, default, default, default, "SES", true);
        }

        var original = new BucketOutput<long>(0, 1, 1, forecasts, [new DriftAlert<long>(long.MinValue, 3, Times[0], -1, "", default, default)], [new SeriesFault<long>(long.MaxValue, long.MinValue, (SeriesFaultKind)int.MinValue, "")]);
        byte[] bytes = new BucketOutputWriter<long>(SnapshotKeyCodecs.Int64LittleEndian).Write(original);

        BucketOutput<long> read = BucketOutputReader.Read(bytes, SnapshotKeyCodecs.Int64LittleEndian);

        Assert.Equal(Describe(original), Describe(read));
    }

    [Fact]
    public void Read_AnyByteChanged_ThrowsInvalidData()
    {
        byte[] bytes = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(HostileOutput(new Random(3), items: 6));

        for (int i = 0; i < bytes.Length; i++)
        {
            byte[] damaged = (byte[])bytes.Clone();
            damaged[i] ^= (byte)(1 << (i % 8));

            Assert.Throws<InvalidDataException>(() => BucketOutputReader.Read(damaged, SnapshotKeyCodecs.Utf8String));
        }
    }

    [Fact]
    public void Read_Truncated_ThrowsInvalidDataNamingIt()
    {
        byte[] bytes = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(HostileOutput(new Random(4), items: 6));

        for (int length = 0; length < bytes.Length; length++)
        {
            InvalidDataException error = Assert.Throws<InvalidDataException>(() => BucketOutputReader.Read(bytes.AsSpan(0, length), SnapshotKeyCodecs.Utf8String));
            Assert.Contains("stored output", error.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Read_OtherVersionOrKeyCodec_ThrowsInvalidDataNamingIt()
    {
        byte[] bytes = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(HostileOutput(new Random(5), items: 3));
        byte[] otherVersion = (byte[])bytes.Clone();
        otherVersion[0] = 2;
        Rehash(otherVersion);

        Assert.Contains("version 2", Assert.Throws<InvalidDataException>(() => BucketOutputReader.Read(otherVersion, SnapshotKeyCodecs.Utf8String)).Message, StringComparison.Ordinal);
        Assert.Contains("utf8-string/v1", Assert.Throws<InvalidDataException>(() => BucketOutputReader.Read(bytes, SnapshotKeyCodecs.Int64LittleEndian)).Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_CountOrIndexNoWriterProducesWithAValidHash_ThrowsInvalidData()
    {
        // No strings, no updates, no alerts, one fault without a message: the lists' counts sit at known offsets
        // (version 1, bucket 4, number 8, sequence 8, codec name 4 + 2 × 14: the string count at 53, the updates' at 57,
        // the alerts' at 61, the faults' at 65; the fault's message index is the int before the 8-byte hash).
        var output = new BucketOutput<string>(1, 1, 1, [], [], [new SeriesFault<string>("k", 1, SeriesFaultKind.ActualRejected, null!)]);
        byte[] bytes = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String).Write(output);
        Assert.Equal(1, BinaryPrimitives.ReadInt32LittleEndian(bytes.AsSpan(65)));

        byte[] hugeCount = (byte[])bytes.Clone();
        BinaryPrimitives.WriteInt32LittleEndian(hugeCount.AsSpan(65), 1_000_000);
        Rehash(hugeCount);
        byte[] badIndex = (byte[])bytes.Clone();
        BinaryPrimitives.WriteInt32LittleEndian(badIndex.AsSpan(badIndex.Length - 12), 5);
        Rehash(badIndex);

        Assert.Contains("declares 1000000 items", Assert.Throws<InvalidDataException>(() => BucketOutputReader.Read(hugeCount, SnapshotKeyCodecs.Utf8String)).Message, StringComparison.Ordinal);
        Assert.Contains("string index 5", Assert.Throws<InvalidDataException>(() => BucketOutputReader.Read(badIndex, SnapshotKeyCodecs.Utf8String)).Message, StringComparison.Ordinal);
    }

    private static void Rehash(byte[] bytes) =>
        BinaryPrimitives.WriteUInt64LittleEndian(bytes.AsSpan(bytes.Length - 8), XxHash3.HashToUInt64(bytes.AsSpan(0, bytes.Length - 8)));

    private static BucketOutput<string> WriteAndRead(BucketOutput<string> original)
    {
        var writer = new BucketOutputWriter<string>(SnapshotKeyCodecs.Utf8String);
        writer.Write(HostileOutput(new Random(99), items: 5)); // the writer is reused: nothing of an earlier output may leak
        return BucketOutputReader.Read(writer.Write(original), SnapshotKeyCodecs.Utf8String);
    }

    private static BucketOutput<string> HostileOutput(Random random, int items)
    {
        var forecasts = new ForecastUpdate<string>[items];
        for (int i = 0; i < items; i++)
        {
            // Every third update repeats the previous one with one field changed, so the left-out fields are exercised.
            forecasts[i] = i > 0 && i % 3 == 0
                ? forecasts[i - 1] with { Actual = Pick(random, HostileDoubles), Key = Pick(random, Keys) }
                : new ForecastUpdate<string>(
                    Pick(random, Keys), Pick(random, HostileLongs), Pick(random, Times), Pick(random, HostileDoubles), random.Next(2) == 0,
                    Pick(random, HostileDoubles), Pick(random, HostileDoubles), Point(random), random.Next(2) == 0 ? default : Point(random),
                    Errors(random), Pick(random, HostileStrings)!, random.Next(2) == 0)
                {
                    Event = random.Next(3) switch { 0 => null, 1 => EventKind.Promotion, _ => EventKind.Named("Fête du pain") },
                };
        }

        var alerts = new DriftAlert<string>[random.Next(4) == 0 ? 0 : random.Next(1, 30)];
        for (int i = 0; i < alerts.Length; i++)
        {
            var transition = new DriftTransition(
                (DriftTransitionKind)random.Next(-2, 5), (DriftRuleKind)random.Next(0, 9), Pick(random, HostileLongs), (DriftDirection)random.Next(0, 3),
                (DriftSeverity)random.Next(0, 3), Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileLongs), (DriftCloseReason)random.Next(0, 4))
            {
                Watched = (WatchedModel)random.Next(0, 2),
            };
            alerts[i] = new DriftAlert<string>(Pick(random, Keys), Pick(random, HostileLongs), Pick(random, Times), random.Next(int.MinValue, int.MaxValue), Pick(random, HostileStrings)!, transition, Errors(random));
        }

        var faults = new SeriesFault<string>[random.Next(3) == 0 ? 0 : random.Next(1, 10)];
        for (int i = 0; i < faults.Length; i++)
        {
            faults[i] = new SeriesFault<string>(Pick(random, Keys), Pick(random, HostileLongs), (SeriesFaultKind)random.Next(-1, 8), Pick(random, HostileStrings)!);
        }

        return new BucketOutput<string>(random.Next(), Pick(random, HostileLongs), Pick(random, HostileLongs), forecasts, alerts, faults);
    }

    private static ForecastPoint Point(Random random) => new(
        random.Next(int.MinValue, int.MaxValue), Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileDoubles),
        (IntervalKind)random.Next(0, 256), Pick(random, HostileDoubles));

    private static ErrorSummary Errors(Random random) => new(
        Pick(random, HostileLongs), Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileDoubles),
        Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileDoubles), Pick(random, HostileDoubles),
        Pick(random, HostileDoubles));

    private static T Pick<T>(Random random, T[] values) => values[random.Next(values.Length)];

    private static void AssertSame<TKey>(BucketOutput<TKey> expected, BucketOutput<TKey> actual)
        where TKey : notnull
    {
        Assert.Equal(Describe(expected), Describe(actual));
    }

    /// <summary>Every field of the output as text, doubles as their bits and strings with their code units, one line per item.</summary>
    private static List<string> Describe<TKey>(BucketOutput<TKey> o)
        where TKey : notnull
    {
        List<string> lines = [$"{o.Bucket} {o.Number} {o.Sequence} {o.Forecasts.Length} {o.Alerts.Length} {o.Faults.Length}"];
        foreach (ForecastUpdate<TKey> u in o.Forecasts)
        {
            lines.Add(string.Join('|', Text(u.Key), u.Period, Time(u.PeriodStart), Bits(u.Actual), u.IsImputed, Bits(u.ForecastForPeriod), Bits(u.Error),
                Point(u.Next), Point(u.AtHorizon), Errors(u.Errors), Text(u.Method), u.IsRestatement, Text(u.Event?.Name)));
        }

        foreach (DriftAlert<TKey> a in o.Alerts)
        {
            DriftTransition t = a.Transition;
            lines.Add(string.Join('|', Text(a.Key), a.Period, Time(a.PeriodStart), a.RuleIndex, Text(a.RuleName), (int)t.Kind, (int)t.Rule, t.EpisodeId,
                (int)t.Direction, (int)t.Severity, Bits(t.Signal), Bits(t.Level), t.PeriodsObserved, (int)t.Reason, (int)t.Watched, Errors(a.Errors)));
        }

        foreach (SeriesFault<TKey> f in o.Faults)
        {
            lines.Add(string.Join('|', Text(f.Key), f.Period, (int)f.Kind, Text(f.Message)));
        }

        return lines;

        static string Bits(double value) => BitConverter.DoubleToInt64Bits(value).ToString("X16", CultureInfo.InvariantCulture);

        static string Time(DateTimeOffset value) => $"{value.Ticks}{value.Offset}";

        static string Point(ForecastPoint p) => $"{p.Horizon},{Bits(p.Value)},{Bits(p.Lower)},{Bits(p.Upper)},{(int)p.Kind},{Bits(p.Coverage)}";

        static string Errors(ErrorSummary e) =>
            $"{e.ScoredPeriods},{Bits(e.Rsfe)},{Bits(e.Mad)},{Bits(e.SmoothedMad)},{Bits(e.Mse)},{Bits(e.Bias)},{Bits(e.Mape)},{Bits(e.Mase)},{Bits(e.TrackingSignal)},{Bits(e.TriggSignal)},{Bits(e.Sigma)}";

        static string Text(object? value) => value switch
        {
            null => "<null>",
            string s => string.Join(' ', s.Select(c => ((int)c).ToString("X4", CultureInfo.InvariantCulture))),
            _ => Convert.ToString(value, CultureInfo.InvariantCulture)!,
        };
    }
}
