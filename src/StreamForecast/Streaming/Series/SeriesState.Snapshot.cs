using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

// The state codec of a series: what a snapshot holds, and the check that a restored series is one the period rules can
// reach. The layout (all through SnapshotPayloadWriter):
//   method label (with " with reference <label>" appended when the options set a reference method); started; first open period; latest event time (UTC ticks); last actual; last actual flag; quiet periods;
//   open period count, then (period, sum) for each open period with data, in increasing period order;
//   model state (forecaster then error tracker); with a reference method, the reference model's state (the same shape);
//   rule count, then each rule's state;
//   retained closed period count, then (sum, data flag 0/1) for each, oldest first; when restatement is on, the lagged
//   model state, with a reference method the lagged reference model's state, then its last actual and last actual flag;
//   event id count, then (id, period) for each, oldest arrival first.
internal sealed partial class SeriesState<TKey>
{
    /// <summary>Writes the complete state (everything but the key and options, which the caller writes or re-resolves).</summary>
    public void Write(SnapshotPayloadWriter writer)
    {
        writer.WriteString(Options.StateLabel);
        writer.WriteBoolean(_started);
        writer.WriteInt64(_nextToClose);
        writer.WriteInt64(_maxEventTicks);
        writer.WriteDouble(_step.LastActual);
        writer.WriteBoolean(_step.HasLastActual);
        writer.WriteInt64(_quietPeriods);

        Span<OpenPeriod> openPeriods = Open;
        int open = 0;
        foreach (OpenPeriod o in openPeriods)
        {
            open += o.Has ? 1 : 0;
        }

        writer.WriteInt32(open);
        for (long p = _nextToClose; p < _nextToClose + openPeriods.Length; p++)
        {
            OpenPeriod o = openPeriods[Slot(p, openPeriods.Length)];
            if (o.Has)
            {
                writer.WriteInt64(p);
                writer.WriteDouble(o.Sum);
            }
        }

        writer.WriteDoubles(_step.Model.ExportState());
        if (_step.Reference is { } reference)
        {
            writer.WriteDoubles(reference.ExportState());
        }

        writer.WriteInt32(RuleCount);
        for (int i = 0; i < RuleCount; i++)
        {
            writer.WriteDoubles(_step.RuleAt(i).ExportState());
        }

        writer.WriteInt32(ClosedCount);
        if (Restating is { } r)
        {
            for (int i = 0; i < r.ClosedCount; i++)
            {
                writer.WriteDouble(r.ClosedSums[i]);
                writer.WriteByte(r.ClosedHas[i]);
            }

            writer.WriteDoubles(r.Lag.Model.ExportState());
            if (r.Lag.Reference is { } lagReference)
            {
                writer.WriteDoubles(lagReference.ExportState());
            }

            writer.WriteDouble(r.Lag.LastActual);
            writer.WriteBoolean(r.Lag.HasLastActual);
        }

        int ids = Ids?.Count ?? 0;
        writer.WriteInt32(ids);
        if (Ids is not null)
        {
            foreach ((string id, long period) in Ids.Oldest())
            {
                writer.WriteString(id);
                writer.WriteInt64(period);
            }
        }
    }

    /// <summary>
    /// Reads a state written by <see cref="Write"/> into this freshly created series, and checks that the period rules can
    /// reach it. Throws <see cref="InvalidDataException"/>, naming the series and the field, when the data does not fit the
    /// series' options or no sequence of events and commands can produce it.
    /// </summary>
    /// <remarks>
    /// <para>Every check below holds for every state the series reaches (each says why), so a restore never refuses a
    /// state the engine wrote; they refuse the edits a writer bug would make. Everything is compared exactly: positions
    /// and counts are integers, and the model of the restatement window is recomputed with the same operations in the
    /// same order, so it must match bit for bit.</para>
    /// <para><b>Cost.</b> O(state size), plus, with restatement on, one replay of the retained periods on a scratch model,
    /// or, under zero gaps after a quiet period, one trial step on a scratch model (allocated here, once per series). The
    /// checks that tie several fields together are in <c>SeriesState.RestoreChecks.cs</c>.</para>
    /// </remarks>
    public void Read(SnapshotPayloadReader reader)
    {
        try
        {
            ReadChecked(reader);
        }
        catch (InvalidDataException ex) when (!ex.Message.StartsWith(Prefix, StringComparison.Ordinal))
        {
            throw new InvalidDataException(Prefix + ex.Message, ex); // a payload error (a field cut short, a flag that is not 0 or 1)
        }
    }

