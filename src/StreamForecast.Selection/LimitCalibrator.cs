using System.Globalization;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Selection.Internal;
using StreamForecast.Streaming;
using StreamForecast.Tracking;

namespace StreamForecast.Selection;

/// <summary>
/// Sets a drift rule's limit for one method on one series so that, on in-control errors like the series' own, false alarms
/// come on average every <see cref="CalibrationOptions.TargetRunLength"/> periods; reports the run length achieved on fresh
/// simulations and the delay to detect a step and a ramp.
/// </summary>
/// <remarks>
/// <para><b>Why.</b> A fixed textbook limit means very different false-alarm rates for different methods: the errors of a
/// smoothing or averaging forecast are correlated, and the tracking signal accumulates them (see the library's notes on
/// calibrating limits). Calibrating per method and series replaces the textbook number by one with a known cost.</para>
/// <para><b>In-control errors.</b> The method's own forecaster runs over the history (a <see cref="TrackedForecaster"/>, as
/// live) and its one-step errors are kept. Their mean is removed (in control means unbiased) and streams of errors are
/// drawn from them by the circular block bootstrap: blocks of <see cref="CalibrationOptions.BlockLength"/> consecutive
/// residuals from random starting points, strung together, so dependence up to the block length carries over. Every stream
/// has its own seed drawn from <see cref="CalibrationOptions.Seed"/> with <see cref="Random"/>: results are reproducible.
/// Dependence longer than a block is lost; for the tracking signal (which sums errors from the start) on a method whose
/// errors cancel over long spans, the simulated signal then wanders more than the real one, so the calibrated limit errs
/// on the side of fewer false alarms.</para>
/// <para><b>Run length.</b> Each stream feeds a fresh <see cref="ErrorTracker"/> (with <see cref="CalibrationOptions.Tracking"/>;
/// each simulated error is recorded as an actual equal to the error against a forecast of 0) and a fresh rule, through the
/// same <see cref="DriftInput"/> the engine builds (error, the tracker's σ, tracking signal, Trigg signal; a period whose
/// input the rule cannot read is skipped, as the engine skips it). The run length is the number of periods up to and
/// including the one whose evaluation raises the first episode; the rule's warm-up counts. Streams stop at
/// <see cref="CalibrationOptions.MaxRunLength"/>.</para>
/// <para><b>Limit.</b> For fixed streams the run length can only grow with the limit, so the mean run length is a
/// non-decreasing step function of it. The limit is found by bisection (after doubling an upper bound from the template's
/// limit) as the smallest limit whose mean run length over the calibration streams reaches the target, to a relative
/// precision of 10⁻⁴. The clear and escalation levels keep their ratios to the limit in the template; warm-up, debouncing
/// and the CUSUM's reference value k are kept.</para>
/// <para><b>Detection.</b> A change in demand reaches the errors through the method, which adapts to it: the "error
/// signature" of an upward step of <see cref="CalibrationOptions.StepSize"/>·σ (σ the residuals' standard deviation) or ramp of
/// <see cref="CalibrationOptions.RampSlope"/>·σ per period is the difference between the method's errors on a constant
/// demand at the history's mean with and without the change (exact for the linear methods). It is added to fresh in-control
/// streams from period <see cref="CalibrationOptions.ChangeStart"/> + 1 on.</para>
/// <para><b>Cost.</b> About (bisection steps + 3) × simulations × mean run length tracker and rule updates; with the defaults a
/// fraction of a second. <b>Thread safety:</b> static and thread-safe.</para>
/// </remarks>
public static class LimitCalibrator
{
    private const int MinResiduals = 10;
    private const double SmallestLimit = 1e-3;

