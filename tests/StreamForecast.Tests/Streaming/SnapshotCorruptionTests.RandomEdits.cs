using System.Buffers.Binary;
using System.Text;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Streaming;

// Random single-field edits of the snapshot: the share still accepted, and why each accepted edit is a reachable state.
public sealed partial class SnapshotCorruptionTests
{
    // ---- Random single-field edits: how many are still accepted, and of which kinds -----------------------------------

    /// <summary>The ways a field is edited at random, by encoding.</summary>
    private static readonly Dictionary<FieldKind, string[]> s_editKinds = new()
    {
        [FieldKind.Double] = ["zero", "negate", "plus one", "minus one", "double", "half", "relative 1e-12", "next double", "NaN", "infinity", "1e300", "bit flip", "random ±1000"],
        [FieldKind.Int64] = ["plus one", "minus one", "zero", "double", "negate", "max", "bit flip"],
        [FieldKind.Int32] = ["plus one", "minus one", "zero", "double", "negate", "max", "bit flip"],
        [FieldKind.Boolean] = ["flip", "two"],
        [FieldKind.Byte] = ["flip", "two", "255"],
        [FieldKind.String] = ["change one character"],
    };

    [Fact]
    public void ReadSnapshot_RandomSingleFieldEdits_AcceptedOnlyInReachableClasses()
    {
        byte[] good = Snapshot;
        List<SnapshotField> fields = Fields.Where(f => f.Length > 0).ToList();
        var rng = new Random(20270503);
        int tries = PropertyCases.PerFamily;
        int refused = 0;
        var accepted = new Dictionary<string, int>(StringComparer.Ordinal);
        var byGroup = new Dictionary<string, (int Edits, int Accepted)>(StringComparer.Ordinal);
        var byReason = new Dictionary<string, int>(StringComparer.Ordinal);
        var unexplained = new List<string>();
        for (int t = 0; t < tries; t++)
        {
            SnapshotField f = fields[rng.Next(fields.Count)];
            string kind = s_editKinds[f.Kind][rng.Next(s_editKinds[f.Kind].Length)];
            byte[]? bad = RandomEdit(good, f, kind, rng);
            if (bad is null)
            {
                t--; // the edit left the bytes as they were: not an edit
                continue;
            }

            string? refusal = Refusal(bad);
            (int edits, int ok) = byGroup.GetValueOrDefault(f.Group);
            byGroup[f.Group] = (edits + 1, ok + (refusal is null ? 1 : 0));
            if (refusal is not null)
            {
                refused++;
                continue;
            }

            string @class = $"{f.Group} / {(f.Index >= 0 ? f.Name : Pattern(f.Name))} / {kind}";
            accepted[@class] = accepted.GetValueOrDefault(@class) + 1;
            string? reason = WhyReachable(f, good, bad);
            if (reason is null)
            {
                unexplained.Add($"{f} ← {kind}");
            }
            else
            {
                byReason[reason] = byReason.GetValueOrDefault(reason) + 1;
            }
        }

        int acceptedCount = tries - refused;
        output.WriteLine($"{tries} random single-field edits, checksum recomputed: {acceptedCount} accepted ({100.0 * acceptedCount / tries:F2} %), {refused} refused.");
        output.WriteLine("By part of the state:");
        foreach ((string group, (int edits, int ok)) in byGroup.OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            output.WriteLine($"  {group,-15} {edits,6} edits, {ok,5} accepted ({100.0 * ok / edits:F1} %)");
        }

        output.WriteLine("Accepted edits by why the state is reachable (share of all edits):");
        foreach ((string reason, int n) in byReason.OrderByDescending(r => r.Value))
        {
            output.WriteLine($"  {n,5} ({100.0 * n / tries:F2} %)  {reason}");
        }

        output.WriteLine("Accepted classes (group / field / edit):");
        foreach ((string @class, int n) in accepted.OrderByDescending(a => a.Value))
        {
            output.WriteLine($"  {n,5}  {@class}");
        }

        Assert.True(unexplained.Count == 0, "accepted edits outside the reachable classes: " + string.Join("; ", unexplained.Distinct().Take(40)));
    }