    private string Prefix => Invariant($"Series '{Key}' in the snapshot: ");

    private void ReadChecked(SnapshotPayloadReader reader)
    {
        string method = reader.ReadString();
        if (method != Options.StateLabel)
        {
            throw Invalid($"it holds a {method} series but the options for this key say {Options.StateLabel}");
        }

        PeriodCalendar calendar = Options.Calendar;
        _started = reader.ReadBoolean();
        _nextToClose = reader.ReadInt64();
        _maxEventTicks = reader.ReadInt64();
        _step.LastActual = ReadInDomain(reader, "the last actual");
        bool hasLastActual = reader.ReadBoolean(); // checked against the model below: the step derives it from the model
        _quietPeriods = reader.ReadInt64();

        // The latest event's period: every event the series took lies in it or before it.
        long latest = 0;
        if (!_started)
        {
            // Nothing happens to a series before its first event (its creation may still be counted, and an
            // acknowledgement changes nothing), so every field is at its initial value.
            if (_nextToClose != 0 || _maxEventTicks != 0 || !IsInitialZero(_step.LastActual) || hasLastActual || _quietPeriods != 0)
            {
                throw Invalid("it has seen no event (the started flag is off), yet its period position, latest event time, last actual or quiet-period count is set");
            }
        }
        else
        {
            latest = CheckPositions(calendar);
        }

        if (!hasLastActual && !IsInitialZero(_step.LastActual))
        {
            throw Invalid(Invariant($"the last actual is {_step.LastActual} but the last actual flag is off; without a last actual it stays 0"));
        }

        ReadOpenPeriods(reader, latest);

        double[] freshModel = _step.Model.ExportState();
        double[] model = ImportInto(reader, _step.Model.ImportState, "its model (forecaster and error tracker)");
        if (!_started && !Bits.Same(model, freshModel))
        {
            throw Invalid("it has seen no event, yet its model (forecaster and error tracker) is not that of a new series");
        }

        // The last actual is kept exactly when the model took an actual: both change together in the model step (SeriesStep.Apply),
        // and a rollback restores both from the lagged model, which keeps the same pair.
        if (hasLastActual != (_step.Model.Count > 0))
        {
            throw Invalid(Invariant($"the last actual flag is {(hasLastActual ? "on" : "off")} but the model has taken {_step.Model.Count} actuals; the flag is on exactly when the model has taken one"));
        }

        CheckLastActual(_step.Model, _step.LastActual, "the last actual", "its model");
        double[]? reference = ReadReference(reader, _step, "its reference model");
        if (_step.Reference is { } referenceModel)
        {
            CheckLastActual(referenceModel, _step.LastActual, "the last actual", "its reference model");
        }

        int rules = reader.ReadInt32();
        if (rules != RuleCount)
        {
            throw Invalid(Invariant($"it holds {rules} drift rules but the options for this key have {RuleCount}"));
        }

        for (int i = 0; i < RuleCount; i++)
        {
            DriftRule rule = _step.RuleAt(i);
            ImportInto(reader, rule.ImportState, Invariant($"its drift rule {i + 1} ({Options.RuleLabels[i]})"));
            if (!_started && (rule.PeriodsObserved != 0 || rule.LastEpisodeId != 0))
            {
                throw Invalid(Invariant($"it has seen no event, yet its drift rule {i + 1} ({Options.RuleLabels[i]}) has evaluated periods or raised episodes"));
            }
        }

        ReadRestatement(reader, latest, model, reference);
        ReadEventIds(reader, latest);
        if (Restating is null)
        {
            CheckRulesAgainstTracker();
            CheckZeroGap();
        }
    }

