using System.Buffers.Binary;
using System.Security.Cryptography;
using System.Text;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Streaming;

/// <summary>How a snapshot field is encoded.</summary>
internal enum FieldKind
{
    Boolean,
    Byte,
    Int32,
    Int64,
    Double,
    String,
}

/// <summary>
/// One field of an engine snapshot: the series it belongs to, a readable name, the part of the state it is in, how it is
/// encoded and where its bytes are (for strings, the UTF-8 bytes after the length).
/// </summary>
internal sealed record SnapshotField(string Key, string Name, string Group, FieldKind Kind, int Offset, int Length, int Index = -1)
{
    /// <summary>Parts of the state.</summary>
    public const string Structure = "structure", KeyGroup = "key", Series = "series", Forecaster = "forecaster", Tracker = "tracker",
        Rule = "rule", LagForecaster = "lag forecaster", LagTracker = "lag tracker", EventId = "event id";

    public override string ToString() => $"{Key}: {Name}";
}

/// <summary>
/// Walks the bytes of an engine snapshot (written with the UTF-8 string key codec) and lists every field, following the
/// layout written by <c>SeriesState.Write</c> independently of the reader, so an edit can be aimed at one field at a time.
/// </summary>
internal static class SnapshotFieldMap
{
    private static readonly string[] s_trackerNames =
    [
        "scored-period count", "zero-actual count", "actual count", "Σe", "Σe compensation", "Σ|e|", "Σ|e| compensation",
        "Σe²", "Σe² compensation", "Σ% errors", "Σ% compensation", "Σ|y|", "Σ|y| compensation", "naive sum", "naive compensation",
        "smoothed MAD", "Trigg E", "Trigg M", "last error",
    ];

    public static List<SnapshotField> Fields(byte[] snapshot, Func<string, SeriesOptions> resolve)
    {
        var fields = new List<SnapshotField>();
        int sectionCount = BinaryPrimitives.ReadInt32LittleEndian(snapshot.AsSpan(22));
        int offset = 26 + (4 * sectionCount);
        for (int s = 0; s < sectionCount; s++)
        {
            int length = BinaryPrimitives.ReadInt32LittleEndian(snapshot.AsSpan(26 + (4 * s)));
            if (s > 0)
            {
                new Walker(snapshot, offset, fields, resolve).Section();
            }

            offset += length;
        }

        return fields;
    }

    /// <summary>Recomputes the SHA-256 checksum over everything before it, as a writer would.</summary>
    public static void Reseal(byte[] snapshot) =>
        SHA256.HashData(snapshot.AsSpan(0, snapshot.Length - SnapshotFormat.ChecksumLength), snapshot.AsSpan(snapshot.Length - SnapshotFormat.ChecksumLength));

    private sealed class Walker(byte[] bytes, int offset, List<SnapshotField> fields, Func<string, SeriesOptions> resolve)
    {
        private int _at = offset;
        private string _key = "";

        public void Section()
        {
            int count = Int32("series count", SnapshotField.Structure);
            for (int i = 0; i < count; i++)
            {
                int keyLength = Int32("key length", SnapshotField.Structure);
                _key = Encoding.UTF8.GetString(bytes, _at, keyLength);
                Add("key", SnapshotField.KeyGroup, FieldKind.String, keyLength);
                Series(resolve(_key));
            }
        }

        private void Series(SeriesOptions options)
        {
            var model = new TrackedForecaster(options.Method, options.Tracking);
            int forecasterLength = model.Forecaster.StateLength;
            String("method label", SnapshotField.Series);
            Add("started", SnapshotField.Series, FieldKind.Boolean, 1);
            Add("first open period", SnapshotField.Series, FieldKind.Int64, 8);
            Add("latest event time", SnapshotField.Series, FieldKind.Int64, 8);
            Add("last actual", SnapshotField.Series, FieldKind.Double, 8);
            Add("last actual flag", SnapshotField.Series, FieldKind.Boolean, 1);
            Add("quiet periods", SnapshotField.Series, FieldKind.Int64, 8);
            int open = Int32("open period count", SnapshotField.Structure);
            for (int i = 0; i < open; i++)
            {
                Add($"open[{i}].period", SnapshotField.Series, FieldKind.Int64, 8);
                Add($"open[{i}].sum", SnapshotField.Series, FieldKind.Double, 8);
            }

            Model("", forecasterLength);
            int rules = Int32("rule count", SnapshotField.Structure);
            for (int r = 0; r < rules; r++)
            {
                int length = Int32($"rule[{r}] length", SnapshotField.Structure);
                for (int k = 0; k < length; k++)
                {
                    Add($"rule[{r}][{k}]", SnapshotField.Rule, FieldKind.Double, 8, k);
                }
            }

            int closed = Int32("retained period count", SnapshotField.Structure);
            if (options.Lateness.RestatementPeriods > 0)
            {
                for (int i = 0; i < closed; i++)
                {
                    Add($"retained[{i}].sum", SnapshotField.Series, FieldKind.Double, 8);
                    Add($"retained[{i}].flag", SnapshotField.Series, FieldKind.Byte, 1);
                }

                Model("lag ", forecasterLength);
                Add("lag last actual", SnapshotField.Series, FieldKind.Double, 8);
                Add("lag last actual flag", SnapshotField.Series, FieldKind.Boolean, 1);
            }

            int ids = Int32("event id count", SnapshotField.Structure);
            for (int i = 0; i < ids; i++)
            {
                String($"id[{i}]", SnapshotField.EventId);
                Add($"id[{i}].period", SnapshotField.EventId, FieldKind.Int64, 8);
            }
        }

        private void Model(string prefix, int forecasterLength)
        {
            int length = Int32(prefix + "model length", SnapshotField.Structure);
            for (int k = 0; k < length; k++)
            {
                if (k < forecasterLength)
                {
                    Add($"{prefix}forecaster[{k}]", prefix.Length == 0 ? SnapshotField.Forecaster : SnapshotField.LagForecaster, FieldKind.Double, 8, k);
                }
                else
                {
                    int t = k - forecasterLength;
                    string name = t < s_trackerNames.Length ? s_trackerNames[t] : $"held actual {t - s_trackerNames.Length}";
                    Add($"{prefix}tracker[{t}] {name}", prefix.Length == 0 ? SnapshotField.Tracker : SnapshotField.LagTracker, FieldKind.Double, 8, t);
                }
            }
        }

        private int Int32(string name, string group)
        {
            int value = BinaryPrimitives.ReadInt32LittleEndian(bytes.AsSpan(_at));
            Add(name, group, FieldKind.Int32, 4);
            return value;
        }

        private void String(string name, string group)
        {
            int length = Int32(name + " length", SnapshotField.Structure);
            Add(name, group, FieldKind.String, length);
        }

        private void Add(string name, string group, FieldKind kind, int length, int index = -1)
        {
            fields.Add(new SnapshotField(_key, name, group, kind, _at, length, index));
            _at += length;
        }
    }
}
