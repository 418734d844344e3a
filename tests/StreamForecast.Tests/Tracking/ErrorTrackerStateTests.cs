using FsCheck;
using FsCheck.Fluent;
using StreamForecast.Tests.Infrastructure;
using StreamForecast.Tracking;

namespace StreamForecast.Tests.Tracking;

/// <summary>
/// The tracker's exported state: every state the tracker reaches on hostile series imports and continues bit-identically;
/// every state edited to something no series can produce is refused with a message that names the number at fault.
/// </summary>
public sealed class ErrorTrackerStateTests
{
    /// <summary>One period: an actual and, when <paramref name="Scored"/>, the forecast made for it.</summary>
    public readonly record struct Period(double Actual, double Forecast, bool Scored);

    private static Gen<ErrorTrackerOptions> OptionsGen { get; } =
        from w in Gen.Elements(0.1, 0.3, 1.0, 1e-3, 1e-9)
        from beta in Gen.Elements(0.1, 0.2, 1.0, 1e-6)
        from rule in Gen.Elements(SigmaRule.ScaledMad, SigmaRule.ScaledSmoothedMad, SigmaRule.Rmse)
        from m in Gen.Elements(1, 2, 3, 7)
        select new ErrorTrackerOptions(w, beta, rule, 1.25, m);

    /// <summary>
    /// Hostile periods: actuals from <see cref="HostileSeries.WithRefused"/>, forecasts either hostile on their own, equal to
    /// the actual (long runs of zero errors), or the previous actual; about one period in six unscored.
    /// </summary>
    private static Gen<Period[]> PeriodsGen { get; } =
        from actuals in HostileSeries.WithRefused(100)
        from mode in Gen.Choose(0, 2)
        from own in HostileSeries.WithRefused(actuals.Length).Select(f => f.Length >= actuals.Length ? f : [.. f, .. new double[actuals.Length - f.Length]])
        from unscored in Gen.Frequency((5, Gen.Constant(false)), (1, Gen.Constant(true))).ArrayOf(actuals.Length)
        select actuals.Select((a, i) => new Period(
            a,
            mode switch { 0 => own[i], 1 => a, _ => i == 0 ? 0 : actuals[i - 1] },
            !unscored[i])).ToArray();

    [Fact]
    public void ExportState_HostileSeries_EveryStateImportsAndContinuesBitIdentically() =>
        PropertyCases.Check(Prop.ForAll(OptionsGen.ToArbitrary(), PeriodsGen.ToArbitrary(), Gen.Choose(0, 1000).ToArbitrary(), (options, periods, cut) =>
        {
            int split = cut % (periods.Length + 1);
            var tracker = options.CreateTracker();
            var probe = options.CreateTracker();
            ErrorTracker? copy = null;
            bool insideDomain = true; // every period accepted so far was inside the numeric domain
            for (int i = 0; i <= periods.Length; i++)
            {
                // Export → import → export is the identity on every state the tracker passes through.
                double[] state = tracker.ExportState();
                string? refused = TryImport(probe, state);
                if (refused is not null)
                {
                    return false.Label($"after {i} periods the tracker refused its own state: {refused}");
                }

                if (!Bits.Same(state, probe.ExportState()))
                {
                    return false.Label($"after {i} periods export → import → export changed the state");
                }

                if (i == split)
                {
                    copy = options.CreateTracker();
                    copy.ImportState(state);
                }

                if (i == periods.Length)
                {
                    break;
                }

                Period p = periods[i];
                bool accepted = Feed(tracker, p);
                if (!accepted && !Bits.Same(state, tracker.ExportState()))
                {
                    return false.Label($"period {i + 1} ({p}) was refused but changed the state");
                }

                if (accepted && (!double.IsFinite(p.Actual) || (p.Scored && !double.IsFinite(p.Forecast))))
                {
                    return false.Label($"period {i + 1} ({p}) holds NaN or an infinity but was accepted");
                }

                if (!accepted && insideDomain && MustBeAccepted(p))
                {
                    return false.Label($"period {i + 1} ({p}) is inside the numeric domain but was refused");
                }

                insideDomain &= !accepted || MustBeAccepted(p);

                if (copy is not null && i >= split)
                {
                    // The imported tracker continues bit-identically: same acceptance, same state, same statistics.
                    if (Feed(copy, p) != accepted || !Bits.Same(tracker.ExportState(), copy.ExportState())
                        || !Bits.Same([tracker.TrackingSignal, tracker.TriggSignal, tracker.Mase, tracker.Sigma, tracker.Mape, tracker.Wape],
                            [copy.TrackingSignal, copy.TriggSignal, copy.Mase, copy.Sigma, copy.Mape, copy.Wape]))
                    {
                        return false.Label($"imported after {split} periods, it diverged at period {i + 1} ({p})");
                    }
                }
            }

            return true.ToProperty();
        }));

