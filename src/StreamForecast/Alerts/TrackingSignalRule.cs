namespace StreamForecast.Alerts;

/// <summary>
/// A two-sided limit on the tracking signal RSFE/MAD of one series. Create it from <see cref="TrackingSignalRuleOptions"/>.
/// </summary>
/// <remarks>
/// <para><b>Input.</b> Reads <see cref="DriftInput.TrackingSignal"/> s, which must be finite (it comes from the owner's error
/// tracker; the rule keeps no error statistics of its own). Evidence: s for under-forecasting, −s for over-forecasting,
/// so a positive signal (errors summing positive, actuals above forecasts) raises
/// <see cref="DriftDirection.UnderForecast"/>. Transitions report s itself as the signal.</para>
/// <para><b>Cost.</b> O(1), allocation-free. <b>Warm-up</b>, episodes and snapshots: see <see cref="DriftRule"/>. After
/// <see cref="DriftRule.Acknowledge"/> or <see cref="DriftRule.Rebaseline"/>, reset the error tracker too.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class TrackingSignalRule : DriftRule
{
    private readonly TrackingSignalRuleOptions _options;

    /// <summary>Creates a rule with no open episode.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public TrackingSignalRule(TrackingSignalRuleOptions options)
        : base(options)
    {
        _options = options;
    }

    /// <inheritdoc/>
    public override DriftRuleOptions Options => _options;

    /// <inheritdoc/>
    public override bool CanRead(in DriftInput input) => double.IsFinite(input.TrackingSignal);

    private protected override void EvaluateCore(in DriftInput input, out double underEvidence, out double overEvidence)
    {
        double s = input.TrackingSignal;
        if (!double.IsFinite(s))
        {
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

    private protected override string? ValidateCore(ReadOnlySpan<double> core, double lastUnder, double lastOver, long periods) =>
        lastOver == -lastUnder ? null : "the last over-forecast evidence (number 11) must be the negated tracking signal (number 10)";

    private protected override void ImportCore(ReadOnlySpan<double> core)
    {
    }
}
