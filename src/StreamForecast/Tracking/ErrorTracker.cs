using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <summary>
/// The running forecast-error statistics of one series: RSFE, MAD, smoothed MAD, MSE, RMSE, bias, MAPE, WAPE, MASE,
/// the tracking signal, Trigg's smoothed signal, an error σ and prediction intervals. Create one from
/// <see cref="ErrorTrackerOptions"/> with <see cref="ErrorTrackerOptions.CreateTracker"/>.
/// </summary>
/// <remarks>
/// <para><b>Sign convention.</b> The error of a period is <c>e = actual − forecast</c>: positive when the forecast was
/// too low (under-forecast), negative when it was too high (over-forecast). RSFE, <see cref="Bias"/>,
/// <see cref="LastError"/>, <see cref="TrackingSignal"/> and <see cref="TriggSignal"/> carry this sign. This is the one
/// place the library defines it; every other member refers here.</para>
/// <para><b>Periods.</b> <see cref="Record"/> scores one period: the actual against the forecast that was made for that
/// period (never a later revision). <see cref="RecordUnscored"/> takes the actual of a period that had no forecast
/// (for example while a forecaster warms up); it feeds only the MASE scale. Both count towards
/// <see cref="ActualCount"/>; only scored periods count towards <see cref="Count"/>.</para>
/// <para><b>Statistics</b> over the n = <see cref="Count"/> scored periods: RSFE = Σe; MAD = Σ|e| / n;
/// MSE = Σe² / n; RMSE = √MSE; bias = Σe / n; MAPE = mean of 100·|e|/|actual| over the scored periods whose actual is
/// not zero (the others are counted in <see cref="ZeroActualCount"/>); WAPE = 100·Σ|e| / Σ|actual|;
/// MASE = MAD / (in-sample mean of |y(t) − y(t−m)| over every recorded actual); tracking signal = RSFE / MAD;
/// Trigg's signal = E/M with E(t) = β·e(t) + (1−β)·E(t−1), M(t) = β·|e(t)| + (1−β)·M(t−1), E(0) = M(0) = 0
/// (Trigg 1964); the smoothed MAD starts at the first |e| and then follows S(t) = w·|e(t)| + (1−w)·S(t−1).</para>
/// <para><b>Undefined statistics are NaN.</b> A statistic with nothing to average or a zero denominator is
/// <see cref="double.NaN"/>: every mean before the first scored period, MAPE while every scored actual was zero, WAPE while
/// Σ|actual| = 0, MASE until the naive scale exists and is above zero. RSFE, an empty sum, is 0. The two ratio signals
/// are NaN before the first scored period and 0 while every error so far is zero (MAD = 0 forces RSFE = 0, and M = 0
/// forces E = 0), so a perfect forecast reads as "no bias" rather than as undefined.</para>
/// <para><b>Exactness.</b> The running sums (Σe, Σ|e|, Σe², Σ percentage errors, Σ|actual|, Σ naive errors) use
/// compensated (Neumaier) summation: the error of each stays near one rounding of the sum itself however long the
/// series runs (tested: 10⁷ periods agree with an exact integer recomputation to 1e-12 relative).</para>
/// <para><b>Bad input.</b> NaN and infinities are rejected with <see cref="ArgumentOutOfRangeException"/>, as is a
/// period whose error statistics would overflow to infinity. A rejected call leaves the state exactly as it was.</para>
/// <para><b>Cost.</b> O(1) and allocation-free per recorded period; creation allocates the tracker and, for a MASE season length m above 1, a buffer of m actuals.</para>
/// <para><b>Snapshots.</b> <see cref="ExportState(Span{double})"/> writes the full state as <see cref="StateLength"/>
/// plain numbers; <see cref="ImportState"/> validates and reads them back into a tracker created from equal options.
/// Continuing after an import is bit-identical to an uninterrupted run.</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner (one thread or one reader loop at a time) records and reads a
/// tracker. Different trackers are independent.</para>
/// </remarks>
public sealed partial class ErrorTracker : IExportableState
{
    // Layout of the exported state: counts, six two-part sums, four scalars, then the raw ring of the last m actuals.
    private const int CountIndex = 0;
    private const int ZeroActualCountIndex = 1;
    private const int ActualCountIndex = 2;
    private const int ErrorSumIndex = 3;
    private const int AbsErrorSumIndex = 5;
    private const int SquaredErrorSumIndex = 7;
    private const int PercentErrorSumIndex = 9;
    private const int AbsActualSumIndex = 11;
    private const int NaiveSumIndex = 13;
    private const int SmoothedMadIndex = 15;
    private const int TriggErrorIndex = 16;
    private const int TriggAbsErrorIndex = 17;
    private const int LastErrorIndex = 18;
    private const int FixedStateLength = 19;

