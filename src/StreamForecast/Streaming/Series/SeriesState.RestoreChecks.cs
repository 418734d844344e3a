using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Periods;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

// The restore checks of a series that tie several fields together (positions and the latest event, the last actual and
// the models, the reference model and the model beside it, the rules and the tracker, the gap policy and the quiet count). Each holds for every state the period rules
// reach, and says why. Called while reading a series (SeriesState.Snapshot.cs).
internal sealed partial class SeriesState<TKey>
{
    /// <summary>Checks the period position, the latest event time and the quiet count of a started series; returns the latest event's period.</summary>
    private long CheckPositions(PeriodCalendar calendar)
    {
        // MaxPeriod + 1: every period closed, the calendar's last one included (nothing can close after it).
        if (_nextToClose < calendar.MinPeriod || _nextToClose > calendar.MaxPeriod + 1)
        {
            throw Invalid(Invariant($"its first open period {_nextToClose} is outside the calendar's periods {calendar.MinPeriod} to {calendar.MaxPeriod} (or one past the last, once every period closed)"));
        }

        if (_maxEventTicks < DateTimeOffset.MinValue.UtcTicks || _maxEventTicks > DateTimeOffset.MaxValue.UtcTicks
            || !calendar.TryPeriodOf(new DateTimeOffset(_maxEventTicks, TimeSpan.Zero), out long latest))
        {
            throw Invalid(Invariant($"its latest event time ({_maxEventTicks} ticks) is outside the range the calendar supports, where every event it took lies"));
        }

        // A new latest event time closes every period that ends at or before it less the allowed lateness, and periods
        // only close further after that: the first open period ends after that watermark.
        _nextCloseEndTicks = _nextToClose <= calendar.MaxPeriod ? calendar.EndOf(_nextToClose).UtcTicks : long.MaxValue;
        long watermark = _maxEventTicks - Options.Lateness.AllowedLateness.Ticks;
        if (_nextCloseEndTicks <= watermark)
        {
            throw Invalid(Invariant($"its first open period {_nextToClose} ends at or before the watermark (latest event time less the allowed lateness), so it would have closed"));
        }

        // When the latest event arrived, periods closed until its period fitted in the open-period ring.
        int capacity = OpenPeriodCapacity;
        if (latest >= _nextToClose + capacity)
        {
            throw Invalid(Invariant($"its latest event's period {latest} is {latest - _nextToClose} periods after the first open period {_nextToClose}; at most {capacity} periods can be open"));
        }

        // The closed periods after the latest event's period never had an event, so each one added to the quiet count
        // and none reset it; and the quiet count counts closed periods, of which there are at most as many as calendar
        // periods before the first open one.
        long emptyAfterLatest = Math.Max(0, _nextToClose - 1 - latest);
        if (_quietPeriods < emptyAfterLatest || _quietPeriods > _nextToClose - calendar.MinPeriod)
        {
            throw Invalid(Invariant($"its quiet-period count {_quietPeriods} is impossible: the {emptyAfterLatest} closed periods after the latest event's period {latest} had no event, and at most {_nextToClose - calendar.MinPeriod} periods have closed"));
        }

        return latest;
    }