    // After periods inside ±1e15 only, a period inside ±1e15 can still be refused for one reason: a percentage error
    // 100·|e|/|actual| that overflows, which needs |actual| below about 1e-291 (100·2e15/1.8e308). Everything else must be
    // accepted. (Values beyond ±1e15 that the tracker accepted, which it does until it enforces the numeric domain, may
    // make later periods overflow; then only "a refusal changes nothing" is checked.)
    private static bool MustBeAccepted(Period p) =>
        NumericDomain.Contains(p.Actual) && (!p.Scored || NumericDomain.Contains(p.Forecast))
        && (!p.Scored || p.Actual == 0 || Math.Abs(p.Actual) >= 1e-290);

    private static bool Feed(ErrorTracker tracker, Period p)
    {
        try
        {
            if (p.Scored)
            {
                tracker.Record(p.Actual, p.Forecast);
            }
            else
            {
                tracker.RecordUnscored(p.Actual);
            }

            return true;
        }
        catch (ArgumentOutOfRangeException)
        {
            return false;
        }
    }

    private static string? TryImport(ErrorTracker tracker, double[] state)
    {
        try
        {
            tracker.ImportState(state);
            return null;
        }
        catch (ArgumentException ex)
        {
            return ex.Message;
        }
    }

    [Fact]
    public void ImportState_TinyWeightsAfterALongConstantRun_AcceptsSmoothedValuesAboveEveryError()
    {
        // With w = β = 1e-9 the smoothed MAD and Trigg's M drift above a constant |error| by about 1.85e-16 per period
        // (rounding of S ← w·|e| + (1 − w)·S), 1.85e-11 after 100,000 periods: a reachable state in which the smoothed MAD
        // exceeds every error, by far more than a fixed 1e-12 tolerance. A check of "smoothed MAD ≤ largest error" without
        // the rounding excess 4u/w (≈ 4.4e-7 here) would refuse it; the import must accept it.
        var options = new ErrorTrackerOptions(smoothedMadWeight: 1e-9, triggBeta: 1e-9);
        var tracker = options.CreateTracker();
        for (int i = 0; i < 100_000; i++)
        {
            tracker.Record(0.3, 0);
        }

        double excess = (tracker.SmoothedMad / 0.3) - 1;
        Assert.True(excess > 1e-11, $"the smoothed MAD exceeds the constant error by only {excess:E3}");
        var copy = options.CreateTracker();
        copy.ImportState(tracker.ExportState());
        Assert.True(Bits.Same(tracker.ExportState(), copy.ExportState()));
    }

    // ---- Unreachable edits, field by field ------------------------------------------------------------------------