    // One tracker per series: the weights are read from the shared options rather than copied into every tracker.
    private readonly ErrorTrackerOptions _options;

    private long _count;
    private long _zeroActualCount;
    private long _actualCount;
    private CompensatedSum _errorSum;
    private CompensatedSum _absErrorSum;
    private CompensatedSum _squaredErrorSum;
    private CompensatedSum _percentErrorSum;
    private CompensatedSum _absActualSum;
    private CompensatedSum _naiveSum;
    private double _smoothedMad;
    private double _triggError;
    private double _triggAbsError;
    private double _lastError;
    private LagWindow _recent; // the last m actuals; push k is actual number k, so _actualCount positions it

    /// <summary>Creates an empty tracker.</summary>
    /// <param name="options">Validated options.</param>
    /// <exception cref="ArgumentNullException"><paramref name="options"/> is null.</exception>
    public ErrorTracker(ErrorTrackerOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _recent = new LagWindow(options.SeasonLength);
    }

    /// <summary>The validated options this tracker was created from.</summary>
    public ErrorTrackerOptions Options => _options;

    /// <summary>The number of scored periods (calls to <see cref="Record"/>) since creation or the last <see cref="Reset"/>.</summary>
    public long Count => _count;

    /// <summary>The number of actuals recorded, scored or not; the MASE scale is computed over these.</summary>
    public long ActualCount => _actualCount;

    /// <summary>
    /// The smallest actual magnitude MAPE divides by: 10^-15. A scored actual below it counts as zero for MAPE (see
    /// <see cref="ZeroActualCount"/>), since a percentage of a near-zero actual means nothing and could overflow.
    /// </summary>
    public const double PercentageFloor = 1e-15;

    /// <summary>
    /// The number of scored periods whose actual was zero or smaller in magnitude than <see cref="PercentageFloor"/>,
    /// which MAPE leaves out.
    /// </summary>
    public long ZeroActualCount => _zeroActualCount;

    /// <summary>The error of the last scored period (sign: see <see cref="ErrorTracker"/>); NaN before the first.</summary>
    public double LastError => _count == 0 ? double.NaN : _lastError;

    /// <summary>The running sum of forecast errors Σe (sign: see <see cref="ErrorTracker"/>); 0 before the first scored period.</summary>
    public double Rsfe => _errorSum.Value;

    /// <summary>The mean absolute deviation of the errors, Σ|e| / n, over all scored periods; NaN before the first.</summary>
    public double Mad => _count == 0 ? double.NaN : _absErrorSum.Value / _count;

    /// <summary>
    /// The exponentially smoothed MAD: the first |e|, then S(t) = w·|e(t)| + (1−w)·S(t−1) with
    /// w = <see cref="ErrorTrackerOptions.SmoothedMadWeight"/>; NaN before the first scored period.
    /// </summary>
    public double SmoothedMad => _count == 0 ? double.NaN : _smoothedMad;

    /// <summary>The mean squared error Σe² / n; NaN before the first scored period.</summary>
    public double Mse => _count == 0 ? double.NaN : _squaredErrorSum.Value / _count;

