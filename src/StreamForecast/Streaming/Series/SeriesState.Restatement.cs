using System.Diagnostics;
using System.Runtime.CompilerServices;
using StreamForecast.Alerts;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

// Restatement: the retained closed periods, the lagged model before them, and the rollback a late event causes.
internal sealed partial class SeriesState<TKey>
{
    /// <summary>Periods before now can no longer be restated: the lagged model catches up with the live one.</summary>
    private void CommitRestatementWindow()
    {
        if (Restating is { } r)
        {
            r.Lag.CopyModelFrom(_step, r.Scratch);
            r.ClosedCount = 0;
        }
    }

    private void Retain(Restatement r, bool has, double sum)
    {
        int restatable = r.ClosedSums.Length;
        if (r.ClosedCount == restatable)
        {
            // The oldest retained period leaves the horizon: move the lagged model past it, then shift.
            r.Lag.Apply(_nextToClose - restatable - 1, r.ClosedHas[0] == SlotHasData, r.ClosedSums[0], StepMode.Silent, null, null);
            Array.Copy(r.ClosedSums, 1, r.ClosedSums, 0, restatable - 1);
            Array.Copy(r.ClosedHas, 1, r.ClosedHas, 0, restatable - 1);
            r.ClosedCount--;
        }

        r.ClosedSums[r.ClosedCount] = sum;
        r.ClosedHas[r.ClosedCount] = has ? SlotHasData : SlotEmpty;
        r.ClosedCount++;
    }

    private void Late(long period, double quantity, ISeriesOutput<TKey> output)
    {
        long age = _nextToClose - period; // 1 = the last closed period
        if (age > ClosedCount)
        {
            output.Counters.Late++;
            return;
        }

        Restatement r = Restating!; // a closed period is retained only when restatement is on
        int index = (int)(r.ClosedCount - age);
        r.ClosedSums[index] += quantity;
        r.ClosedHas[index] = SlotHasData;
        output.Counters.Restated++;

        RollBackAndReplay(r, index, output);
    }

    /// <summary>
    /// Rolls the model back to before the oldest retained period and replays the retained periods, republishing those
    /// from <paramref name="index"/> on as restatements. Drift rules are not rolled back: they keep their episodes and see
    /// the corrected statistics from the next period on.
    /// </summary>
    private void RollBackAndReplay(Restatement r, int index, ISeriesOutput<TKey> output)
    {
        _step.CopyModelFrom(r.Lag, r.Scratch);
        long first = _nextToClose - r.ClosedCount;
        for (int i = 0; i < r.ClosedCount; i++)
        {
            _step.Apply(first + i, r.ClosedHas[i] == SlotHasData, r.ClosedSums[i], i >= index ? StepMode.Restated : StepMode.Silent, output, output.Counters);
        }
    }

    /// <summary>
    /// What restatement needs, created only when the options allow it: the model as it was before the oldest retained
    /// closed period, those periods' raw inputs, and a buffer to copy model states through.
    /// </summary>
    private sealed class Restatement
    {
        public Restatement(int periods, TKey key, SeriesOptions options, int modelStateLength)
        {
            Lag = new SeriesStep<TKey>(key, options, withRules: false);
            ClosedSums = new double[periods];
            ClosedHas = new byte[periods];
            Scratch = new double[modelStateLength];
        }

        /// <summary>The step as it was before the oldest retained closed period (no rules: it never publishes).</summary>
        public SeriesStep<TKey> Lag { get; }

        public double[] ClosedSums { get; }

        public byte[] ClosedHas { get; }

        public double[] Scratch { get; }

        public int ClosedCount;
    }
}
