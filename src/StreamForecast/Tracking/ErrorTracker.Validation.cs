using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Tracking;

// The import check of ErrorTracker: every rule a state reached by Record, RecordUnscored and Reset satisfies, and
// nothing stricter. Each rule below says why every reachable state passes it; where floating-point rounding enters, the
// slack is derived from the operations the tracker performs (u = 2^-53 is the unit roundoff of a double).
public sealed partial class ErrorTracker
{
    private const long NegativeZeroBits = unchecked((long)0x8000_0000_0000_0000);

    // The unit roundoff of a double: one correctly rounded operation has a relative error of at most u = 2^-53.
    private const double UnitRoundoff = 1.0 / 9_007_199_254_740_992;

    // Relative slack of the comparisons between two compensated sums (or a few operations on them). A Neumaier sum of n
    // terms is within 2u·|sum| + c·n·u²·Σ|terms| of the exact sum, with a small constant c (Higham, Accuracy and Stability
    // of Numerical Algorithms, 2nd ed., §4.3, from memory); with n ≤ 2^53 (so n·u ≤ 1) each side of a comparison is off by
    // at most a few u, and the square roots, products and quotients taken to compare add one u each: under 32u ≈ 3.6e-15
    // in all. 1e-12 is far above that (and far below any change that means anything).
    private const double SumTolerance = 1e-12;

    // √(2^-1075): a square that falls below the normal range is rounded with an absolute error of up to 2^-1075 (half the
    // smallest subnormal) instead of a relative one, so a sum of n squares can be short of the exact sum by n·2^-1075, and
    // its square root by √n·√(2^-1075) ≈ √n·1.96e-162.
    private const double SqrtSubnormalError = 2e-162;

    // Half the smallest subnormal: the absolute error of one rounded product that falls below the normal range.
    private const double SubnormalError = double.Epsilon;

    // Compensation bounds are checked only while n·u ≤ 2^-3 (n ≤ 2^50 terms, which at one period a second takes 35 million
    // years): beyond that the first-order bound below no longer holds and the check is skipped rather than risk refusing
    // a reachable state.
    private const double MaxTermsForCompensationCheck = 1L << 50;

