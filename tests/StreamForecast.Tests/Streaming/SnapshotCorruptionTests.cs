using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using Microsoft.Extensions.Time.Testing;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;
using StreamForecast.Tests.Alerts;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tests.Tracking;
using StreamForecast.Tracking;
using Xunit.Abstractions;

namespace StreamForecast.Tests.Streaming;

/// <summary>
/// Edits of a real engine snapshot, one field at a time, with the checksum recomputed as a writer bug would: every edit to
/// a value no run can reach is refused with a clear message, and the random edits that are still accepted fall in classes
/// that are reachable (each argued below).
/// </summary>
public sealed partial class SnapshotCorruptionTests(ITestOutputHelper output)
{
    private static readonly DateTimeOffset s_start = new(2027, 5, 3, 8, 0, 0, TimeSpan.Zero);
    private static readonly PeriodCalendar s_minutes = PeriodCalendar.FixedInterval(TimeSpan.FromMinutes(1));

    // A bakery chain and a fleet of sensors (invented): restatement with carried-forward gaps, open periods under
    // lateness, drift episodes open at the snapshot, an acknowledged series, a refused actual, event ids, and a series
    // created by an event outside the calendar that never started.
    private static SeriesOptions Resolve(string key) => key switch
    {
        "bakery/rye" => new SeriesOptions(new MovingAverageOptions(3), s_minutes, new LatenessPolicy(TimeSpan.FromMinutes(2), restatementPeriods: 3),
            GapPolicy.CarryForward, rules: [new TrackingSignalRuleOptions(limit: 2, warmUpPeriods: 1), new CusumRuleOptions(decisionInterval: 2, warmUpPeriods: 1)],
            duplicateWindow: 16),
        "bakery/spelt" => new SeriesOptions(new ExponentialSmoothingOptions(0.3), s_minutes, new LatenessPolicy(TimeSpan.FromSeconds(90)), GapPolicy.Zero,
            rules: [new TrackingSignalRuleOptions(limit: 2, warmUpPeriods: 1), new TriggSignalRuleOptions(limit: 0.4, warmUpPeriods: 1)], duplicateWindow: 8),
        "sensor/7" => new SeriesOptions(new CrostonOptions(), s_minutes, default, GapPolicy.Missing,
            rules: [new CusumRuleOptions(decisionInterval: 1.5, resetAfterAlarm: true, warmUpPeriods: 0)]),
        "shop/3" => new SeriesOptions(new NaiveOptions(), s_minutes, new LatenessPolicy(TimeSpan.Zero, restatementPeriods: 1), GapPolicy.Zero, duplicateWindow: 4),
        _ => new SeriesOptions(new NaiveOptions(), s_minutes),
    };

    private static ForecastEngineOptions<string> EngineOptions() =>
        new(Resolve("default"), Resolve, partitions: 1, timeProvider: new FakeTimeProvider(s_start), maxEventTimeAhead: Timeout.InfiniteTimeSpan,
            publishing: new PublishingOptions(100_000, 100_000));

    private static readonly Lazy<(byte[] Bytes, EngineRecorder<string> Recorder, EngineCounters Counters)> s_snapshot = new(() => TakeSnapshot().GetAwaiter().GetResult());

    private static async Task<(byte[], EngineRecorder<string>, EngineCounters)> TakeSnapshot()
    {
        var engine = new ForecastEngine<string>(EngineOptions());
        var recorder = EngineRecorder<string>.Attach(engine);
        Task Post(string key, double minute, double quantity, string? id = null) =>
            engine.PostAsync(new Observation<string>(key, s_start.AddMinutes(minute), quantity, id)).AsTask();

        await Post("sensor/8", 0, 1).ContinueWith(_ => { }); // creates the series; the next event is outside the calendar
        for (int m = 0; m < 40; m++)
        {
            await Post("bakery/rye", m + 0.2, m < 20 ? 10 + (m % 3) : 10 + (3 * (m - 20)), $"rye-{m}");
            if (m % 4 != 1)
            {
                await Post("bakery/spelt", m + 0.5, m < 25 ? 20 + (m % 2) : 4);
            }

            if (m % 3 == 0)
            {
                await Post("sensor/7", m + 0.1, m == 12 ? -5 : 2 + (m % 2));
            }

            await Post("shop/3", m + 0.7, 5 + (m % 4), $"till-{m}");
            if (m % 5 == 0)
            {
                await Post("shop/3", m + 0.8, 5 + (m % 4), $"till-{m}"); // a repeat of the same event: counted and ignored
            }
            if (m is 15 or 27 or 33)
            {
                await Post("bakery/rye", m - 2.6, 7, $"late-{m}"); // restates a closed period
            }

            if (m == 30)
            {
                await engine.AcknowledgeAsync("sensor/7");
            }
        }

        await engine.PostAsync(new Observation<string>("sensor/9", DateTimeOffset.MaxValue, 1)); // outside the calendar: never starts
        using var stream = new MemoryStream();
        await engine.SnapshotAsync(stream, SnapshotKeyCodecs.Utf8String, inputPosition: 321);
        EngineCounters counters = engine.GetCounters();
        await engine.DisposeAsync();
        return (stream.ToArray(), recorder, counters);
    }

