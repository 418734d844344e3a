namespace StreamForecast.Alerts;

/// <summary>A limit on |Trigg's smoothed signal| of one series. Create it from <see cref="TriggSignalRuleOptions"/>.</summary>
/// <remarks>
/// <para><b>Input.</b> Reads <see cref="DriftInput.TriggSignal"/> T, which must be finite and within [−1, 1] (a rounding
/// excess up to 10⁻⁶ is accepted). Evidence: T for under-forecasting, −T for over-forecasting; transitions report T
/// itself as the signal.</para>
/// <para><b>Cost.</b> O(1), allocation-free. <b>Warm-up</b>, episodes and snapshots: see <see cref="DriftRule"/>. After
/// <see cref="DriftRule.Acknowledge"/> or <see cref="DriftRule.Rebaseline"/>, reset the error tracker too.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class TriggSignalRule : DriftRule
{
    private const double MaxMagnitude = 1 + DriftRuleOptions.LevelTolerance;

    private readonly TriggSignalRuleOptions _options;

    /// <summary>Creates a rule with no open episode.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public TriggSignalRule(TriggSignalRuleOptions options)
        : base(options)
    {
        _options = options;
    }

    /// <inheritdoc/>
    public override DriftRuleOptions Options => _options;

    /// <inheritdoc/>
    public override bool CanRead(in DriftInput input) => double.IsFinite(input.TriggSignal);

    private protected override void EvaluateCore(in DriftInput input, out double underEvidence, out double overEvidence)
    {
        double t = input.TriggSignal;
        if (!(Math.Abs(t) <= MaxMagnitude))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.TriggSignal), t, "Trigg's smoothed signal must be a finite number between −1 and 1");
        }

        underEvidence = t;
        overEvidence = -t;
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
        if (!(Math.Abs(lastUnder) <= MaxMagnitude))
        {
            return "the last Trigg signal (number 10) must be between −1 and 1";
        }

        return lastOver == -lastUnder ? null : "the last over-forecast evidence (number 11) must be the negated Trigg signal (number 10)";
    }

    private protected override void ImportCore(ReadOnlySpan<double> core)
    {
    }
}