    // Why an accepted edit gives a state some run reaches; null when no reason applies (the test then fails).
    private const string OtherEvents = "A: the same state after other events (another key, event id, event period, quantity, event instant, pattern of empty periods, or rule inputs)";
    private const string Rounding = "B: a sum or smoothed value changed within the rounding it can carry (compensations, the last bits)";
    private const string Summary = "C: an error statistic changed to a value consistent with every relation among the tracker's numbers (other error histories give it; method-specific links between a forecaster's state and the last error are not checked)";
    private const string ForecasterChecks = "D: a forecaster's number, checked by the forecaster's own import (the forecasters' checks are reworked separately)";

    private static readonly int[] s_compensations = [4, 6, 8, 10, 12, 14];

    private static string? WhyReachable(SnapshotField f, byte[] good, byte[] bad)
    {
        switch (f.Group)
        {
            case SnapshotField.KeyGroup:
            case SnapshotField.EventId:
            case SnapshotField.Rule:
                // Another key or id of the same length; an id's event in another period within the calendar up to the latest
                // event's (late events keep their ids until they reach the front of the window); an episode id, severity or
                // period count of a rule that is not tied to the tracker (restatement on, or a CUSUM).
                return OtherEvents;
            case SnapshotField.Forecaster:
            case SnapshotField.LagForecaster:
                return ForecasterChecks;
            case SnapshotField.Tracker:
            case SnapshotField.LagTracker:
                double before = Read<double>(good, f), after = Read<double>(bad, f);
                return s_compensations.Contains(f.Index) || Math.Abs(after - before) <= 1e-9 * Math.Abs(before)
                    ? Rounding
                    : Summary;
        }

        return Pattern(f.Name) switch
        {
            // Any finite total is the sum of some quantities (the numeric domain ±1e15 is not enforced yet); a retained
            // period's sum that the model refuses either way, or a flag that feeds the same actual (zero gaps); the latest
            // event at another instant, or another pattern of empty periods, where the watermark, the open window and the
            // quiet count still agree; the last actual of a series whose tracker was reset by an acknowledgement.
            "open[].sum" or "retained[].sum" or "retained[].flag" or "latest event time" or "quiet periods" or "open[].period"
                or "first open period" or "last actual" => OtherEvents,
            _ => null,
        };
    }

    private static byte[]? RandomEdit(byte[] good, SnapshotField f, string kind, Random rng)
    {
        byte[] bad;
        switch (f.Kind)
        {
            case FieldKind.Double:
                double x = Read<double>(good, f);
                double y = kind switch
                {
                    "zero" => 0,
                    "negate" => -x,
                    "plus one" => x + 1,
                    "minus one" => x - 1,
                    "double" => 2 * x,
                    "half" => x / 2,
                    "relative 1e-12" => x * (1 + 1e-12),
                    "next double" => Math.BitIncrement(x),
                    "NaN" => double.NaN,
                    "infinity" => double.PositiveInfinity,
                    "1e300" => 1e300,
                    "bit flip" => BitConverter.Int64BitsToDouble(BitConverter.DoubleToInt64Bits(x) ^ (1L << rng.Next(64))),
                    _ => rng.Next(-100_000, 100_000) / 100.0,
                };
                bad = With(good, f, y);
                break;
            case FieldKind.Int64 or FieldKind.Int32:
                long v = f.Kind == FieldKind.Int64 ? Read<long>(good, f) : Read<int>(good, f);
                long w = kind switch
                {
                    "plus one" => v + 1,
                    "minus one" => v - 1,
                    "zero" => 0,
                    "double" => 2 * v,
                    "negate" => -v,
                    "max" => f.Kind == FieldKind.Int64 ? long.MaxValue : int.MaxValue,
                    _ => v ^ (1L << rng.Next(f.Kind == FieldKind.Int64 ? 64 : 32)),
                };
                bad = f.Kind == FieldKind.Int64 ? With(good, f, w) : With(good, f, unchecked((int)w));
                break;
            case FieldKind.Boolean or FieldKind.Byte:
                byte b = Read<byte>(good, f);
                bad = With(good, f, kind switch { "flip" => (byte)(b == 0 ? 1 : 0), "two" => (byte)2, _ => (byte)255 });
                break;
            default:
                char[] text = Encoding.UTF8.GetString(good, f.Offset, f.Length).ToCharArray();
                int i = rng.Next(text.Length);
                text[i] = text[i] == 'q' ? 'z' : 'q';
                bad = WithString(good, f, new string(text));
                break;
        }

        return bad.AsSpan().SequenceEqual(good) ? null : bad;
    }
}