    /// <summary>Calibrates the limit of <paramref name="rule"/> for <paramref name="method"/> on <paramref name="series"/>.</summary>
    /// <param name="series">The history, oldest first; every value finite and inside the method's domain; at least 10 one-step errors after the warm-up.</param>
    /// <param name="method">The forecasting method whose errors the rule will watch.</param>
    /// <param name="rule">
    /// The rule to calibrate, as a template: a <see cref="TrackingSignalRuleOptions"/> (its limit is set), a
    /// <see cref="TriggSignalRuleOptions"/> (its limit, at most 1) or a <see cref="CusumRuleOptions"/> (its decision interval h).
    /// </param>
    /// <param name="options">The calibration settings; <see cref="CalibrationOptions.Default"/> when null.</param>
    /// <returns>The calibrated rule and its simulated behaviour.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="method"/> or <paramref name="rule"/> is null.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value of the history is not finite, or the method rejects one.</exception>
    /// <exception cref="ArgumentException">
    /// Too few residuals, residuals that vary by no more than rounding (standard deviation at most 10⁻¹² of the largest |actual|), or an
    /// unknown rule type.
    /// </exception>
    public static LimitCalibration Calibrate(ReadOnlySpan<double> series, ForecasterOptions method, DriftRuleOptions rule, CalibrationOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(method);
        ArgumentNullException.ThrowIfNull(rule);
        if (rule is not (TrackingSignalRuleOptions or TriggSignalRuleOptions or CusumRuleOptions))
        {
            SelectionThrowHelper.ThrowArgument(nameof(rule), "Only tracking-signal, Trigg-signal and CUSUM rules can be calibrated.");
        }

        SelectionThrowHelper.CheckFinite(series, nameof(series));
        CalibrationOptions settings = options ?? CalibrationOptions.Default;

        double[] residuals = OneStepResiduals(series, method, settings.Tracking);
        double mean = 0;
        foreach (double r in residuals)
        {
            mean += r;
        }

        mean /= residuals.Length;
        double squares = 0;
        for (int i = 0; i < residuals.Length; i++)
        {
            residuals[i] -= mean;
            squares += residuals[i] * residuals[i];
        }

        double sigma = Math.Sqrt(squares / (residuals.Length - 1));
        double magnitude = 0;
        foreach (double y in series)
        {
            magnitude = Math.Max(magnitude, Math.Abs(y));
        }

        if (!(sigma > 1e-12 * magnitude) || !(sigma > 0))
        {
            SelectionThrowHelper.ThrowArgument(nameof(series), "The one-step residuals of the method on this history do not vary beyond rounding; there is no noise to simulate.");
        }

        int blockLength = settings.BlockLength ?? (int)Math.Ceiling(Math.Cbrt(residuals.Length));
        blockLength = Math.Min(blockLength, residuals.Length);

        var master = new Random(settings.Seed);
        int[] calibrationSeeds = Seeds(master, settings.Simulations);
        int[] validationSeeds = Seeds(master, settings.Simulations);
        int[] stepSeeds = Seeds(master, settings.Simulations);
        int[] rampSeeds = Seeds(master, settings.Simulations);

        var simulator = new StreamSimulator(residuals, blockLength, settings);
        int cap = settings.MaxRunLength;
        double target = settings.TargetRunLength;

        // Bracket the target: the mean run length never falls as the limit grows.
        double lower = SmallestLimit;
        double upper = Math.Min(rule.RaiseLevel, rule.MaxRaiseLevel);
        bool reached = true;
        if (simulator.MeanRunLength(rule.WithRaiseLevel(lower), calibrationSeeds) >= target)
        {
            upper = lower;
            reached = false;
        }
        else
        {
            while (simulator.MeanRunLength(rule.WithRaiseLevel(upper), calibrationSeeds) < target)
            {
                if (upper >= rule.MaxRaiseLevel)
                {
                    reached = false;
                    break;
                }

                lower = upper;
                upper = Math.Min(upper * 2, rule.MaxRaiseLevel);
            }

            if (reached)
            {
                for (int i = 0; i < 60 && upper - lower > 1e-4 * upper; i++)
                {
                    double middle = 0.5 * (lower + upper);
                    if (simulator.MeanRunLength(rule.WithRaiseLevel(middle), calibrationSeeds) >= target)
                    {
                        upper = middle;
                    }
                    else
                    {
                        lower = middle;
                    }
                }
            }
        }

        DriftRuleOptions calibrated = rule.WithRaiseLevel(upper);
        double calibrationMean = simulator.MeanRunLength(calibrated, calibrationSeeds);
        RunLengthSummary inControl = simulator.InControl(calibrated, validationSeeds);

        double baseline = 0;
        foreach (double y in series)
        {
            baseline += y;
        }

        baseline /= series.Length;
        double stepSize = settings.StepSize * sigma;
        double slope = settings.RampSlope * sigma;
        double[]? stepSignature = ChangeSignature(method, baseline, j => stepSize, cap);
        double[]? rampSignature = ChangeSignature(method, baseline, j => slope * (j + 1), cap);
        DetectionSummary step = simulator.Detection(calibrated, stepSeeds, stepSignature);
        DetectionSummary ramp = simulator.Detection(calibrated, rampSeeds, rampSignature);

        return new LimitCalibration(method, calibrated, settings, reached, calibrationMean, inControl, step, ramp,
            residuals.Length, mean, sigma, blockLength);
    }

    /// <summary>The one-step errors of the method run over the history as live.</summary>
    internal static double[] OneStepResiduals(ReadOnlySpan<double> series, ForecasterOptions method, ErrorTrackerOptions tracking)
    {
        var model = new TrackedForecaster(method, tracking);
        var errors = new List<double>(series.Length);
        foreach (double y in series)
        {
            PeriodScore score = model.Update(y);
            if (score.IsScored)
            {
                errors.Add(score.Error);
            }
        }

        if (errors.Count < MinResiduals)
        {
            SelectionThrowHelper.ThrowArgument(nameof(series), string.Create(CultureInfo.InvariantCulture,
                $"The method made {errors.Count} one-step errors on this history; calibration needs at least {MinResiduals}."));
        }

        return [.. errors];
    }