    private static byte[] Snapshot => s_snapshot.Value.Bytes;

    private static List<SnapshotField> Fields => SnapshotFieldMap.Fields(Snapshot, Resolve);

    /// <summary>Runs every restore check (as <see cref="ForecastEngine.RestoreAsync{TKey}(Stream, ForecastEngineOptions{TKey}, ISnapshotKeyCodec{TKey}, CancellationToken)"/> does, without starting an engine); null when accepted.</summary>
    private static string? Refusal(byte[] bytes)
    {
        try
        {
            ForecastEngine.ReadSnapshot(new MemoryStream(bytes), EngineOptions(), SnapshotKeyCodecs.Utf8String);
            return null;
        }
        catch (InvalidDataException ex)
        {
            return ex.Message;
        }
    }

    [Fact]
    public void Snapshot_Scenario_HoldsEveryKindOfStateTheEditsAimAt()
    {
        (byte[] bytes, EngineRecorder<string> recorder, EngineCounters counters) = s_snapshot.Value;
        Assert.Null(Refusal(bytes));
        (List<SeriesState<string>> series, long position) = ForecastEngine.ReadSnapshot(new MemoryStream(bytes), EngineOptions(), SnapshotKeyCodecs.Utf8String);
        Assert.Equal(321, position);
        Assert.Equal(6, series.Count);
        Assert.True(counters.Restated >= 3, $"restated {counters.Restated}, counters {counters}");
        Assert.True(counters.Duplicates > 0);
        Assert.Equal(1, counters.RejectedActuals);

        // Drift episodes open when the snapshot was taken, in the rye (under-forecast) and spelt (over-forecast) series.
        var open = recorder.Alerts.GroupBy(a => (a.Key, a.RuleIndex, a.Transition.EpisodeId))
            .Where(g => g.Last().Transition.Kind != DriftTransitionKind.Cleared).Select(g => g.Key.Key).ToHashSet();
        Assert.Contains("bakery/rye", open);
        Assert.Contains("bakery/spelt", open);

        List<SnapshotField> fields = Fields;
        Assert.Contains(fields, f => f.Key == "bakery/rye" && f.Name == "open[1].period");
        Assert.Contains(fields, f => f.Key == "bakery/rye" && f.Name == "retained[2].flag");
        Assert.Contains(fields, f => f.Key == "bakery/rye" && f.Name == "id[3].period");
        Assert.Contains(fields, f => f.Key == "shop/3" && f.Name == "retained[0].sum");
        Assert.Contains(fields, f => f.Key == "sensor/9" && f.Name == "started");
        Assert.Equal(0, Read<byte>(bytes, fields.Single(f => f.Key == "sensor/9" && f.Name == "started")));
    }

    // ---- Systematic: every field, a list of values no run can reach -------------------------------------------------------