    /// <summary>Returns why <paramref name="state"/> cannot be imported, or null if it can.</summary>
    /// <remarks>
    /// Never refuses a state the tracker can reach (the property tests feed hostile series and import every state they
    /// pass through); refuses the states no sequence of periods produces, naming the number at fault.
    /// </remarks>
    internal string? Validate(ReadOnlySpan<double> state)
    {
        if (state.Length != StateLength)
        {
            return Invariant($"it has {state.Length} numbers, expected {StateLength} for a MASE season length of {_recent.Length}");
        }

        for (int i = 0; i < state.Length; i++)
        {
            if (!double.IsFinite(state[i]))
            {
                return Invariant($"number {i + 1} is not finite");
            }
        }

        // −0 is never written where the tracker holds a count, a two-part sum, the smoothed MAD or Trigg's M: counts are
        // whole numbers converted from integers; sums start at +0 and x + y is −0 in round-to-nearest only when both are
        // −0; the smoothed MAD and M add non-negative products. Trigg's E (β·e + 0·E' with β = 1), the last error and the
        // held actuals can be −0.
        for (int i = 0; i < LastErrorIndex; i++)
        {
            if (i != TriggErrorIndex && BitConverter.DoubleToInt64Bits(state[i]) == NegativeZeroBits)
            {
                return Invariant($"number {i + 1} is −0, which the tracker never holds there (counts, sums, the smoothed MAD and M are +0 when zero)");
            }
        }

        // Counts: whole numbers; a zero-actual period is a scored period and a scored period is an actual.
        if (!WholeNumbers.IsCount(state[CountIndex]))
        {
            return "the scored-period count (number 1) must be a whole number from 0 to 2^53";
        }

        if (!WholeNumbers.IsCount(state[ZeroActualCountIndex]))
        {
            return "the zero-actual count (number 2) must be a whole number from 0 to 2^53";
        }

        if (!WholeNumbers.IsCount(state[ActualCountIndex]))
        {
            return "the actual count (number 3) must be a whole number from 0 to 2^53";
        }

        double n = state[CountIndex];
        double zeros = state[ZeroActualCountIndex];
        double actuals = state[ActualCountIndex];
        if (zeros > n)
        {
            return "the zero-actual count (number 2) cannot exceed the scored-period count (number 1)";
        }

        if (n > actuals)
        {
            return "the scored-period count (number 1) cannot exceed the actual count (number 3): every scored period is an actual";
        }

        // Nothing scored: every error statistic is still at its initial zero (Reset and creation set them; only Record changes them).
        if (n == 0 && !(AllZero(state[ErrorSumIndex..NaiveSumIndex]) && AllZero(state[SmoothedMadIndex..FixedStateLength])))
        {
            return "with no scored period (the scored-period count, number 1, is 0) every error statistic (numbers 4 to 13 and 16 to 19) must be zero";
        }

        long m = _recent.Length;
        if (actuals <= m && !AllZero(state.Slice(NaiveSumIndex, 2)))
        {
            return "with the actual count (number 3) at most m, the sum of naive errors (numbers 14 and 15) must be zero";
        }

        // Σ|y| over the scored periods is at least the floor when one of them had an actual at or above the floor (a sum of
        // non-negative terms is at least each term), and at most n·floor when every actual was below it ("zero" for MAPE).
        double heldActuals = Combined(state, AbsActualSumIndex);
        if (n > zeros ? !(heldActuals >= PercentageFloor * (1 - 1e-9)) : !(heldActuals <= zeros * PercentageFloor * (1 + 1e-9)))
        {
            return n > zeros
                ? "the sum of absolute actuals (number 12) must be at least 1e-15 when some scored actual was not zero (the zero-actual count, number 2, is below the scored-period count, number 1)"
                : "the sum of absolute actuals (numbers 12 and 13) must be below the zero-actual count times 1e-15 when every scored actual was zero or below 1e-15 (the zero-actual count, number 2, equals the scored-period count, number 1)";
        }

        if (n == zeros && !AllZero(state.Slice(PercentErrorSumIndex, 2)))
        {
            return "with no non-zero scored actual (the zero-actual count, number 2, equals the scored-period count, number 1) the sum of percentage errors (numbers 10 and 11) must be zero";
        }

        // Each sum of non-negative terms: its running part never goes below any term added, so it is ≥ 0; and each
        // compensation step adds the exact rounding error of one addition, at most u times that addition's result, which
        // is at most the final running part: |compensation| ≤ terms·u·running part (doubled for the rounding of the
        // compensation's own additions).
        double naiveTerms = Math.Max(0, actuals - m);
        string? problem = CheckNonNegativeSum(state, AbsErrorSumIndex, n, "the sum of absolute errors Σ|e| (numbers 6 and 7)")
            ?? CheckNonNegativeSum(state, SquaredErrorSumIndex, n, "the sum of squared errors Σe² (numbers 8 and 9)")
            ?? CheckNonNegativeSum(state, PercentErrorSumIndex, n - zeros, "the sum of percentage errors (numbers 10 and 11)")
            ?? CheckNonNegativeSum(state, AbsActualSumIndex, n, "the sum of absolute actuals Σ|y| (numbers 12 and 13)")
            ?? CheckNonNegativeSum(state, NaiveSumIndex, naiveTerms, "the sum of naive errors Σ|y(t) − y(t−m)| (numbers 14 and 15)");
        if (problem is not null)
        {
            return problem;
        }

        double absErrorRunning = state[AbsErrorSumIndex];
        double absErrors = Combined(state, AbsErrorSumIndex);
        double errors = Combined(state, ErrorSumIndex);
        double squares = Combined(state, SquaredErrorSumIndex);
        double percents = Combined(state, PercentErrorSumIndex);
        double absActuals = Combined(state, AbsActualSumIndex);
        double smoothedMad = state[SmoothedMadIndex];
        double triggError = state[TriggErrorIndex];
        double triggAbsError = state[TriggAbsErrorIndex];
        double lastError = state[LastErrorIndex];
        double madWeight = _options.SmoothedMadWeight;
        double beta = _options.TriggBeta;

        // RSFE's partial sums are at most Σ|e| in size (times (1 + u)^n ≤ 2 for the roundings), so its compensation is
        // bounded as above with twice Σ|e|.
        if (n <= MaxTermsForCompensationCheck && Math.Abs(state[ErrorSumIndex + 1]) > 4 * n * UnitRoundoff * absErrors)
        {
            return "the compensation of RSFE (number 5) is larger than the rounding of its additions can make it";
        }

        // Σ|e| = 0 means every error was zero (see above), and then so is every other error statistic: exact, no rounding.
        if (absErrorRunning == 0
            && !(AllZero(state.Slice(ErrorSumIndex, 2)) && AllZero(state.Slice(SquaredErrorSumIndex, 4))
                && smoothedMad == 0 && triggError == 0 && triggAbsError == 0 && lastError == 0))
        {
            return "with the sum of absolute errors Σ|e| (number 6) zero every error was zero, so RSFE, Σe², the percentage errors, the smoothed MAD, Trigg's smoothed error E and absolute error M and the last error (numbers 4, 5, 8 to 11 and 16 to 19) must be zero";
        }

        // The last error is one of the terms of Σ|e| and Σe²: the running parts are at least as large (exact, see above).
        if (absErrorRunning < Math.Abs(lastError) || state[SquaredErrorSumIndex] < lastError * lastError)
        {
            return "the last error (number 19) is larger than the sum of absolute errors Σ|e| or squared errors Σe² (numbers 6 and 8) it is part of";
        }

        // |Σe| ≤ Σ|e| (triangle inequality), both sides within the rounding of a compensated sum.
        if (Math.Abs(errors) > absErrors * (1 + SumTolerance))
        {
            return "|RSFE| (numbers 4 and 5) cannot exceed the sum of absolute errors Σ|e| (numbers 6 and 7)";
        }

        // The sums before the last period were a state too: |Σe − e| ≤ Σ|e| − |e| (triangle inequality on the earlier
        // errors), within the rounding of the two compensated sums (relative to Σ|e|).
        if (Math.Abs(errors - lastError) > (absErrors - Math.Abs(lastError)) + (absErrors * SumTolerance))
        {
            return "RSFE and the last error (numbers 4, 5 and 19) leave the earlier errors summing to more in size than Σ|e| (numbers 6 and 7) less the last error allows";
        }

        // (Σ|e|)²/n ≤ Σe² ≤ (Σ|e|)² (Cauchy–Schwarz, and the square of a sum of non-negative terms), compared through
        // square roots so nothing overflows; squares below the normal range may be rounded to zero (SqrtSubnormalError).
        double rootN = Math.Sqrt(n);
        double rootSquares = Math.Sqrt(squares);
        double subnormalSlack = 2 * rootN * SqrtSubnormalError;
        if (absErrors > (rootN * rootSquares * (1 + SumTolerance)) + (rootN * subnormalSlack))
        {
            return "the sum of squared errors Σe² (numbers 8 and 9) is below (Σ|e|)²/n, which no errors can give (Cauchy–Schwarz)";
        }

        if (rootSquares > (absErrors * (1 + SumTolerance)) + subnormalSlack)
        {
            return "the sum of squared errors Σe² (numbers 8 and 9) is above (Σ|e|)², which no errors can give";
        }

        // The largest |error| is at most Σ|e| and at most √Σe²; a smoothed value of |errors| (a weighted mean of them) is at
        // most that largest |error|, up to the rounding of the smoothing recursion (SmoothingExcess).
        double largestError = (Math.Min(absErrors, rootSquares) * (1 + SumTolerance)) + subnormalSlack;
        if (smoothedMad > Smoothed(largestError, madWeight))
        {
            return "the smoothed MAD (number 16) is larger than the largest error that Σ|e| and Σe² (numbers 6 to 9) allow";
        }

        if (triggAbsError > Smoothed(largestError, beta))
        {
            return "Trigg's smoothed absolute error M (number 18) is larger than the largest error that Σ|e| and Σe² (numbers 6 to 9) allow";
        }

        // |E| ≤ M exactly: E and M are built by the same operations on e and |e|, rounding is monotone and symmetric, and
        // |fl(a + b)| ≤ fl(|a| + |b|); so the inequality holds after every period without any slack.
        if (Math.Abs(triggError) > triggAbsError)
        {
            return "Trigg's smoothed error E (number 17) cannot exceed the smoothed absolute error M (number 18) in size";
        }

        // Trigg's E and M before the last period: E = fl(a + b) and M = fl(|a| + c) with a = fl(β·e), b = fl((1 − β)·E'),
        // c = fl((1 − β)·M') ≥ |b| (as |E'| ≤ M'); so |E − a| ≤ |b| + u·|E| ≤ M − |a| + 2u·M to first order. Slack 6u·M for
        // the roundings of that bound and of the two subtractions here, plus one subnormal.
        double lastShare = beta * lastError;
        if (Math.Abs(triggError - lastShare) > triggAbsError - Math.Abs(lastShare) + (6 * UnitRoundoff * triggAbsError) + SubnormalError)
        {
            return "Trigg's smoothed error E and absolute error M (numbers 17 and 18) and the last error (number 19) imply an earlier E larger in size than the earlier M";
        }

        // The newest term of a smoothed value: x(t) = fl(fl(w·|e|) + fl((1 − w)·x(t−1))) ≥ fl(w·|e|), exactly (the second
        // addend is ≥ 0 and rounding is monotone); the first smoothed MAD is |e| itself.
        if (n == 1 ? smoothedMad != Math.Abs(lastError) : smoothedMad < madWeight * Math.Abs(lastError))
        {
            return "the smoothed MAD (number 16) is smaller than the last error's share of it (number 19)";
        }

        if (triggAbsError < beta * Math.Abs(lastError))
        {
            return "Trigg's smoothed absolute error M (number 18) is smaller than the last error's share of it (number 19)";
        }

        // One scored period fixes the error statistics completely: they are that error, its size, its square, and β times
        // it (E(0) = M(0) = 0), each computed by one rounded operation and added to zero without rounding.
        if (n == 1
            && !(state[ErrorSumIndex] == lastError && state[ErrorSumIndex + 1] == 0
                && absErrorRunning == Math.Abs(lastError) && state[AbsErrorSumIndex + 1] == 0
                && state[SquaredErrorSumIndex] == lastError * lastError && state[SquaredErrorSumIndex + 1] == 0
                && triggError == beta * lastError && triggAbsError == beta * Math.Abs(lastError)))
        {
            return "after one scored period (the scored-period count, number 1, is 1) RSFE, Σ|e|, Σe², Trigg's smoothed error E and absolute error M (numbers 4 to 9, 17 and 18) must follow from the last error (number 19)";
        }

        if (n == 1 && zeros == 0
            && !(state[AbsActualSumIndex + 1] == 0 && state[PercentErrorSumIndex + 1] == 0
                && state[PercentErrorSumIndex] == 100 * Math.Abs(lastError) / state[AbsActualSumIndex]))
        {
            return "after one scored period (the scored-period count, number 1, is 1) the percentage error (numbers 10 and 11) must be 100·|last error| / the sum of absolute actuals (numbers 19 and 12)";
        }

        // Each percentage term 100·|e|/|y| is at least 100·|e|/Σ|y| (|y| ≤ Σ|y|), so with no zero actual scored the sum of
        // percentage errors is at least 100·Σ|e|/Σ|y| (the WAPE), within rounding (a term that falls below the normal
        // range may lose up to one subnormal).
        if (zeros == 0 && n > 0)
        {
            double floor = absErrors / absActuals * (100 * (1 - SumTolerance));
            if (double.IsFinite(floor) && percents < floor - (n * SubnormalError))
            {
                return "the sum of percentage errors (numbers 10 and 11) is below 100·Σ|e|/Σ|y|, the least that Σ|e| and the sum of absolute actuals (numbers 6 and 12) allow";
            }
        }

        if (!RingWindow.RawFits(state[FixedStateLength..], (long)actuals))
        {
            return Invariant($"the last m actuals (numbers {FixedStateLength + 1} to {StateLength}): with the actual count (number 3) at {actuals}, the slots not yet filled must be zero");
        }

        // When every actual was scored, Σ|y| covers every actual: each held actual is at most Σ|y|'s running part (exact,
        // as above) and each naive term |y(t) − y(t−m)| ≤ |y(t)| + |y(t−m)|, so the naive sum is at most 2·Σ|y|.
        if (n == actuals)
        {
            double runningActuals = state[AbsActualSumIndex];
            foreach (double y in state[FixedStateLength..])
            {
                if (Math.Abs(y) > runningActuals)
                {
                    return Invariant($"every actual was scored (the scored-period count equals the actual count), yet a held actual (numbers {FixedStateLength + 1} to {StateLength}) is larger than the sum of absolute actuals (number 12)");
                }
            }

            if (Combined(state, NaiveSumIndex) > 2 * absActuals * (1 + SumTolerance))
            {
                return "every actual was scored (the scored-period count equals the actual count), yet the sum of naive errors (numbers 14 and 15) exceeds twice the sum of absolute actuals (numbers 12 and 13)";
            }
        }

        return null;
    }

