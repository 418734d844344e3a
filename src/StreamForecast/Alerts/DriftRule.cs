using System.Diagnostics;
using StreamForecast.Internal;

namespace StreamForecast.Alerts;

/// <summary>
/// The mutable alert state of one series for one drift rule: it takes one <see cref="DriftInput"/> per scored period
/// with <see cref="Evaluate"/> and returns what changed as a <see cref="DriftTransition"/>. Create one from a validated
/// <see cref="DriftRuleOptions"/> with <see cref="DriftRuleOptions.CreateRule"/>.
/// </summary>
/// <remarks>
/// <para><b>Episodes.</b> Each period the rule turns its input into evidence for under-forecasting and for
/// over-forecasting (see the rule's documentation) and runs one state machine, the same for every rule:</para>
/// <list type="bullet">
/// <item><description><b>Raise.</b> With no open episode, once the warm-up is served, an episode opens when one side's evidence has
/// reached <see cref="DriftRuleOptions.RaiseLevel"/> for <see cref="DriftRuleOptions.PeriodsToRaise"/> consecutive periods
/// (if both sides qualify, the larger evidence wins). It gets the next episode id and is <see cref="DriftSeverity.Critical"/>
/// at once if the evidence has also reached the escalation level for that many periods, else <see cref="DriftSeverity.Warning"/>.</description></item>
/// <item><description><b>Escalate.</b> A Warning episode becomes Critical when its side's evidence has reached
/// <see cref="DriftRuleOptions.EscalationLevel"/> for <see cref="DriftRuleOptions.PeriodsToRaise"/> consecutive periods. Severity never
/// steps down while the episode is open.</description></item>
/// <item><description><b>Clear.</b> The episode closes when its own side's evidence has been at or below
/// <see cref="DriftRuleOptions.ClearLevel"/> for <see cref="DriftRuleOptions.PeriodsToClear"/> consecutive periods. Only the
/// episode's side counts: evidence for the other direction below the raise level does not keep it open.</description></item>
/// <item><description><b>Reverse.</b> If the other side's evidence meets the raise rule while the episode is open and the episode's own
/// evidence has fallen below the raise level, the episode closes with <see cref="DriftCloseReason.DirectionReversed"/>; while its
/// own side is still beyond the raise level the episode stays open, so two sides that are both beyond the limit (a CUSUM after a
/// rise then a fall) cannot flap. If both sides qualify at the next raise, it goes the way the evidence reversed to. Only one transition is returned per call, so the new episode in
/// the other direction is raised on the next period that still meets the raise rule (one period later when the
/// evidence persists).</description></item>
/// </list>
/// <para>Levels are inclusive with a relative tolerance of 10⁻⁶ (<see cref="DriftRuleOptions.LevelTolerance"/>). While an
/// episode stays open and unchanged, <see cref="Evaluate"/> returns <see cref="DriftTransitionKind.None"/>, so every
/// returned transition is worth publishing once.</para>
/// <para><b>Warm-up.</b> Raising is suppressed until <see cref="PeriodsObserved"/> reaches
/// <see cref="DriftRuleOptions.WarmUpPeriods"/> (<see cref="IsWarm"/>). The statistic itself (the CUSUM sums, the
/// consecutive-period counts) runs during the warm-up.</para>
/// <para><b>Episode ids</b> are a per-rule sequence number: the first episode is 1, each raise adds 1. The counter is part
/// of the exported state, so a rule restored from a snapshot continues the numbering; no clocks or random ids are used.
/// <see cref="Acknowledge"/> and <see cref="Rebaseline"/> keep the counter; <see cref="Reset"/> restarts it.</para>
/// <para><b>Bad input.</b> A field the rule reads that is NaN, infinite or out of its domain is rejected with
/// <see cref="ArgumentOutOfRangeException"/> and the state is left exactly as it was.</para>
/// <para><b>Cost.</b> <see cref="Evaluate"/> is O(1), allocation-free and returns a small struct.</para>
/// <para><b>Snapshots.</b> <see cref="ExportState(Span{double})"/> writes the full state as <see cref="StateLength"/>
/// plain numbers; <see cref="ImportState"/> validates and reads it back into a rule created from equal options. Continuing
/// after an import gives identical transitions, episode ids included.</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner (one thread or one reader loop at a time) evaluates and reads a
/// rule. Different rules are independent.</para>
/// </remarks>
public abstract partial class DriftRule : IExportableState
{
    // Exported layout: periods, last episode id, direction (+1 under, −1 over, 0 none), severity (0, 1, 2),
    // under run, over run, under escalation run, over escalation run, clear run, last under evidence, last over evidence;
    // then the rule's own numbers.
    private const int HeaderLength = 11;