    private void ReadOpenPeriods(SnapshotPayloadReader reader, long latest)
    {
        int capacity = OpenPeriodCapacity;
        int open = reader.ReadInt32();
        if (open < 0 || open > capacity || (!_started && open != 0))
        {
            throw Invalid(Invariant($"its open-period count {open} does not fit: between 0 and {capacity} open periods with data, and none before the first event"));
        }

        long previous = long.MinValue;
        for (int i = 0; i < open; i++)
        {
            long p = reader.ReadInt64();
            double sum = ReadInDomain(reader, "an open period's sum");
            if (p < _nextToClose || p >= _nextToClose + capacity)
            {
                throw Invalid(Invariant($"its open period {p} is outside the open-period window {_nextToClose} to {_nextToClose + capacity - 1}"));
            }

            if (p <= previous)
            {
                throw Invalid(Invariant($"its open period {p} follows open period {previous}; open periods are written once each, in increasing order"));
            }

            if (p > latest)
            {
                throw Invalid(Invariant($"its open period {p} holds data but comes after the latest event's period {latest}"));
            }

            previous = p;
            ref OpenPeriod o = ref Open[Slot(p, capacity)];
            o.Sum = sum;
            o.Has = true;
        }

        // The latest event went into its period unless that period had already closed; periods close only from the
        // first open one on, so while the latest event's period is still open it holds that event.
        if (_started && latest >= _nextToClose && previous != latest)
        {
            throw Invalid(Invariant($"the latest event's period {latest} is still open but holds no data, although it holds the latest event"));
        }
    }