    [Fact]
    public void ReadSnapshot_EachFieldEditedToAnUnreachableValue_RefusedNamingTheSeries()
    {
        byte[] good = Snapshot;
        List<SnapshotField> fields = Fields;
        var context = fields.Where(f => f.Key.Length > 0).GroupBy(f => f.Key).ToDictionary(g => g.Key, g => new SeriesContext(good, g.ToList(), Resolve(g.Key)));
        int edits = 0;
        var covered = new HashSet<string>();
        var failures = new List<string>();
        foreach (SnapshotField field in fields)
        {
            foreach ((string why, byte[] bad) in UnreachableEdits(good, field, context.GetValueOrDefault(field.Key)))
            {
                edits++;
                string? refusal = Refusal(bad);
                if (refusal is null)
                {
                    failures.Add($"{field} ({why}) was accepted");
                    continue;
                }

                // Series-level refusals name the series; structural ones (a count that no longer fits) name the offset.
                bool named = field.Group == SnapshotField.Structure || field.Name == "method label"
                    ? refusal.Length > 20
                    : refusal.Contains($"'{field.Key}'", StringComparison.Ordinal);
                if (!named)
                {
                    failures.Add($"{field} ({why}): the refusal does not name the series: {refusal}");
                }

                covered.Add(field.Group + ": " + Pattern(field.Name));
            }
        }

        output.WriteLine($"{edits} unreachable edits over {fields.Count} fields; field kinds covered:");
        foreach (string c in covered.Order(StringComparer.Ordinal))
        {
            output.WriteLine("  " + c);
        }

        Assert.True(failures.Count == 0, string.Join(Environment.NewLine, failures));

        // Every named field of a series (counts, positions, sums, flags, ids, model and rule numbers) is covered.
        foreach (string name in new[]
        {
            "series: started", "series: first open period", "series: latest event time", "series: last actual", "series: last actual flag",
            "series: quiet periods", "series: open[].period", "series: open[].sum", "series: retained[].sum", "series: retained[].flag",
            "series: lag last actual", "series: lag last actual flag", "series: method label", "event id: id[]", "event id: id[].period",
            "tracker: tracker[]", "rule: rule[][]", "forecaster: forecaster[]", "lag forecaster: lag forecaster[]", "lag tracker: lag tracker[]",
            "structure: open period count", "structure: model length", "structure: retained period count", "structure: event id count",
        })
        {
            Assert.Contains(name, covered);
        }
    }

    /// <summary>What a series' other fields say, to aim edits at values that contradict them.</summary>
    private sealed class SeriesContext
    {
        public SeriesContext(byte[] bytes, List<SnapshotField> fields, SeriesOptions options)
        {
            Options = options;
            Fields = fields;
            Started = Read<byte>(bytes, Find("started")) == 1;
            Next = Read<long>(bytes, Find("first open period"));
            long ticks = Read<long>(bytes, Find("latest event time"));
            Latest = Started ? s_minutes.PeriodOf(new DateTimeOffset(ticks, TimeSpan.Zero)) : 0;
            Capacity = SeriesState<string>.OpenCapacity(s_minutes, options.Lateness.AllowedLateness);
            HasLast = Read<byte>(bytes, Find("last actual flag")) == 1;
            LastActual = Read<double>(bytes, Find("last actual"));
            Tracker = fields.Where(f => f.Group == SnapshotField.Tracker).Select(f => Read<double>(bytes, f)).ToArray();
            Ids = fields.Where(f => f.Group == SnapshotField.EventId && f.Kind == FieldKind.String).Select(f => Encoding.UTF8.GetString(bytes, f.Offset, f.Length)).ToList();
            Rules = [.. fields.Where(f => f.Group == SnapshotField.Rule).GroupBy(f => f.Name[..f.Name.IndexOf(']', StringComparison.Ordinal)])
                .Select(g => g.Select(f => Read<double>(bytes, f)).ToArray())];
        }

        public SeriesOptions Options { get; }

        public List<SnapshotField> Fields { get; }

        public bool Started { get; }

        public long Next { get; }

        public long Latest { get; }

        public int Capacity { get; }

        public bool HasLast { get; }

        public double LastActual { get; }

        public double[] Tracker { get; }

        public List<string> Ids { get; }

        public List<double[]> Rules { get; }

        public bool Restates => Options.Lateness.RestatementPeriods > 0;

        private SnapshotField Find(string name) => Fields.Single(f => f.Name == name);
    }

