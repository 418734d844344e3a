using System.Collections.Immutable;
using Microsoft.Data.Sqlite;
using Orleans.Serialization;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Streaming;

namespace StreamForecast.Orleans.Tests;

/// <summary>
/// The workload the cluster tests share: hourly throughput of an invented fleet of sensors (demo data, not a
/// reference), with skewed key frequencies, events out of order within the allowed lateness, and repeated event ids.
/// The single-process engine on the same input is the oracle.
/// </summary>
internal static class ClusterScenario
{
    public static readonly DateTimeOffset Start = new(2025, 6, 2, 0, 0, 0, TimeSpan.Zero);

    public static ForecastEngineOptions<string> EngineOptions(int partitions = 2) => new(
        new SeriesOptions(
            new MovingAverageOptions(4),
            PeriodCalendar.FixedInterval(TimeSpan.FromHours(1)),
            lateness: new LatenessPolicy(TimeSpan.FromMinutes(90), restatementPeriods: 2),
            rules: ImmutableArray.Create<DriftRuleOptions>(new TrackingSignalRuleOptions(), new CusumRuleOptions()),
            duplicateWindow: 64),
        partitions: partitions);

    /// <summary>Keys "site-s/sensor-n"; key i gets about 1 + 40 / (i + 1) readings per hour (a few very busy sensors, many quiet ones).</summary>
    public static List<Observation<string>> Stream(int keys, int hours, int seed)
    {
        var random = new Random(seed);
        var events = new List<Observation<string>>();
        int id = 0;
        for (int h = 0; h < hours; h++)
        {
            var hour = new List<Observation<string>>();
            for (int k = 0; k < keys; k++)
            {
                string key = $"site-{k % 7}/sensor-{k}";
                int readings = 1 + (40 / (k + 1)) - (random.Next(3) == 0 ? 1 : 0);
                double level = 20 + (k % 13) + (h > hours / 2 && k % 5 == 0 ? 15 : 0);
                for (int r = 0; r < readings; r++)
                {
                    DateTimeOffset at = Start.AddHours(h).AddSeconds(random.Next(3600));
                    var o = new Observation<string>(key, at, Math.Round(level + (random.NextDouble() * 6) - 3, 2), $"e{id++}");
                    hour.Add(o);
                    if (random.Next(40) == 0)
                    {
                        hour.Add(o); // the same event delivered twice upstream
                    }
                }
            }

            // Within the hour the order is shuffled: out of order, but well inside the 90-minute lateness.
            events.AddRange(hour.OrderBy(_ => random.Next()));
        }

        return events;
    }

    /// <summary>Each series' full state in the engine's own encoding, by key: equal bytes mean equal sums, counts, models, rules and remembered ids.</summary>
    public static Dictionary<string, byte[]> StatesOfSnapshot(byte[] snapshot, ForecastEngineOptions<string> options)
    {
        using var stream = new MemoryStream(snapshot);
        SnapshotContent content = SnapshotFormat.Read(stream);
        var series = new List<SeriesState<string>>();
        for (int i = 1; i < content.Sections.Count; i++)
        {
            SnapshotSection<string>.Read(content.Sections[i], SnapshotKeyCodecs.Utf8String, options.Resolve, 0, series);
        }

        var byKey = new Dictionary<string, byte[]>(StringComparer.Ordinal);
        foreach (SeriesState<string> s in series)
        {
            var writer = new SnapshotPayloadWriter();
            s.Write(writer);
            byKey.Add(s.Key, writer.WrittenMemory.ToArray());
        }

        return byKey;
    }

    /// <summary>Reads every bucket's newest stored state straight from the shared SQLite file, decodes it, and returns each series' state bytes.</summary>
    public static Dictionary<string, byte[]> StatesOfStore(string databasePath, Serializer serializer, ForecastEngineOptions<string> options)
    {
        var byKey = new Dictionary<string, byte[]>(StringComparer.Ordinal);
        using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = databasePath, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
        connection.Open();
        using SqliteCommand select = connection.CreateCommand();
        select.CommandText = "SELECT c.snapshot FROM checkpoints c WHERE c.sequence = (SELECT max(sequence) FROM checkpoints d WHERE d.stream = c.stream) AND c.stream LIKE 'bucket/%'";
        using SqliteDataReader reader = select.ExecuteReader();
        while (reader.Read())
        {
            byte[] stored = reader.GetFieldValue<byte[]>(0);
            BucketState<string> state = serializer.Deserialize<BucketState<string>>(stored.AsMemory(1))!;
            if (state.Series is null)
            {
                continue;
            }

            foreach ((string key, byte[] bytes) in StatesOfSnapshot(state.Series, options))
            {
                byKey.Add(key, bytes);
            }
        }

        return byKey;
    }
}