    private readonly DriftRuleOptions _settings;
    private long _periods;
    private long _episodeSequence;
    // Direction (+1, −1, 0), severity and the reversal below are held in a byte each rather than an int, so one rule
    // object of a tracking-signal rule takes 80 B instead of 88 (issue 15, target 3: memory per series).
    private sbyte _direction;
    private byte _severity; // a DriftSeverity
    private int _underRun;
    private int _overRun;
    private int _underEscalationRun;
    private int _overEscalationRun;
    private int _clearRun;
    private double _lastUnder;
    private double _lastOver;

    // After a reversal, the direction the evidence turned to (±1), until an episode is raised or neither side qualifies:
    // when both sides qualify, the new episode goes that way rather than flipping back on a small difference.
    private sbyte _reversedTo;

    private protected DriftRule(DriftRuleOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _settings = options;
    }

    /// <summary>The validated options this rule was created from.</summary>
    public abstract DriftRuleOptions Options { get; }

    /// <summary>The options this rule was created from, for a derived rule that keeps no copy of its own.</summary>
    private protected DriftRuleOptions Settings => _settings;

    /// <summary>Which rule this is.</summary>
    public DriftRuleKind Kind => _settings.Kind;

    /// <summary>
    /// The periods evaluated since the rule was created, reset or restarted by <see cref="Acknowledge"/> or
    /// <see cref="Rebaseline"/>. Rejected inputs do not count.
    /// </summary>
    public long PeriodsObserved => _periods;

    /// <summary>Whether the warm-up is served: <see cref="PeriodsObserved"/> ≥ <see cref="DriftRuleOptions.WarmUpPeriods"/>, so the rule may raise.</summary>
    public bool IsWarm => _periods >= _settings.WarmUpPeriods;

    /// <summary>Whether an episode is open.</summary>
    public bool IsOpen => _direction != 0;

    /// <summary>The open episode's id, or 0 when no episode is open.</summary>
    public long EpisodeId => _direction != 0 ? _episodeSequence : 0;

    /// <summary>The id of the most recent episode, open or closed (0 before the first); the next episode gets this plus one.</summary>
    public long LastEpisodeId => _episodeSequence;

    /// <summary>The open episode's direction, or <see cref="DriftDirection.None"/>.</summary>
    public DriftDirection Direction => ToDirection(_direction);

    /// <summary>The open episode's severity, or <see cref="DriftSeverity.None"/>.</summary>
    public DriftSeverity Severity => (DriftSeverity)_severity;

    /// <summary>
    /// Whether <paramref name="input"/> holds what this rule reads (a finite signal, or a finite error with σ above 0),
    /// so a host can skip a period the rule cannot use (for example while MAD is still zero) without a switch on the
    /// rule's kind.
    /// </summary>
    /// <param name="input">The period's numbers.</param>
    /// <returns><see langword="true"/> when <see cref="Evaluate"/> would accept the input.</returns>
    /// <remarks>O(1), no allocation, no state change.</remarks>
    public abstract bool CanRead(in DriftInput input);

