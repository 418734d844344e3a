using System.Globalization;
using StreamForecast.Forecasting;

namespace StreamForecast.Tracking;

/// <summary>
/// The per-series state of empirical intervals: the window of one-step errors, and when the further horizon H is above 1
/// the window of H-step errors with the H forecasts still waiting for their actual (a ring indexed by the forecaster's
/// period count mod H: the forecast made after period k for period k + H sits in slot k mod H).
/// </summary>
/// <remarks>
/// Exported after the forecaster and tracker (see <see cref="TrackedForecaster.ExportState(Span{double})"/>) as: the
/// one-step window (count, then the errors oldest first, zero-padded), then for H &gt; 1 the H-step window the same way
/// and the H waiting forecasts (NaN where the forecaster was not warm or no forecast was made yet). Not thread-safe.
/// </remarks>
internal sealed class EmpiricalErrors
{
    private readonly ErrorQuantileWindow _next;
    private readonly ErrorQuantileWindow? _far;
    private readonly double[]? _waiting;

    public EmpiricalErrors(EmpiricalIntervalOptions options, int horizon, bool nonNegative)
    {
        Options = options;
        NonNegative = nonNegative;
        _next = new ErrorQuantileWindow(options.Window);
        if (horizon > 1)
        {
            _far = new ErrorQuantileWindow(options.Window);
            _waiting = new double[horizon];
            Array.Fill(_waiting, double.NaN);
        }
    }

    public EmpiricalIntervalOptions Options { get; }

    /// <summary>Whether the series' forecasts are clipped at zero (held here so the tracked forecaster needs one field).</summary>
    public bool NonNegative { get; }

    private int WindowLength => 1 + Options.Window;

    public int StateLength => _waiting is null ? WindowLength : (2 * WindowLength) + _waiting.Length;

    /// <summary>
    /// After the forecaster took period number <paramref name="count"/> (1-based): records the period's one-step error
    /// (when scored) and its H-step error (when scored and a forecast was waiting), then holds the new H-step forecast.
    /// </summary>
    public void Step(long count, double actual, bool scored, double oneStepError, Forecaster forecaster, bool nonNegative)
    {
        if (scored)
        {
            _next.Add(oneStepError); // finite: the tracker refuses a period whose error is not
        }

        if (_waiting is null)
        {
            return;
        }

        int slot = (int)(count % _waiting.Length);
        double waiting = _waiting[slot];
        if (scored && !double.IsNaN(waiting))
        {
            double error = actual - waiting;
            if (double.IsFinite(error))
            {
                _far!.Add(error);
            }
        }

        _waiting[slot] = forecaster.TryForecast(_waiting.Length, out double forecast)
            ? (nonNegative ? Math.Max(0, forecast) : forecast)
            : double.NaN;
    }

    /// <summary>The error window of <paramref name="horizon"/> (1 or H), or null when this horizon keeps none.</summary>
    public ErrorQuantileWindow? WindowFor(int horizon) =>
        horizon == 1 ? _next : (_waiting is not null && horizon == _waiting.Length ? _far : null);

    /// <summary>Empties the error windows (an acknowledged drift); the waiting forecasts stay.</summary>
    public void ResetErrors()
    {
        _next.Reset();
        _far?.Reset();
    }

    public void Reset()
    {
        ResetErrors();
        if (_waiting is not null)
        {
            Array.Fill(_waiting, double.NaN);
        }
    }

    public void Export(Span<double> destination)
    {
        _next.Export(destination[..WindowLength]);
        if (_waiting is not null)
        {
            _far!.Export(destination.Slice(WindowLength, WindowLength));
            _waiting.CopyTo(destination[(2 * WindowLength)..]);
        }
    }

    /// <summary>
    /// Why <paramref name="state"/> cannot be this series' empirical state beside a tracker that has scored
    /// <paramref name="scored"/> periods with last error <paramref name="lastError"/> and a forecaster that has taken
    /// <paramref name="periods"/>; null when it can.
    /// </summary>
    public string? Validate(ReadOnlySpan<double> state, double scored, double lastError, double periods)
    {
        if (state.Length != StateLength)
        {
            return Invariant($"the empirical-interval part has {state.Length} numbers, expected {StateLength}");
        }

        int n = Options.Window;
        string? problem = ErrorQuantileWindow.Validate(state[..WindowLength], n, "the one-step error window");
        if (problem is not null)
        {
            return problem;
        }

        // Every scored period adds its error to the one-step window and to the tracker, and an acknowledgement empties
        // both: the window holds the last min(n, scored) errors, the newest being the tracker's last error.
        double expected = Math.Min(n, scored);
        if (state[0] != expected)
        {
            return Invariant($"the one-step error window holds {state[0]} errors, but the tracker has scored {scored} periods since it was last emptied; the window holds the last {expected}");
        }

        if (expected > 0 && BitConverter.DoubleToInt64Bits(state[(int)expected]) != BitConverter.DoubleToInt64Bits(lastError + 0.0))
        {
            return Invariant($"the newest one-step error in the window is {state[(int)expected]:R}, but the tracker's last error is {lastError:R}; they are the same number");
        }

        if (_waiting is null)
        {
            return null;
        }

        ReadOnlySpan<double> far = state.Slice(WindowLength, WindowLength);
        problem = ErrorQuantileWindow.Validate(far, n, Invariant($"the {_waiting.Length}-step error window"));
        if (problem is not null)
        {
            return problem;
        }

        // An H-step error is recorded only for a scored period, so never more of them than of one-step errors.
        if (far[0] > expected)
        {
            return Invariant($"the {_waiting.Length}-step error window holds {far[0]} errors, more than the {expected} scored periods allow");
        }

        ReadOnlySpan<double> waiting = state[(2 * WindowLength)..];
        int h = _waiting.Length;
        for (int slot = 0; slot < h; slot++)
        {
            double v = waiting[slot];
            if (double.IsInfinity(v))
            {
                return Invariant($"waiting forecast {slot + 1} is {v}; a waiting forecast is finite, or NaN when none was made");
            }

            // Slot s is first written after period s (slot 0 after period h): before that it is NaN.
            long firstWrite = slot == 0 ? h : slot;
            if (periods < firstWrite && !double.IsNaN(v))
            {
                return Invariant($"waiting forecast {slot + 1} is {v:R}, but the forecaster has taken only {periods} periods, so no forecast was placed there yet");
            }
        }

        return null;
    }

    /// <summary>Reads a state that <see cref="Validate"/> accepted.</summary>
    public void ImportValidated(ReadOnlySpan<double> state)
    {
        _next.Import(state[..WindowLength]);
        if (_waiting is not null)
        {
            _far!.Import(state.Slice(WindowLength, WindowLength));
            state[(2 * WindowLength)..].CopyTo(_waiting);
        }
    }

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