    /// <summary>For one field, edits to values no run can reach given the rest of the series (each with why).</summary>
    private static IEnumerable<(string Why, byte[] Bytes)> UnreachableEdits(byte[] good, SnapshotField f, SeriesContext? c)
    {
        switch (f.Group, f.Kind)
        {
            case (SnapshotField.Structure, _):
                int count = Read<int>(good, f);
                yield return ("one more than written", With(good, f, count + 1));
                yield return ("negative", With(good, f, -1));
                if (count > 0)
                {
                    yield return ("one fewer than written", With(good, f, count - 1));
                }

                yield break;
            case (SnapshotField.KeyGroup, _):
                yield break; // another key with the same state is reachable; see the random edits
            case (SnapshotField.EventId, FieldKind.String):
                string id = Encoding.UTF8.GetString(good, f.Offset, f.Length);
                string? twin = c!.Ids.FirstOrDefault(other => other != id && other.Length == id.Length);
                if (twin is not null)
                {
                    yield return ("the same id as another remembered id", WithString(good, f, twin));
                }

                yield break;
            case (SnapshotField.EventId, FieldKind.Int64):
                yield return ("a period after the latest event's period", With(good, f, c!.Latest + 1));
                yield return ("a period before the calendar", With(good, f, s_minutes.MinPeriod - 1));
                yield break;
            case (SnapshotField.Tracker, _):
                yield return ("NaN", With(good, f, double.NaN));
                foreach ((int index, string why, double edited, string _) in ErrorTrackerStateTests.UnreachableEdits(f.Key, c!.Tracker, c.Options.Tracking))
                {
                    if (index == f.Index && BitConverter.DoubleToInt64Bits(edited) != BitConverter.DoubleToInt64Bits(c.Tracker[index]))
                    {
                        yield return (why, With(good, f, edited));
                    }
                }

                yield break;
            case (SnapshotField.Rule, _):
                yield return ("NaN", With(good, f, double.NaN));
                int rule = int.Parse(f.Name[5..f.Name.IndexOf(']', StringComparison.Ordinal)], CultureInfo.InvariantCulture);
                foreach (DriftRuleStateTests.Edit edit in DriftRuleStateTests.Malformed(c!.Rules[rule], c.Options.Rules[rule]))
                {
                    if (edit.Index == f.Index)
                    {
                        yield return (edit.Why, With(good, f, edit.Value));
                    }
                }

                yield break;
            case (SnapshotField.Forecaster or SnapshotField.LagForecaster or SnapshotField.LagTracker, _):
                yield return ("NaN", With(good, f, double.NaN));
                if (c!.Restates && !(f.Group == SnapshotField.LagTracker && f.Index == 18))
                {
                    // The model must be the lagged model replayed through the retained periods; a changed number in either
                    // breaks that (the forecasters' own checks are not relied on here). Not the lagged tracker's last error:
                    // the replay overwrites it, and a nearby last error is consistent with the lagged sums.
                    yield return ("one more", With(good, f, Read<double>(good, f) + 1));
                }

                yield break;
        }

        // The series' own fields.
        double value = f.Kind == FieldKind.Double ? Read<double>(good, f) : 0;
        switch (Pattern(f.Name))
        {
            case "method label":
                yield return ("another method's label", WithString(good, f, new string('X', f.Length)));
                break;
            case "started":
                yield return ("the started flag flipped", With(good, f, (byte)(c!.Started ? 0 : 1)));
                yield return ("a flag that is neither 0 nor 1", With(good, f, (byte)2));
                break;
            case "first open period":
                yield return ("after the calendar", With(good, f, s_minutes.MaxPeriod + 1));
                if (c!.Started)
                {
                    yield return ("before the calendar", With(good, f, s_minutes.MinPeriod - 1));
                    yield return ("far after the latest event with few quiet periods", With(good, f, c.Next + 100_000));
                    yield return ("so early the latest event could not have been open", With(good, f, c.Latest - c.Capacity));
                }
                else
                {
                    yield return ("a position before any event", With(good, f, c.Next + 1));
                }

                break;
            case "latest event time":
                yield return ("negative ticks", With(good, f, -1L));
                yield return ("beyond the last supported instant", With(good, f, DateTimeOffset.MaxValue.UtcTicks));
                if (c!.Started)
                {
                    yield return ("ten days later: the first open period would have closed", With(good, f, Read<long>(good, f) + TimeSpan.FromDays(10).Ticks));
                    yield return ("before the first open period although its data came from events", With(good, f, s_minutes.StartOf(c.Next).UtcTicks - TimeSpan.FromMinutes(5).Ticks));
                }

                break;
            case "last actual" or "lag last actual":
                yield return ("NaN", With(good, f, double.NaN));
                yield return ("infinity", With(good, f, double.PositiveInfinity));
                if (!c!.HasLast || c.Restates || c.Tracker[2] > 0)
                {
                    // Without a last actual it is 0; with one, it is the newest actual the tracker holds (and the replay's).
                    yield return ("one more", With(good, f, value + 1));
                }

                break;
            case "last actual flag" or "lag last actual flag":
                yield return ("flipped: disagrees with the model's count", With(good, f, (byte)(Read<byte>(good, f) == 1 ? 0 : 1)));
                break;
            case "quiet periods":
                yield return ("negative", With(good, f, -1L));
                yield return ("more than the periods that have closed", With(good, f, c!.Next - s_minutes.MinPeriod + 1));
                if (c.Options.Gaps == GapPolicy.Zero && !c.Restates && c.LastActual != 0 && Read<long>(good, f) == 0)
                {
                    yield return ("the last closed period empty, yet a last actual other than the 0 it fed", With(good, f, 1L));
                }

                break;
            case "open[].period":
                yield return ("before the first open period", With(good, f, c!.Next - 1));
                yield return ("after the latest event's period", With(good, f, c.Latest + 1));
                break;
            case "open[].sum" or "retained[].sum":
                yield return ("NaN", With(good, f, double.NaN));
                yield return ("infinity", With(good, f, double.NegativeInfinity));
                break;
            case "retained[].flag":
                yield return ("a flag that is neither 0 nor 1", With(good, f, (byte)2));
                yield return ("a flag of 255", With(good, f, (byte)255));
                break;
        }
    }