    /// <summary>Takes one scored period and returns what changed in the episode state.</summary>
    /// <param name="input">The period's numbers; the rule reads only its own fields (see <see cref="DriftInput"/>).</param>
    /// <returns>
    /// The transition: <see cref="DriftTransitionKind.None"/> (the default value) when no episode opened, escalated or
    /// closed in this period.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException">
    /// A field the rule reads is NaN, infinite or out of its domain. The state is unchanged.
    /// </exception>
    /// <remarks>O(1) and allocation-free. Not thread-safe.</remarks>
    public DriftTransition Evaluate(in DriftInput input)
    {
        // The rule validates and updates its statistic; it throws before changing anything.
        EvaluateCore(in input, out double under, out double over);
        Debug.Assert(double.IsFinite(under) && double.IsFinite(over));

        DriftRuleOptions o = _settings;
        int cap = o.PeriodsToRaise;
        _periods++;
        _lastUnder = under;
        _lastOver = over;
        _underRun = under >= o.RaiseThreshold ? Math.Min(_underRun + 1, cap) : 0;
        _overRun = over >= o.RaiseThreshold ? Math.Min(_overRun + 1, cap) : 0;
        _underEscalationRun = under >= o.EscalationThreshold ? Math.Min(_underEscalationRun + 1, cap) : 0;
        _overEscalationRun = over >= o.EscalationThreshold ? Math.Min(_overEscalationRun + 1, cap) : 0;

        return _direction == 0 ? TryRaise() : FollowEpisode();
    }

    /// <summary>
    /// Acknowledges the open episode: closes it and restarts the rule's statistic and warm-up. Does nothing when no
    /// episode is open.
    /// </summary>
    /// <returns>
    /// A <see cref="DriftTransitionKind.Cleared"/> transition with <see cref="DriftCloseReason.Acknowledged"/> when an episode
    /// was open; otherwise <see cref="DriftTransitionKind.None"/> and the state is unchanged.
    /// </returns>
    /// <remarks>
    /// Use it when someone has dealt with the cause, so the alert does not stay red. The rule forgets its own statistic
    /// (the CUSUM sums, the consecutive-period counts) and serves the warm-up again; episode numbering continues.
    /// The tracking-signal and Trigg rules read signals that live in the owner's error tracker: reset that tracker too,
    /// or a signal still beyond the limit raises a new episode as soon as the warm-up is served. O(1).
    /// </remarks>
    public DriftTransition Acknowledge() => _direction == 0 ? default : Restart(DriftCloseReason.Acknowledged);

    /// <summary>
    /// Restarts the rule's statistic and warm-up, for example after the forecast method or its level was changed,
    /// closing the open episode if there is one.
    /// </summary>
    /// <returns>
    /// A <see cref="DriftTransitionKind.Cleared"/> transition with <see cref="DriftCloseReason.Rebaselined"/> when an episode
    /// was open; otherwise <see cref="DriftTransitionKind.None"/>.
    /// </returns>
    /// <remarks>
    /// Unlike <see cref="Acknowledge"/>, it always restarts. Episode numbering continues. As with <see cref="Acknowledge"/>,
    /// reset the owner's error tracker too for the tracking-signal and Trigg rules. O(1).
    /// </remarks>
    public DriftTransition Rebaseline() => Restart(DriftCloseReason.Rebaselined);

    /// <summary>
    /// Forgets everything: the rule is as if just created from <see cref="Options"/>, episode numbering included. An open
    /// episode is dropped without a transition.
    /// </summary>
    /// <remarks>
    /// Meant for reusing a rule for a different series. In a live stream use <see cref="Rebaseline"/>, which publishes the
    /// close and keeps episode ids unique.
    /// </remarks>
    public void Reset()
    {
        RestartStatistics();
        _episodeSequence = 0;
    }

    /// <summary>How many numbers <see cref="ExportState(Span{double})"/> writes; fixed by the rule kind.</summary>
    public int StateLength => HeaderLength + CoreStateLength + 1;