    /// <summary>Three reachable states that between them switch on every import rule.</summary>
    private static IEnumerable<(string Name, ErrorTrackerOptions Options, double[] State)> Bases()
    {
        // Mixed: unscored warm-up periods, zero actuals, n < actual count, m = 3.
        var mixedOptions = new ErrorTrackerOptions(0.2, 0.1, seasonLength: 3);
        var mixed = mixedOptions.CreateTracker();
        var rng = new Random(11);
        for (int t = 0; t < 200; t++)
        {
            double actual = t % 9 == 4 ? 0 : Math.Round(50 + (rng.NextDouble() * 40), 2);
            if (t < 5 || t % 17 == 0)
            {
                mixed.RecordUnscored(actual);
            }
            else
            {
                mixed.Record(actual, Math.Round(45 + (rng.NextDouble() * 40), 2));
            }
        }

        yield return ("mixed", mixedOptions, mixed.ExportState());

        // Every actual scored and none zero, m = 2: switches on the WAPE floor and the bounds by Σ|y|.
        var scoredOptions = new ErrorTrackerOptions(0.1, 0.2, seasonLength: 2);
        var scored = scoredOptions.CreateTracker();
        for (int t = 0; t < 60; t++)
        {
            scored.Record(1 + (t % 7 * 13.5), 20 + (t % 5 * 3.25));
        }

        yield return ("all scored", scoredOptions, scored.ExportState());

        // One scored period after one unscored, m = 4: the error statistics follow from the last error; two slots unfilled.
        var oneOptions = new ErrorTrackerOptions(0.1, 0.1, seasonLength: 4);
        var one = oneOptions.CreateTracker();
        one.RecordUnscored(5);
        one.Record(7, 4.5);
        yield return ("one scored", oneOptions, one.ExportState());
    }

    /// <summary>
    /// For each exported number, edits that give a state no sequence of periods can produce (each with why), and the text
    /// the refusal must contain (the field's name). Index meaning: counts n, zeros, actuals; two-part sums Σe, Σ|e|, Σe²,
    /// percentage errors, Σ|y|, naive errors; smoothed MAD, Trigg's E and M, the last error; the ring of the last m actuals.
    /// </summary>
    internal static IEnumerable<(int Index, string Why, double Value, string Names)> UnreachableEdits(string baseName, double[] g, ErrorTrackerOptions o)
    {
        double n = g[0], zeros = g[1], actuals = g[2];
        double absErrors = g[5] + g[6], squares = g[7] + g[8], absActuals = g[11] + g[12];
        double largest = Math.Min(absErrors, Math.Sqrt(squares));
        const string count = "scored-period count", zeroCount = "zero-actual count", actualCount = "actual count";

        yield return (0, "a negative count", -1, count);
        yield return (0, "a fractional count", 2.5, count);
        yield return (0, "more scored periods than actuals", actuals + 1, count);
        yield return (0, "no scored period, yet error sums", 0, count);
        yield return (1, "a negative count", -1, zeroCount);
        yield return (1, "more zero actuals than scored periods", n + 1, zeroCount);
        if (zeros == 0)
        {
            yield return (1, "every scored actual zero, yet Σ|y| > 0", n, zeroCount);
        }

        yield return (2, "fewer actuals than scored periods", n - 1, actualCount);
        yield return (2, "a fractional count", actuals + 0.5, actualCount);
        if (g[13] > 0)
        {
            yield return (2, "at most m actuals, yet naive errors", o.SeasonLength, actualCount);
        }

        yield return (3, "|RSFE| above Σ|e|", (3 * absErrors) + 1, "RSFE");
        yield return (4, "a compensation far beyond rounding", (absErrors / 4) + 1, "RSFE");
        yield return (5, "a negative Σ|e|", -1, "Σ|e|");
        yield return (5, "Σ|e| zero with non-zero errors", 0, "Σ|e|");
        yield return (5, "Σ|e| above √n·√Σe² (Cauchy–Schwarz)", absErrors * 1e6, "Σ|e|");
        yield return (6, "a compensation far beyond rounding", (g[5] / 4) + 1, "Σ|e|");
        yield return (7, "a negative Σe²", -1, "Σe²");
        yield return (7, "Σe² zero with errors far above the subnormal range", 0, "Σe²");
        yield return (7, "Σe² above (Σ|e|)²", 4 * absErrors * absErrors, "Σe²");
        yield return (8, "a compensation far beyond rounding", (g[7] / 4) + 1, "Σe²");
        yield return (9, "a negative sum of percentage errors", -1, "percentage error");
        yield return (10, "a compensation far beyond rounding", (g[9] / 4) + 1, "percentage error");
        yield return (11, "a negative Σ|y|", -1, "absolute actuals");
        if (n > zeros)
        {
            yield return (11, "Σ|y| zero although a non-zero actual was scored", 0, "absolute actuals");
        }

        yield return (12, "a compensation far beyond rounding", (g[11] / 4) + 1, "absolute actuals");
        yield return (13, "a negative naive sum", -1, "naive errors");
        yield return (14, "a compensation far beyond rounding", (g[13] / 4) + 1, "naive errors");
        yield return (15, "a negative smoothed MAD", -1, "smoothed MAD");
        yield return (15, "a smoothed MAD ten times the largest error", (10 * largest) + 1, "smoothed MAD");
        yield return (16, "|E| above M", (2 * g[17]) + 1, "smoothed error E");
        yield return (16, "|E| above M, negative", -((2 * g[17]) + 1), "smoothed error E");
        yield return (17, "a negative M", -1, "absolute error M");
        yield return (17, "M ten times the largest error", (10 * largest) + 1, "absolute error M");
        yield return (18, "a last error larger than Σ|e|", (2 * g[5]) + 1, "last error");

        if (zeros == 0 && n > 1)
        {
            yield return (9, "percentage errors below the WAPE floor 100·Σ|e|/Σ|y|", 0.5 * 100 * absErrors / absActuals, "percentage error");
        }

        if (n == actuals)
        {
            yield return (13, "naive errors above 2·Σ|y| with every actual scored", (3 * absActuals) + 1, "naive errors");
            yield return (19, "a held actual above Σ|y| with every actual scored", (2 * g[11]) + 1, "held actual");
        }

        if (n == 1)
        {
            yield return (3, "RSFE other than the one error", g[18] + 1, "RSFE");
            yield return (7, "Σe² other than the one error's square", g[7] + 1, "Σe²");
            yield return (9, "a percentage error other than 100·|e|/|y|", (2 * g[9]) + 1, "percentage error");
            yield return (15, "a smoothed MAD other than the one |error|", g[15] + 0.5, "smoothed MAD");
            yield return (16, "Trigg's E other than β·e", g[16] / 2, "smoothed error E");
        }

        int filled = (int)Math.Min(actuals, o.SeasonLength);
        for (int slot = filled; slot < o.SeasonLength; slot++)
        {
            yield return (19 + slot, $"slot {slot} not yet filled but not zero", 1, "actuals (numbers 20");
        }

        _ = baseName;
    }