    /// <summary>The root mean squared error √MSE; NaN before the first scored period.</summary>
    public double Rmse => Math.Sqrt(Mse);

    /// <summary>The mean error Σe / n (sign: see <see cref="ErrorTracker"/>); NaN before the first scored period.</summary>
    public double Bias => _count == 0 ? double.NaN : _errorSum.Value / _count;

    /// <summary>
    /// The mean absolute percentage error in percent, the mean of 100·|e|/|actual| over the scored periods whose actual
    /// is not zero (at least <see cref="PercentageFloor"/> in magnitude; see <see cref="ZeroActualCount"/>); NaN while
    /// there is no such period.
    /// </summary>
    public double Mape
    {
        get
        {
            long used = _count - _zeroActualCount;
            return used == 0 ? double.NaN : _percentErrorSum.Value / used;
        }
    }

    /// <summary>The weighted absolute percentage error in percent, 100·Σ|e| / Σ|actual| over the scored periods; NaN while Σ|actual| = 0.</summary>
    public double Wape
    {
        get
        {
            double actuals = _absActualSum.Value;
            return actuals > 0 ? 100 * (_absErrorSum.Value / actuals) : double.NaN;
        }
    }

    /// <summary>
    /// The MASE scale: the in-sample mean of |y(t) − y(t−m)| over every pair of recorded actuals m periods apart
    /// (m = <see cref="ErrorTrackerOptions.SeasonLength"/>), i.e. the MAD the naive forecast would have had. NaN until
    /// m + 1 actuals have been recorded.
    /// </summary>
    public double NaiveScale
    {
        get
        {
            long pairs = _actualCount - _recent.Length;
            return pairs > 0 ? _naiveSum.Value / pairs : double.NaN;
        }
    }

    /// <summary>
    /// The mean absolute scaled error, MAD / <see cref="NaiveScale"/>; below 1 the forecasts beat the in-sample naive
    /// forecast. NaN before the first scored period and while the scale is undefined or zero.
    /// </summary>
    public double Mase
    {
        get
        {
            double scale = NaiveScale;
            return _count > 0 && scale > 0 ? Mad / scale : double.NaN;
        }
    }

    /// <summary>
    /// The tracking signal RSFE / MAD (sign: see <see cref="ErrorTracker"/>); between −n and n. NaN before the first
    /// scored period; 0 while every error is zero.
    /// </summary>
    /// <remarks>
    /// Computed as n·(RSFE / Σ|e|), algebraically RSFE / MAD, so that when every error so far has the same sign the
    /// signal is exactly ±n and a limit check such as |TS| ≥ 4 is not defeated by rounding.
    /// </remarks>
    public double TrackingSignal
    {
        get
        {
            if (_count == 0)
            {
                return double.NaN;
            }

            double absErrors = _absErrorSum.Value;
            return absErrors > 0 ? _errorSum.Value / absErrors * _count : 0;
        }
    }

    /// <summary>
    /// Trigg's smoothed tracking signal E/M (Trigg 1964; sign: see <see cref="ErrorTracker"/>), between −1 and 1, with
    /// β = <see cref="ErrorTrackerOptions.TriggBeta"/> and E(0) = M(0) = 0. NaN before the first scored period; 0 while
    /// M = 0 (every error so far zero).
    /// </summary>
    public double TriggSignal
    {
        get
        {
            if (_count == 0)
            {
                return double.NaN;
            }

            return _triggAbsError > 0 ? _triggError / _triggAbsError : 0;
        }
    }

    /// <summary>
    /// The estimate of σ, the standard deviation of the one-step error, by <see cref="ErrorTrackerOptions.SigmaRule"/>:
    /// factor·MAD, factor·smoothed MAD or RMSE. NaN before the first scored period.
    /// </summary>
    public double Sigma => _options.SigmaRule switch
    {
        SigmaRule.ScaledMad => _options.MadToSigmaFactor * Mad,
        SigmaRule.ScaledSmoothedMad => _options.MadToSigmaFactor * SmoothedMad,
        _ => Rmse,
    };