    /// <summary>
    /// Without restatement the error tracker changes only when a period closes live, and every such scored period is shown
    /// to every rule whose input fits; an acknowledgement resets the tracker and re-baselines every rule together.
    /// </summary>
    private void CheckRulesAgainstTracker()
    {
        for (int i = 0; i < RuleCount; i++)
        {
            ErrorTracker tracker = _step.WatchedTracker(i); // the published model's, or the reference model's
            DriftRule rule = _step.RuleAt(i);
            long periods = rule.PeriodsObserved;
            if (periods > tracker.Count)
            {
                throw Invalid(Invariant($"its drift rule {i + 1} ({Options.RuleLabels[i]}) has evaluated {periods} periods but the error tracker has scored only {tracker.Count} since the last acknowledgement"));
            }

            // The tracking signal and Trigg's signal are finite after every scored period, so those rules see each one, and
            // their last evidence is the tracker's signal, which unscored periods do not change.
            if (rule.Kind is not (DriftRuleKind.TrackingSignal or DriftRuleKind.TriggSignal))
            {
                continue;
            }

            double signal = rule.Kind == DriftRuleKind.TrackingSignal ? tracker.TrackingSignal : tracker.TriggSignal;
            if (periods != tracker.Count)
            {
                throw Invalid(Invariant($"its drift rule {i + 1} ({Options.RuleLabels[i]}) has evaluated {periods} periods but the error tracker has scored {tracker.Count}; this rule sees every scored period"));
            }

            if (periods > 0 && BitConverter.DoubleToInt64Bits(rule.LastUnderEvidence) != BitConverter.DoubleToInt64Bits(signal))
            {
                throw Invalid(Invariant($"its drift rule {i + 1} ({Options.RuleLabels[i]}) last saw a signal of {rule.LastUnderEvidence:R}, but the error tracker's signal after that period is {signal:R}"));
            }
        }
    }

    /// <summary>
    /// Reads the reference model of <paramref name="step"/> when the options set one (null otherwise) and checks it against
    /// the step's model, which must already be read: both take every actual in the same step, all or nothing
    /// (SeriesStep.Apply), so they have taken the same number of actuals. (The caller checks the reference tracker's
    /// newest actual against the last actual once that is read.)
    /// </summary>
    private double[]? ReadReference(SnapshotPayloadReader reader, SeriesStep<TKey> step, string what)
    {
        if (step.Reference is not { } model)
        {
            return null;
        }

        double[] fresh = model.ExportState();
        double[] state = ImportInto(reader, model.ImportState, what);
        if (!_started && !Bits.Same(state, fresh))
        {
            throw Invalid($"it has seen no event, yet {what} is not that of a new series");
        }

        if (model.Count != step.Model.Count)
        {
            throw Invalid(Invariant($"{what} has taken {model.Count} actuals but the model beside it {step.Model.Count}; both take every actual"));
        }

        return state;
    }

    /// <summary>
    /// Each actual the model takes is pushed into its error tracker and kept as the last actual in the same step, so while
    /// the tracker holds actuals (none since an acknowledgement reset it) its newest is the last actual, bit for bit.
    /// </summary>
    private void CheckLastActual(TrackedForecaster model, double lastActual, string what, string whose)
    {
        if (model.Tracker.TryGetNewestActual(out double newest) && BitConverter.DoubleToInt64Bits(newest) != BitConverter.DoubleToInt64Bits(lastActual))
        {
            throw Invalid(Invariant($"{what} is {lastActual:R}, but the newest actual in {whose}'s error tracker is {newest:R}; they are the same number"));
        }
    }

    /// <summary>
    /// Without restatement, a quiet count above 0 means the last period to close had no event; under the zero gap policy
    /// that period fed an actual of 0, so the last actual is 0, unless the model refuses an actual of 0 (its domain: a
    /// refusal leaves the model as it is now, so a trial on a copy tells).
    /// </summary>
    private void CheckZeroGap()
    {
        if (!_started || Options.Gaps != GapPolicy.Zero || _quietPeriods == 0 || IsInitialZero(_step.LastActual))
        {
            return;
        }

        var trial = new TrackedForecaster(Options.Method, Options.Tracking, Options.Intervals);
        trial.ImportState(_step.Model.ExportState());
        try
        {
            trial.Update(0);
            if (_step.Reference is { } reference)
            {
                // Both models take an actual or neither does: a refusal by the reference also leaves the last actual as it is.
                var referenceTrial = new TrackedForecaster(reference.Forecaster.Options, Options.Tracking);
                referenceTrial.ImportState(reference.ExportState());
                referenceTrial.Update(0);
            }
        }
        catch (ArgumentOutOfRangeException)
        {
            return;
        }

        throw Invalid(Invariant($"its quiet-period count {_quietPeriods} says the last period to close had no event, which feeds an actual of 0 under the zero gap policy, yet the last actual is {_step.LastActual:R}"));
    }
}