    /// <summary>Writes the full state into <paramref name="destination"/> as plain numbers.</summary>
    /// <param name="destination">At least <see cref="StateLength"/> numbers long.</param>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is too short.</exception>
    /// <remarks>Allocation-free. The layout is private to the rule and versioned with the library.</remarks>
    public void ExportState(Span<double> destination)
    {
        if (destination.Length < StateLength)
        {
            ThrowHelper.ThrowArgument(nameof(destination), $"The destination holds {destination.Length} numbers; the state needs {StateLength}.");
        }

        destination[0] = _periods;
        destination[1] = _episodeSequence;
        destination[2] = _direction;
        destination[3] = (int)_severity;
        destination[4] = _underRun;
        destination[5] = _overRun;
        destination[6] = _underEscalationRun;
        destination[7] = _overEscalationRun;
        destination[8] = _clearRun;
        destination[9] = _lastUnder;
        destination[10] = _lastOver;
        ExportCore(destination.Slice(HeaderLength, CoreStateLength));
        destination[HeaderLength + CoreStateLength] = _reversedTo;
    }

    /// <summary>Replaces the state with one exported from a rule created from equal options.</summary>
    /// <param name="state">Exactly <see cref="StateLength"/> numbers from <see cref="ExportState(Span{double})"/>.</param>
    /// <exception cref="ArgumentException">
    /// The state has the wrong length, a non-finite number, or values this rule cannot hold (counts that are not whole
    /// or out of range, an episode without an id or during the warm-up, counts that contradict the stored evidence).
    /// Nothing is imported.
    /// </exception>
    public void ImportState(ReadOnlySpan<double> state)
    {
        string? problem = Validate(state);
        if (problem is not null)
        {
            DriftThrowHelper.ThrowInvalidState(_settings.RuleName, problem);
        }

        _periods = (long)state[0];
        _episodeSequence = (long)state[1];
        _direction = (sbyte)state[2];
        _severity = (byte)state[3];
        _underRun = (int)state[4];
        _overRun = (int)state[5];
        _underEscalationRun = (int)state[6];
        _overEscalationRun = (int)state[7];
        _clearRun = (int)state[8];
        _lastUnder = state[9];
        _lastOver = state[10];
        ImportCore(state.Slice(HeaderLength, CoreStateLength));
        _reversedTo = (sbyte)state[HeaderLength + CoreStateLength];
    }

    /// <summary>
    /// Validates the rule's fields of <paramref name="input"/> (throwing before any change), then updates the rule's
    /// statistic and returns this period's evidence for under- and over-forecasting (finite).
    /// </summary>
    private protected abstract void EvaluateCore(in DriftInput input, out double underEvidence, out double overEvidence);

    /// <summary>Clears the rule's own statistic.</summary>
    private protected abstract void ResetCore();

    /// <summary>The number of rule-specific state numbers.</summary>
    private protected abstract int CoreStateLength { get; }

    /// <summary>Writes the rule-specific state (exactly <see cref="CoreStateLength"/> numbers).</summary>
    private protected abstract void ExportCore(Span<double> destination);

    /// <summary>
    /// Returns why the rule-specific <paramref name="core"/> (all finite, right length) cannot be imported together with
    /// the last evidence, or null if it can. <paramref name="periods"/> is the imported period count.
    /// </summary>
    private protected abstract string? ValidateCore(ReadOnlySpan<double> core, double lastUnder, double lastOver, long periods);

    /// <summary>Reads rule-specific state that <see cref="ValidateCore"/> accepted.</summary>
    private protected abstract void ImportCore(ReadOnlySpan<double> core);

    private static DriftDirection ToDirection(int direction) => direction switch
    {
        > 0 => DriftDirection.UnderForecast,
        < 0 => DriftDirection.OverForecast,
        _ => DriftDirection.None,
    };