    /// <summary>Scores one period: its actual against the forecast that was made for it.</summary>
    /// <param name="actual">The period's actual; must be finite.</param>
    /// <param name="forecast">The forecast made for this period before its actual was known; must be finite.</param>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="actual"/> or <paramref name="forecast"/> is NaN or infinite, or the period would make a statistic
    /// overflow. The state is unchanged.
    /// </exception>
    /// <remarks>Sign convention of the error: see <see cref="ErrorTracker"/>. O(1), allocation-free. Not thread-safe.</remarks>
    public void Record(double actual, double forecast)
    {
        StageScored(actual, forecast, out Staged staged);
        Commit(in staged);
    }

    /// <summary>Takes the actual of a period that had no forecast; it feeds only the MASE scale.</summary>
    /// <param name="actual">The period's actual; must be finite.</param>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="actual"/> is NaN or infinite, or the MASE scale would overflow. The state is unchanged.
    /// </exception>
    /// <remarks>O(1), allocation-free. Not thread-safe.</remarks>
    public void RecordUnscored(double actual)
    {
        StageUnscored(actual, out Staged staged);
        Commit(in staged);
    }

    /// <summary>
    /// The prediction interval forecast ± z·σ·√<paramref name="varianceRatio"/>, with σ = <see cref="Sigma"/>.
    /// </summary>
    /// <param name="forecast">The point forecast; must be finite.</param>
    /// <param name="varianceRatio">
    /// The h-step error variance relative to the one-step variance, from
    /// <see cref="Forecasting.Forecaster.HorizonVarianceRatio"/>; 1 for the next period. Must be finite and above zero.
    /// </param>
    /// <param name="z">The normal multiplier, for example <see cref="NormalMultiplier.Coverage95"/>; finite and above zero.</param>
    /// <returns>The interval; both bounds are NaN before the first scored period (σ undefined).</returns>
    /// <exception cref="ArgumentOutOfRangeException">An argument is outside its range.</exception>
    /// <remarks>O(1), allocation-free. Does not change the state.</remarks>
    public PredictionInterval GetPredictionInterval(double forecast, double varianceRatio, double z)
    {
        if (!double.IsFinite(forecast))
        {
            ThrowHelper.ThrowOutOfRange(nameof(forecast), forecast, "the forecast must be a finite number");
        }

        if (!(varianceRatio > 0 && double.IsFinite(varianceRatio)))
        {
            ThrowHelper.ThrowOutOfRange(nameof(varianceRatio), varianceRatio, "the variance ratio must be finite and above zero (1 for one step ahead)");
        }

        if (!(z > 0 && double.IsFinite(z)))
        {
            ThrowHelper.ThrowOutOfRange(nameof(z), z, "the normal multiplier z must be finite and above zero (1.96 for 95 %)");
        }

        double halfWidth = z * Sigma * Math.Sqrt(varianceRatio);
        return new PredictionInterval(forecast - halfWidth, forecast + halfWidth);
    }

    /// <summary>Forgets every recorded period: the tracker is as if just created from <see cref="Options"/>.</summary>
    public void Reset()
    {
        _count = 0;
        _zeroActualCount = 0;
        _actualCount = 0;
        _errorSum = default;
        _absErrorSum = default;
        _squaredErrorSum = default;
        _percentErrorSum = default;
        _absActualSum = default;
        _naiveSum = default;
        _smoothedMad = 0;
        _triggError = 0;
        _triggAbsError = 0;
        _lastError = 0;
        _recent.Clear();
    }

    [DoesNotReturn]
    internal static void ThrowInvalidState(string reason) =>
        ThrowHelper.ThrowArgument("state", $"The state does not fit this error tracker: {reason}. Nothing was imported.");
}