    /// <summary>The newest actual recorded (scored or not), or false when none has been since creation or the last reset.</summary>
    /// <remarks>For the engine's restore check, which compares it with the series' last actual.</remarks>
    internal bool TryGetNewestActual(out double actual)
    {
        actual = _actualCount > 0 ? _recent.Newest(_actualCount) : 0;
        return _actualCount > 0;
    }

    /// <summary>Checks a two-part sum of <paramref name="terms"/> non-negative terms; see the comment at its call.</summary>
    private static string? CheckNonNegativeSum(ReadOnlySpan<double> state, int index, double terms, string name)
    {
        double running = state[index];
        double compensation = state[index + 1];
        if (running < 0 || running + compensation < 0)
        {
            return name + " cannot be negative: its terms are sizes, squares or percentages";
        }

        if (terms <= MaxTermsForCompensationCheck && Math.Abs(compensation) > 2 * terms * UnitRoundoff * running)
        {
            return name + ": the compensation (second number) is larger than the rounding of its additions can make it";
        }

        return null;
    }

    /// <summary>
    /// The largest value an exponentially smoothed series of values at most <paramref name="largest"/> can have, with
    /// weight <paramref name="weight"/> on the newest value, given the rounding of each step.
    /// </summary>
    /// <remarks>
    /// Each step x ← fl(fl(w·a) + fl(fl(1 − w)·x)) takes three roundings, and fl(1 − w) + w may exceed 1 by u; to first
    /// order an excess δ over the largest value turns into (1 − w)·δ + 3u, which stays below 4u/w once it is there (the
    /// start, |e| itself or fl(β·|e|), is within u of the largest value). For w below 64u that bound is not small, so no
    /// upper limit is imposed. Products below the normal range add an absolute error up to 2^-1075 per step, at most
    /// 2^-1074/w in all.
    /// </remarks>
    private static double Smoothed(double largest, double weight) =>
        weight >= 64 * UnitRoundoff
            ? (largest * (1 + (4 * UnitRoundoff / weight))) + (2 * SubnormalError / weight)
            : double.PositiveInfinity;


    private static double Combined(ReadOnlySpan<double> state, int index) => state[index] + state[index + 1];

    private static bool AllZero(ReadOnlySpan<double> values)
    {
        foreach (double v in values)
        {
            if (v != 0)
            {
                return false;
            }
        }

        return true;
    }

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