    private DriftTransition TryRaise()
    {
        DriftRuleOptions o = _settings;
        if (_periods < o.WarmUpPeriods)
        {
            return default;
        }

        bool under = _underRun >= o.PeriodsToRaise;
        bool over = _overRun >= o.PeriodsToRaise;
        if (!under && !over)
        {
            _reversedTo = 0;
            return default;
        }

        _direction = under && over && _reversedTo != 0 ? _reversedTo
            : under && (!over || _lastUnder >= _lastOver) ? (sbyte)1 : (sbyte)-1;
        _reversedTo = 0;
        _episodeSequence++;
        _clearRun = 0;
        int escalationRun = _direction > 0 ? _underEscalationRun : _overEscalationRun;
        _severity = (byte)(escalationRun >= o.PeriodsToRaise ? DriftSeverity.Critical : DriftSeverity.Warning);
        return Make(DriftTransitionKind.Raised, _direction * OwnEvidence(), _direction * o.RaiseLevel, DriftCloseReason.None);
    }

    private DriftTransition FollowEpisode()
    {
        DriftRuleOptions o = _settings;
        int d = _direction;
        // Reverse only when the other side qualifies AND this side's own evidence has fallen below the raise level: while
        // both sides stay beyond the limit (a CUSUM after a rise and a fall: C⁺ decays slowly while C⁻ builds, and which
        // is larger can change every period) the episode stays as it is instead of closing and re-raising each period.
        if ((d > 0 ? _overRun : _underRun) >= o.PeriodsToRaise && OwnEvidence() < o.RaiseThreshold)
        {
            double opposite = d > 0 ? _lastOver : _lastUnder;
            DriftTransition reversed = Make(DriftTransitionKind.Cleared, -d * opposite, -d * o.RaiseLevel, DriftCloseReason.DirectionReversed);
            CloseEpisode();
            _reversedTo = (sbyte)-d;
            return reversed;
        }

        double own = OwnEvidence();
        if (own <= o.ClearThreshold)
        {
            _clearRun++;
            if (_clearRun < o.PeriodsToClear)
            {
                return default;
            }

            DriftTransition cleared = Make(DriftTransitionKind.Cleared, d * own, d * o.ClearLevel, DriftCloseReason.SignalReturned);
            CloseEpisode();
            return cleared;
        }

        _clearRun = 0;
        if (_severity == (byte)DriftSeverity.Warning && (d > 0 ? _underEscalationRun : _overEscalationRun) >= o.PeriodsToRaise)
        {
            _severity = (byte)DriftSeverity.Critical;
            return Make(DriftTransitionKind.Escalated, d * own, d * o.EscalationLevel, DriftCloseReason.None);
        }

        return default;
    }

    private double OwnEvidence() => _direction > 0 ? _lastUnder : _lastOver;

    private DriftTransition Make(DriftTransitionKind kind, double signal, double level, DriftCloseReason reason) =>
        new(kind, _settings.Kind, _episodeSequence, ToDirection(_direction), (DriftSeverity)_severity, signal, level, _periods, reason) { Watched = _settings.Watches };

    private void CloseEpisode()
    {
        _direction = 0;
        _severity = (byte)DriftSeverity.None;
        _clearRun = 0;
    }

    private DriftTransition Restart(DriftCloseReason reason)
    {
        DriftTransition closed = _direction == 0
            ? default
            : Make(DriftTransitionKind.Cleared, _direction * OwnEvidence(), _direction * _settings.ClearLevel, reason);
        RestartStatistics();
        return closed;
    }

    private void RestartStatistics()
    {
        _periods = 0;
        _direction = 0;
        _severity = (byte)DriftSeverity.None;
        _underRun = 0;
        _overRun = 0;
        _underEscalationRun = 0;
        _overEscalationRun = 0;
        _clearRun = 0;
        _lastUnder = 0;
        _lastOver = 0;
        _reversedTo = 0;
        ResetCore();
    }
}