    /// <summary>
    /// The change in the method's one-step errors caused by adding <paramref name="change"/>(j) to demand from period j = 0 on,
    /// measured against the same method on a constant demand; null when the method cannot run on it.
    /// </summary>
    internal static double[]? ChangeSignature(ForecasterOptions method, double baseline, Func<int, double> change, int length)
    {
        Forecaster plain = method.CreateForecaster();
        Forecaster changed = method.CreateForecaster();
        try
        {
            for (int guard = 0; !plain.IsWarm || guard < 10; guard++)
            {
                if (guard > 1_000_000)
                {
                    return null;
                }

                plain.Update(baseline);
                changed.Update(baseline);
            }

            var signature = new double[length];
            for (int j = 0; j < length; j++)
            {
                double actual = baseline + change(j);
                signature[j] = (actual - changed.Forecast()) - (baseline - plain.Forecast());
                plain.Update(baseline);
                changed.Update(actual);
            }

            return signature;
        }
        catch (ArgumentOutOfRangeException)
        {
            return null;
        }
    }

    private static int[] Seeds(Random master, int count)
    {
        var seeds = new int[count];
        for (int i = 0; i < count; i++)
        {
            seeds[i] = master.Next();
        }

        return seeds;
    }

    /// <summary>Simulates error streams and runs a rule over them.</summary>
    private sealed class StreamSimulator
    {
        private readonly BlockBootstrap _bootstrap;
        private readonly ErrorTracker _tracker;
        private readonly CalibrationOptions _options;

        public StreamSimulator(double[] residuals, int blockLength, CalibrationOptions options)
        {
            _bootstrap = new BlockBootstrap(residuals, blockLength);
            _tracker = options.Tracking.CreateTracker();
            _options = options;
        }

        public double MeanRunLength(DriftRuleOptions rule, int[] seeds)
        {
            DriftRule state = rule.CreateRule();
            int cap = _options.MaxRunLength;
            double total = 0;
            foreach (int seed in seeds)
            {
                int length = Run(state, seed, cap, 0, null);
                total += length < 0 ? cap : length;
            }

            return total / seeds.Length;
        }

        public RunLengthSummary InControl(DriftRuleOptions rule, int[] seeds)
        {
            DriftRule state = rule.CreateRule();
            int cap = _options.MaxRunLength;
            var lengths = new double[seeds.Length];
            int censored = 0;
            for (int i = 0; i < seeds.Length; i++)
            {
                int length = Run(state, seeds[i], cap, 0, null);
                censored += length < 0 ? 1 : 0;
                lengths[i] = length < 0 ? cap : length;
            }

            (double mean, double error) = MeanAndError(lengths, lengths.Length);
            Array.Sort(lengths);
            int middle = lengths.Length / 2;
            double median = lengths.Length % 2 == 1 ? lengths[middle] : 0.5 * (lengths[middle - 1] + lengths[middle]);
            return new RunLengthSummary(seeds.Length, mean, error, median, censored);
        }

        public DetectionSummary Detection(DriftRuleOptions rule, int[] seeds, double[]? signature)
        {
            if (signature is null)
            {
                return new DetectionSummary(seeds.Length, 0, 0, 0, double.NaN, double.NaN);
            }

            DriftRule state = rule.CreateRule();
            int start = _options.ChangeStart;
            var delays = new double[seeds.Length];
            int detected = 0;
            int early = 0;
            int missed = 0;
            foreach (int seed in seeds)
            {
                int length = Run(state, seed, start + signature.Length, start, signature);
                if (length < 0)
                {
                    missed++;
                }
                else if (length <= start)
                {
                    early++;
                }
                else
                {
                    delays[detected++] = length - start;
                }
            }

            (double mean, double error) = MeanAndError(delays, detected);
            return new DetectionSummary(seeds.Length, detected, early, missed, mean, error);
        }

        /// <summary>One stream: the period of the first raise, or −1 if none by <paramref name="length"/>.</summary>
        private int Run(DriftRule rule, int seed, int length, int changeStart, double[]? signature)
        {
            _bootstrap.Restart(seed);
            _tracker.Reset();
            rule.Reset();
            for (int t = 1; t <= length; t++)
            {
                double error = _bootstrap.Next();
                if (signature is not null && t > changeStart)
                {
                    error += signature[t - changeStart - 1];
                }

                _tracker.Record(error, 0.0);
                DriftInput input = ErrorSummary.Of(_tracker).ToDriftInput(error); // what the engine's step gives the rules
                if (rule.CanRead(input) && rule.Evaluate(input).Kind == DriftTransitionKind.Raised)
                {
                    return t;
                }
            }

            return -1;
        }

        private static (double Mean, double StandardError) MeanAndError(double[] values, int count)
        {
            if (count == 0)
            {
                return (double.NaN, double.NaN);
            }

            double mean = 0;
            for (int i = 0; i < count; i++)
            {
                mean += values[i];
            }

            mean /= count;
            if (count < 2)
            {
                return (mean, double.NaN);
            }

            double squares = 0;
            for (int i = 0; i < count; i++)
            {
                squares += (values[i] - mean) * (values[i] - mean);
            }

            return (mean, Math.Sqrt(squares / (count - 1) / count));
        }
    }
}