    [Fact]
    public void ImportState_EachNumberEditedToAnUnreachableValue_RefusedNamingTheNumber()
    {
        var covered = new HashSet<int>();
        int edits = 0;
        foreach ((string baseName, ErrorTrackerOptions options, double[] good) in Bases())
        {
            var tracker = options.CreateTracker();
            tracker.ImportState(good); // the base itself is reachable
            double[] before = tracker.ExportState();
            foreach ((int index, string why, double value, string names) in UnreachableEdits(baseName, good, options))
            {
                double[] bad = (double[])good.Clone();
                bad[index] = value;
                if (Bits.Same(bad, good))
                {
                    continue; // the edit happens to leave the number as it was
                }

                var ex = Assert.Throws<ArgumentException>(() => tracker.ImportState(bad));
                Assert.True(ex.Message.Contains(names, StringComparison.Ordinal) && ex.Message.Contains("Nothing was imported", StringComparison.Ordinal),
                    $"{baseName}, number {index + 1} = {value} ({why}): the message should name '{names}': {ex.Message}");
                Assert.True(Bits.Same(before, tracker.ExportState()), $"{baseName}, number {index + 1}: a refused import changed the tracker");
                covered.Add(index);
                edits++;
            }
        }

        // Every fixed number and at least one ring slot has an unreachable edit that is refused.
        Assert.All(Enumerable.Range(0, 20), i => Assert.Contains(i, covered));
        Assert.True(edits > 60, $"only {edits} edits");
    }
}