    private void ReadRestatement(SnapshotPayloadReader reader, long latest, double[] model, double[]? reference)
    {
        int capacity = Restating?.ClosedSums.Length ?? 0;
        int closed = reader.ReadInt32();
        if (closed < 0 || closed > capacity)
        {
            throw Invalid(Invariant($"its restatement window holds {closed} periods; the options for this key retain at most {capacity}"));
        }

        if (!_started && closed != 0)
        {
            throw Invalid("it has seen no event, yet its restatement window holds closed periods");
        }

        if (Restating is not { } r)
        {
            return;
        }

        // The retained periods are the last `closed` periods before the first open one.
        long first = _nextToClose - closed;
        if (_started && first < Options.Calendar.MinPeriod)
        {
            throw Invalid(Invariant($"its restatement window of {closed} periods starts before the calendar's first period"));
        }

        r.ClosedCount = closed;
        for (int i = 0; i < closed; i++)
        {
            double sum = ReadInDomain(reader, "a retained period's sum");
            byte has = reader.ReadByte();
            if (has > SlotHasData)
            {
                throw Invalid(Invariant($"its retained period {first + i} has data flag {has}; the flag is 0 (no data) or 1"));
            }

            // A period without data keeps the initial sum 0; one with data holds events, all at or before the latest.
            if (has == SlotEmpty && !IsInitialZero(sum))
            {
                throw Invalid(Invariant($"its retained period {first + i} has no data but a sum of {sum}"));
            }

            if (has == SlotHasData && first + i > latest)
            {
                throw Invalid(Invariant($"its retained period {first + i} holds data but comes after the latest event's period {latest}"));
            }

            r.ClosedSums[i] = sum;
            r.ClosedHas[i] = has;
        }

        double[] freshLag = r.Lag.Model.ExportState();
        double[] lag = ImportInto(reader, r.Lag.Model.ImportState, "its lagged model (the model before the restatement window)");
        double[]? lagReference = ReadReference(reader, r.Lag, "its lagged reference model");
        r.Lag.LastActual = ReadInDomain(reader, "the lagged model's last actual");
        bool lagHasLastActual = reader.ReadBoolean(); // checked against the lagged model below
        if (!_started && !Bits.Same(lag, freshLag))
        {
            throw Invalid("it has seen no event, yet its lagged model is not that of a new series");
        }

        if (lagHasLastActual != (r.Lag.Model.Count > 0) || (!lagHasLastActual && !IsInitialZero(r.Lag.LastActual)))
        {
            throw Invalid("the lagged model's last actual and its flag disagree with the lagged model: the flag is on exactly when it has taken an actual, and the last actual is 0 while it is off");
        }

        CheckLastActual(r.Lag.Model, r.Lag.LastActual, "the lagged model's last actual", "its lagged model");
        if (r.Lag.Reference is { } lagReferenceModel)
        {
            CheckLastActual(lagReferenceModel, r.Lag.LastActual, "the lagged model's last actual", "its lagged reference model");
        }

        // The model is the lagged model stepped through the retained periods: closing a period steps the live model and,
        // when the oldest retained period leaves the window, the lagged model through it; a restatement rolls the model
        // back to the lagged one and replays the window. Both use the same model step, so the replay must reproduce the
        // model and its last actual bit for bit.
        var replay = new SeriesStep<TKey>(Key, Options, withRules: false);
        replay.SetMarks(_step.Marks);
        replay.Model.ImportState(lag);
        if (lagReference is not null)
        {
            replay.Reference!.ImportState(lagReference);
        }
        replay.LastActual = r.Lag.LastActual;
        for (int i = 0; i < closed; i++)
        {
            replay.Apply(first + i, r.ClosedHas[i] == SlotHasData, r.ClosedSums[i], StepMode.Silent, null, null);
        }

        if (!Bits.Same(replay.Model.ExportState(), model)
            || (reference is not null && !Bits.Same(replay.Reference!.ExportState(), reference))
            || BitConverter.DoubleToInt64Bits(replay.LastActual) != BitConverter.DoubleToInt64Bits(_step.LastActual)
            || replay.HasLastActual != _step.HasLastActual)
        {
            throw Invalid(Invariant($"its model and last actual do not follow from the lagged model and the {closed} retained periods: replaying them gives a different state"));
        }
    }

    private delegate void SpanImporter(ReadOnlySpan<double> state);

    private double[] ImportInto(SnapshotPayloadReader reader, SpanImporter import, string what)
    {
        double[] values = reader.ReadDoubles();
        try
        {
            import(values);
        }
        catch (ArgumentException ex)
        {
            throw new InvalidDataException(Invariant($"{Prefix}{what} does not fit the options for this key: {ex.Message}"), ex);
        }

        return values;
    }

    /// <summary>Reads a period total or an actual: the engine never holds one outside ±<see cref="NumericDomain.MaxMagnitude"/>.</summary>
    private double ReadInDomain(SnapshotPayloadReader reader, string what)
    {
        double v = reader.ReadDouble();
        return NumericDomain.Contains(v) ? v : throw Invalid(Invariant($"{what} is {v}, not a finite number within ±1e15 (NumericDomain.MaxMagnitude), the most a period total or an actual can be"));
    }

    /// <summary>Whether <paramref name="value"/> is the initial 0 (+0; −0 never arises from the series' additions).</summary>
    private static bool IsInitialZero(double value) => BitConverter.DoubleToInt64Bits(value) == 0;

    private InvalidDataException Invalid(string problem) => new(Invariant($"{Prefix}{problem}."));

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);

    /// <summary>Bit-for-bit comparison of two exported states.</summary>
    private static class Bits
    {
        public static bool Same(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
        {
            if (a.Length != b.Length)
            {
                return false;
            }

            for (int i = 0; i < a.Length; i++)
            {
                if (BitConverter.DoubleToInt64Bits(a[i]) != BitConverter.DoubleToInt64Bits(b[i]))
                {
                    return false;
                }
            }

            return true;
        }
    }
}
