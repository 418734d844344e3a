using System.Diagnostics;

namespace StreamForecast.Alerts;

/// <summary>Which running signal of the error tracker a <see cref="SignalLimitRule"/> holds within limits.</summary>
internal enum LimitedSignal
{
    /// <summary>The tracking signal RSFE/MAD (<see cref="DriftInput.TrackingSignal"/>), any finite value.</summary>
    TrackingSignal,

    /// <summary>Trigg's smoothed signal E/M (<see cref="DriftInput.TriggSignal"/>), within [−1, 1].</summary>
    TriggSignal,
}

/// <summary>
/// A two-sided limit on one running signal of a series' error tracker: the tracking signal RSFE/MAD
/// (<see cref="TrackingSignalRuleOptions"/>) or Trigg's smoothed signal (<see cref="TriggSignalRuleOptions"/>). One
/// class serves both; the options say which signal it reads and the signal's own range.
/// </summary>
/// <remarks>
/// <para><b>Input.</b> Reads the chosen signal s, which must be finite and, for Trigg's signal, within [−1, 1] (a rounding
/// excess up to <see cref="DriftRuleOptions.LevelTolerance"/> is accepted). It comes from the owner's error tracker; the
/// rule keeps no error statistics of its own. Evidence: s for under-forecasting, −s for over-forecasting, so a positive
/// signal (errors summing positive, actuals above forecasts) raises <see cref="DriftDirection.UnderForecast"/>.
/// Transitions report s itself as the signal.</para>
/// <para><b>Cost.</b> O(1), allocation-free. <b>Warm-up</b>, episodes and snapshots: see <see cref="DriftRule"/>. After
/// <see cref="DriftRule.Acknowledge"/> or <see cref="DriftRule.Rebaseline"/>, reset the error tracker too.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
internal sealed class SignalLimitRule : DriftRule
{
    // No fields of its own: the signal and its range follow from the options the base holds, so a series' rule object
    // is only the episode state (issue 15, target 3: memory per series).

    /// <summary>Creates a rule with no open episode.</summary>
    /// <param name="options">Validated options.</param>
    /// <param name="signal">The signal the rule reads: Trigg's for <see cref="TriggSignalRuleOptions"/>, else the tracking signal.</param>
    internal SignalLimitRule(DriftRuleOptions options, LimitedSignal signal)
        : base(options)
    {
        Debug.Assert(signal == SignalOf(options), "the signal follows from the options' type");
    }

    /// <inheritdoc/>
    public override DriftRuleOptions Options => Settings;

    private LimitedSignal Signal => SignalOf(Settings);

    private double MaxMagnitude => MaxMagnitudeOf(Signal);

    private static LimitedSignal SignalOf(DriftRuleOptions options) =>
        options is TriggSignalRuleOptions ? LimitedSignal.TriggSignal : LimitedSignal.TrackingSignal;

    private static double MaxMagnitudeOf(LimitedSignal signal) =>
        signal == LimitedSignal.TriggSignal ? 1 + DriftRuleOptions.LevelTolerance : double.MaxValue;

    /// <inheritdoc/>
    public override bool CanRead(in DriftInput input) => double.IsFinite(Read(input));

    private double Read(in DriftInput input) => Signal == LimitedSignal.TriggSignal ? input.TriggSignal : input.TrackingSignal;

    private protected override void EvaluateCore(in DriftInput input, out double underEvidence, out double overEvidence)
    {
        LimitedSignal signal = Signal; // one type check of the options per period
        double s = signal == LimitedSignal.TriggSignal ? input.TriggSignal : input.TrackingSignal;
        if (!(Math.Abs(s) <= MaxMagnitudeOf(signal)))
        {
            if (signal == LimitedSignal.TriggSignal)
            {
                DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.TriggSignal), s, "Trigg's smoothed signal must be a finite number between −1 and 1");
            }

            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.TrackingSignal), s, "the tracking signal RSFE/MAD must be a finite number");
        }

        underEvidence = s;
        overEvidence = -s;
    }

    private protected override void ResetCore()
    {
    }

    private protected override int CoreStateLength => 0;

    private protected override void ExportCore(Span<double> destination)
    {
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> core, double lastUnder, double lastOver, long periods)
    {
        string name = Signal == LimitedSignal.TriggSignal ? "Trigg signal" : "tracking signal";
        if (!(Math.Abs(lastUnder) <= MaxMagnitude))
        {
            return Signal == LimitedSignal.TriggSignal
                ? "the last Trigg signal (number 10) must be between −1 and 1"
                : "the last tracking signal (number 10) must be finite";
        }

        return lastOver == -lastUnder ? null : $"the last over-forecast evidence (number 11) must be the negated {name} (number 10)";
    }

    private protected override void ImportCore(ReadOnlySpan<double> core)
    {
    }
}
