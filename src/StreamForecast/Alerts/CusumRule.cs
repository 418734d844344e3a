using StreamForecast.Internal;

namespace StreamForecast.Alerts;

/// <summary>A two-sided tabular CUSUM on the standardized errors of one series. Create it from <see cref="CusumRuleOptions"/>.</summary>
/// <remarks>
/// <para><b>Input.</b> Reads <see cref="DriftInput.Error"/> e (finite) and <see cref="DriftInput.Sigma"/> σ (finite, above 0),
/// standardizes z = e/σ and updates C⁺ and C⁻ as defined on <see cref="CusumRuleOptions"/>. A period whose z or sums would
/// overflow is rejected. Evidence: C⁺ for under-forecasting and C⁻ for over-forecasting, before any reset after an alarm;
/// transitions report C⁺ or −C⁻ as the signal.</para>
/// <para><b>Cost.</b> O(1), allocation-free. <b>Warm-up</b>: the sums run from the first period; only raising waits. Episodes
/// and snapshots: see <see cref="DriftRule"/>. <see cref="DriftRule.Acknowledge"/>, <see cref="DriftRule.Rebaseline"/> and
/// <see cref="DriftRule.Reset"/> restart both sums at 0.</para>
/// <para><b>Thread safety.</b> Not thread-safe; one owner per series.</para>
/// </remarks>
public sealed class CusumRule : DriftRule
{
    private readonly CusumRuleOptions _options;
    private double _upper;
    private double _lower;

    /// <summary>Creates a rule with both sums at 0 and no open episode.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public CusumRule(CusumRuleOptions options)
        : base(options)
    {
        _options = options;
    }

    /// <inheritdoc/>
    public override DriftRuleOptions Options => _options;

    /// <summary>The upper sum C⁺ after the last period (0 after a reset after an alarm); never negative.</summary>
    public double UpperSum => _upper;

    /// <summary>The lower sum C⁻ after the last period (0 after a reset after an alarm); never negative.</summary>
    public double LowerSum => _lower;

    /// <inheritdoc/>
    public override bool CanRead(in DriftInput input) => double.IsFinite(input.Error) && double.IsFinite(input.Sigma) && input.Sigma > 0;

    private protected override void EvaluateCore(in DriftInput input, out double underEvidence, out double overEvidence)
    {
        double e = input.Error;
        double sigma = input.Sigma;
        if (!double.IsFinite(e))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.Error), e, "the error e = actual − forecast must be a finite number");
        }

        if (!(sigma > 0) || !double.IsFinite(sigma))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.Sigma), sigma, "σ must be a finite number above 0");
        }

        double k = _options.ReferenceValue;
        double z = e / sigma;
        double upper = Math.Max(0, z - k + _upper);
        double lower = Math.Max(0, -z - k + _lower);
        if (!double.IsFinite(upper) || !double.IsFinite(lower))
        {
            DriftThrowHelper.ThrowInvalidInput(nameof(DriftInput.Error), e, "the standardized error e/σ and the CUSUM sums must stay finite; σ is too small for this error");
        }

        underEvidence = upper;
        overEvidence = lower;
        double threshold = _options.RaiseThreshold;
        if (_options.ResetAfterAlarm && (upper >= threshold || lower >= threshold))
        {
            upper = 0;
            lower = 0;
        }

        _upper = upper;
        _lower = lower;
    }

    private protected override void ResetCore()
    {
        _upper = 0;
        _lower = 0;
    }

    // Layout: C⁺, C⁻.
    private protected override int CoreStateLength => 2;

    private protected override void ExportCore(Span<double> destination)
    {
        destination[0] = _upper;
        destination[1] = _lower;
    }

    private protected override string? ValidateCore(ReadOnlySpan<double> core, double lastUnder, double lastOver, long periods)
    {
        // The evidence is the pair of sums C⁺, C⁻ after the last period; the stored sums are the same numbers, or both 0
        // when the reset mode restarted them after an alarm (either sum at h). Exact: the rule copies the numbers.
        double upper = core[0];
        double lower = core[1];
        // Math.Max(0, x) returns +0 for x = −0, so a zero sum is +0.
        if (!(upper >= 0) || !(lower >= 0) || double.IsNegative(upper) || double.IsNegative(lower))
        {
            return "the CUSUM sums C⁺ and C⁻ (numbers 12 and 13) cannot be negative (nor −0)";
        }

        if (!(lastUnder >= 0) || !(lastOver >= 0) || double.IsNegative(lastUnder) || double.IsNegative(lastOver))
        {
            return "the last evidence (numbers 10 and 11) is a pair of CUSUM sums and cannot be negative";
        }

        double threshold = _options.RaiseThreshold;
        bool restarted = _options.ResetAfterAlarm && (lastUnder >= threshold || lastOver >= threshold);
        if (restarted ? upper != 0 || lower != 0 : upper != lastUnder || lower != lastOver)
        {
            return restarted
                ? "the CUSUM sums C⁺ and C⁻ (numbers 12 and 13) must be 0: the last evidence (numbers 10 and 11) reached h and the sums restart after an alarm"
                : "the CUSUM sums C⁺ and C⁻ (numbers 12 and 13) must equal the last evidence (numbers 10 and 11)";
        }

        // From C⁺ = C⁻ = 0 one period makes at most one sum positive: z − k > 0 and −z − k > 0 cannot both hold for
        // k ≥ 0 (and rounding keeps the signs: fl(z − k) > 0 needs z > k ≥ 0, and then fl(−z − k) < 0).
        if (periods == 1 && lastUnder > 0 && lastOver > 0)
        {
            return "after one period (the period count, number 1, is 1) at most one of the CUSUM sums (numbers 10 and 11) can be above zero";
        }

        return null;
    }

    private protected override void ImportCore(ReadOnlySpan<double> core)
    {
        _upper = core[0];
        _lower = core[1];
    }
}