    // ---- The public restore refuses the same edits ---------------------------------------------------------------------

    [Fact]
    public async Task RestoreAsync_UnreachableEditOfEachPart_RefusedWithTheSeriesNamed()
    {
        byte[] good = Snapshot;
        List<SnapshotField> fields = Fields;
        var context = fields.Where(f => f.Key.Length > 0).GroupBy(f => f.Key).ToDictionary(g => g.Key, g => new SeriesContext(good, g.ToList(), Resolve(g.Key)));
        foreach (string group in new[] { SnapshotField.Series, SnapshotField.Tracker, SnapshotField.Rule, SnapshotField.LagForecaster, SnapshotField.EventId })
        {
            SnapshotField field = fields.First(f => f.Group == group && f.Key == "bakery/rye" && UnreachableEdits(good, f, context[f.Key]).Any());
            (string why, byte[] bad) = UnreachableEdits(good, field, context[field.Key]).First();
            var ex = await Assert.ThrowsAsync<InvalidDataException>(() => ForecastEngine.RestoreAsync(new MemoryStream(bad), EngineOptions(), SnapshotKeyCodecs.Utf8String));
            Assert.Contains("'bakery/rye'", ex.Message, StringComparison.Ordinal);
            output.WriteLine($"{field} ({why}): {ex.Message}");
        }

        // Untouched, the snapshot restores.
        var (engine, position) = await ForecastEngine.RestoreAsync(new MemoryStream(good), EngineOptions(), SnapshotKeyCodecs.Utf8String);
        Assert.Equal(321, position);
        Assert.Equal(6, engine.SeriesCount);
        await engine.DisposeAsync();
    }

    // ---- Byte helpers ----------------------------------------------------------------------------------------------------

    /// <summary>A field name with its indices removed and the tracker's number names dropped, e.g. <c>open[].period</c>, <c>tracker[]</c>.</summary>
    private static string Pattern(string name)
    {
        string p = System.Text.RegularExpressions.Regex.Replace(name, @"\[\d+\]", "[]");
        int cut = p.IndexOf("tracker[]", StringComparison.Ordinal);
        return cut >= 0 ? p[..(cut + "tracker[]".Length)] : p;
    }

    private static T Read<T>(byte[] bytes, SnapshotField f)
        where T : unmanaged
    {
        ReadOnlySpan<byte> span = bytes.AsSpan(f.Offset);
        object value;
        if (typeof(T) == typeof(double))
        {
            value = BinaryPrimitives.ReadDoubleLittleEndian(span);
        }
        else if (typeof(T) == typeof(long))
        {
            value = BinaryPrimitives.ReadInt64LittleEndian(span);
        }
        else if (typeof(T) == typeof(int))
        {
            value = BinaryPrimitives.ReadInt32LittleEndian(span);
        }
        else
        {
            value = span[0];
        }

        return (T)value;
    }

    private static byte[] With(byte[] good, SnapshotField f, double value) => Edit(good, s => BinaryPrimitives.WriteDoubleLittleEndian(s.Slice(f.Offset), value));

    private static byte[] With(byte[] good, SnapshotField f, long value) => Edit(good, s => BinaryPrimitives.WriteInt64LittleEndian(s.Slice(f.Offset), value));

    private static byte[] With(byte[] good, SnapshotField f, int value) => Edit(good, s => BinaryPrimitives.WriteInt32LittleEndian(s.Slice(f.Offset), value));

    private static byte[] With(byte[] good, SnapshotField f, byte value) => Edit(good, s => s[f.Offset] = value);

    private static byte[] WithString(byte[] good, SnapshotField f, string value)
    {
        byte[] utf8 = Encoding.UTF8.GetBytes(value);
        Assert.Equal(f.Length, utf8.Length); // same length: only the field changes
        return Edit(good, s => utf8.CopyTo(s.Slice(f.Offset)));
    }

    private delegate void SpanAction(Span<byte> bytes);

    private static byte[] Edit(byte[] good, SpanAction change)
    {
        byte[] bad = (byte[])good.Clone();
        change(bad);
        SnapshotFieldMap.Reseal(bad);
        return bad;
    }
}
