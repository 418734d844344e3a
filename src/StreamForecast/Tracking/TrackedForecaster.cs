using System.Globalization;
using StreamForecast.Forecasting;
using StreamForecast.Internal;

namespace StreamForecast.Tracking;

/// <summary>
/// One series' forecaster and error tracker stepped together: each actual first scores the forecast that was made for
/// its period, then updates the forecaster.
/// </summary>
/// <remarks>
/// <para><b>Why here.</b> This type lives in <c>StreamForecast.Tracking</c> because it depends on both layers while
/// the forecasting operators know nothing of tracking; keeping it out of <c>StreamForecast.Forecasting</c> keeps that
/// dependency one-way.</para>
/// <para><b>One step.</b> <see cref="Update"/> validates the actual, takes the one-step forecast made before the
/// actual was known (if the forecaster is warm), updates the forecaster (which checks the method's domain before
/// changing anything) and only then records the error, or records the actual as unscored when there was no forecast.
/// A forecast is always scored against the actual of the period it was made for, never against a later revision.
/// A rejected actual leaves both states exactly as they were.</para>
/// <para><b>Ownership.</b> The pair is created and owned here. <see cref="Forecaster"/> and <see cref="Tracker"/> are
/// exposed for reading; updating either directly puts them out of step.</para>
/// <para><b>Cost.</b> The forecaster's update cost plus O(1); allocation-free. <b>Thread safety:</b> not thread-safe;
/// one owner per series.</para>
/// </remarks>
public sealed class TrackedForecaster : IExportableState
{
    private readonly Forecaster _forecaster;
    private readonly ErrorTracker _tracker;

    // The interval state of a series in one field (memory per series, issue 15 target 3): null for today's normal
    // intervals without clipping (most series); the options' shared IntervalSettings when the series only clips at zero;
    // the series' own EmpiricalErrors (which knows whether to clip) for empirical intervals.
    private readonly object? _intervals;

    /// <summary>Creates an empty forecaster and tracker for one series.</summary>
    /// <param name="forecasterOptions">The forecasting method.</param>
    /// <param name="trackerOptions">The error-tracking settings; <see cref="ErrorTrackerOptions.Default"/> when null.</param>
    /// <exception cref="ArgumentNullException"><paramref name="forecasterOptions"/> is null.</exception>
    public TrackedForecaster(ForecasterOptions forecasterOptions, ErrorTrackerOptions? trackerOptions = null)
    {
        ArgumentNullException.ThrowIfNull(forecasterOptions);
        _forecaster = forecasterOptions.CreateForecaster();
        _tracker = (trackerOptions ?? ErrorTrackerOptions.Default).CreateTracker();
    }

    /// <summary>Creates the model of a series whose options ask for empirical intervals or clipping at zero.</summary>
    internal TrackedForecaster(ForecasterOptions forecasterOptions, ErrorTrackerOptions trackerOptions, IntervalSettings intervals)
        : this(forecasterOptions, trackerOptions)
    {
        if (!intervals.IsPlain)
        {
            _intervals = intervals.Empirical is { } e ? new EmpiricalErrors(e, intervals.Horizon, intervals.NonNegative) : intervals;
        }
    }

    /// <summary>The empirical-interval state, or null for normal intervals.</summary>
    private EmpiricalErrors? Empirical => _intervals as EmpiricalErrors;

    /// <summary>Whether forecasts are clipped at zero (a series declared non-negative).</summary>
    /// <remarks>Kept small so it is inlined: the common case (no interval state) is one null check.</remarks>
    private bool NonNegative => _intervals is not null && ClipsAtZero(_intervals);

    private static bool ClipsAtZero(object intervals) =>
        intervals is EmpiricalErrors empirical ? empirical.NonNegative : ((IntervalSettings)intervals).NonNegative;

    /// <summary>The forecaster, for reading (forecasts, warm-up, horizon variance ratios).</summary>
    public Forecaster Forecaster => _forecaster;

    /// <summary>The error tracker, for reading the statistics.</summary>
    public ErrorTracker Tracker => _tracker;

    /// <summary>The number of periods stepped (the forecaster's <see cref="Forecaster.Count"/>).</summary>
    public long Count => _forecaster.Count;

    /// <summary>The error of the last scored period (sign: see <see cref="ErrorTracker"/>); NaN before the first.</summary>
    public double LastError => _tracker.LastError;

    /// <summary>Steps one period: scores the forecast made for it (if any), then updates the forecaster.</summary>
    /// <param name="actual">The period's actual; must be finite and inside the method's domain.</param>
    /// <returns>The actual, the forecast that was scored and the error; forecast and error are NaN when the forecaster was not warm.</returns>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="actual"/> is NaN, infinite, outside the method's domain, or would make a statistic overflow.
    /// Neither the forecaster nor the tracker changes.
    /// </exception>
    /// <remarks>Allocation-free; the forecaster's update cost plus O(1). Not thread-safe.</remarks>
    public PeriodScore Update(double actual)
    {
        if (!double.IsFinite(actual))
        {
            ThrowHelper.ThrowNonFiniteActual(actual);
        }

        // The forecast for this period was fixed before its actual arrived: read it before the update.
        bool scored = ReadForecast(1, out double forecast);
        ErrorTracker.Staged staged;
        if (scored)
        {
            _tracker.StageScored(actual, forecast, out staged);
        }
        else
        {
            _tracker.StageUnscored(actual, out staged);
        }

        _forecaster.Update(actual); // validates the method's domain before changing anything
        _tracker.Commit(in staged);
        if (_intervals is EmpiricalErrors empirical)
        {
            empirical.Step(_forecaster.Count, actual, scored, staged.Error, _forecaster, empirical.NonNegative);
        }

        return scored ? new PeriodScore(actual, forecast, staged.Error) : new PeriodScore(actual, double.NaN, double.NaN);
    }

    /// <summary>
    /// Takes a period's actual without scoring it, for values that were filled in rather than observed (for example a
    /// gap policy that carries the last actual forward): the forecaster moves on, no error is recorded, and the actual
    /// still counts towards the MASE naive scale.
    /// </summary>
    /// <param name="actual">The period's (imputed) actual.</param>
    /// <returns>A score with NaN forecast and error.</returns>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="actual"/> is NaN, infinite, outside the method's domain, or would make a statistic overflow.
    /// Neither the forecaster nor the tracker changes.
    /// </exception>
    /// <remarks>Allocation-free; the forecaster's update cost plus O(1). Not thread-safe.</remarks>
    public PeriodScore UpdateUnscored(double actual)
    {
        if (!double.IsFinite(actual))
        {
            ThrowHelper.ThrowNonFiniteActual(actual);
        }

        _tracker.StageUnscored(actual, out ErrorTracker.Staged staged);
        _forecaster.Update(actual); // validates the method's domain before changing anything
        _tracker.Commit(in staged);
        if (_intervals is EmpiricalErrors empirical)
        {
            empirical.Step(_forecaster.Count, actual, false, double.NaN, _forecaster, empirical.NonNegative);
        }

        return new PeriodScore(actual, double.NaN, double.NaN);
    }

    /// <summary>The forecast <paramref name="horizon"/> periods ahead with its prediction interval.</summary>
    /// <param name="horizon">Periods ahead, 1 or more.</param>
    /// <param name="z">The normal multiplier, for example <see cref="NormalMultiplier.Coverage95"/>; finite and above zero.</param>
    /// <param name="forecast">The point forecast, or NaN when the result is <see langword="false"/>.</param>
    /// <param name="interval">
    /// forecast ± z·σ·√r with σ = <see cref="ErrorTracker.Sigma"/> and r the forecaster's
    /// <see cref="Forecaster.HorizonVarianceRatio"/>; NaN bounds while σ is unknown or when the result is false.
    /// </param>
    /// <returns>Whether the forecaster is warm.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is below 1 or <paramref name="z"/> is not finite and positive.</exception>
    /// <remarks>O(1), allocation-free. Does not change the state.</remarks>
    public bool TryForecast(int horizon, double z, out double forecast, out PredictionInterval interval)
    {
        if (!(z > 0 && double.IsFinite(z)))
        {
            ThrowHelper.ThrowOutOfRange(nameof(z), z, "the normal multiplier z must be finite and above zero (1.96 for 95 %)");
        }

        if (!ReadForecast(horizon, out forecast))
        {
            interval = new PredictionInterval(double.NaN, double.NaN);
            return false;
        }

        interval = _tracker.GetPredictionInterval(forecast, _forecaster.HorizonVarianceRatio(horizon), z);
        if (NonNegative)
        {
            interval = new PredictionInterval(Math.Max(0, interval.Lower), Math.Max(0, interval.Upper));
        }

        return true;
    }

    /// <summary>
    /// The forecast <paramref name="horizon"/> periods ahead with the interval the series' settings ask for: empirical
    /// once the horizon's error window holds enough errors, normal otherwise (the normal multiplier of the settings);
    /// everything clipped at zero for a non-negative series.
    /// </summary>
    /// <returns>Whether the forecaster is warm; when not, every output is NaN and the kind is normal.</returns>
    /// <remarks>O(1), allocation-free. Does not change the state.</remarks>
    internal bool TryForecast(int horizon, IntervalSettings settings, out double forecast, out PredictionInterval interval, out IntervalKind kind)
    {
        kind = IntervalKind.Normal;
        if (!ReadForecast(horizon, out forecast))
        {
            interval = new PredictionInterval(double.NaN, double.NaN);
            return false;
        }

        EmpiricalErrors? empirical = Empirical;
        ErrorQuantileWindow? window = empirical?.WindowFor(horizon);
        if (window is not null && window.Count >= empirical!.Options.MinimumErrors)
        {
            interval = window.IntervalAround(forecast, empirical.Options);
            kind = IntervalKind.Empirical;
        }
        else
        {
            interval = _tracker.GetPredictionInterval(forecast, _forecaster.HorizonVarianceRatio(horizon), settings.Multiplier);
        }

        if (NonNegative)
        {
            interval = new PredictionInterval(Math.Max(0, interval.Lower), Math.Max(0, interval.Upper));
        }

        return true;
    }

    /// <summary>The method's forecast, clipped at zero for a non-negative series.</summary>
    private bool ReadForecast(int horizon, out double forecast)
    {
        if (!_forecaster.TryForecast(horizon, out forecast))
        {
            return false;
        }

        if (NonNegative)
        {
            forecast = Math.Max(0, forecast);
        }

        return true;
    }

    /// <summary>
    /// Starts the error statistics afresh (RSFE, MAD, tracking and Trigg signals...) while the forecaster keeps its state:
    /// the re-baseline after a person has acknowledged a drift and, where needed, changed the method or its inputs.
    /// </summary>
    /// <remarks>O(1) plus the tracker's buffers. Not thread-safe.</remarks>
    public void ResetErrors()
    {
        _tracker.Reset();
        Empirical?.ResetErrors();
    }

    /// <summary>Forgets every period: both the forecaster and the tracker are as if just created.</summary>
    public void Reset()
    {
        _forecaster.Reset();
        _tracker.Reset();
        Empirical?.Reset();
    }

    /// <summary>How many numbers <see cref="ExportState(Span{double})"/> writes: the forecaster's state then the tracker's.</summary>
    /// <remarks>A series with empirical intervals adds their error windows and waiting forecasts after the tracker's state.</remarks>
    public int StateLength => _forecaster.StateLength + _tracker.StateLength + (Empirical?.StateLength ?? 0);

    /// <summary>Writes both states into <paramref name="destination"/>: the forecaster's first, then the tracker's.</summary>
    /// <param name="destination">At least <see cref="StateLength"/> numbers long.</param>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is too short.</exception>
    /// <remarks>Allocation-free.</remarks>
    public void ExportState(Span<double> destination)
    {
        if (destination.Length < StateLength)
        {
            ThrowHelper.ThrowArgument(nameof(destination), string.Create(CultureInfo.InvariantCulture, $"The destination holds {destination.Length} numbers; the state needs {StateLength}."));
        }

        int split = _forecaster.StateLength;
        _forecaster.ExportState(destination[..split]);
        _tracker.ExportState(destination.Slice(split, _tracker.StateLength));
        if (Empirical is { } empirical)
        {
            empirical.Export(destination.Slice(split + _tracker.StateLength, empirical.StateLength));
        }
    }

    /// <summary>Replaces both states with ones exported from a tracked forecaster created from equal options.</summary>
    /// <param name="state">Exactly <see cref="StateLength"/> numbers from <see cref="ExportState(Span{double})"/>.</param>
    /// <exception cref="ArgumentException">
    /// Either part is invalid (see <see cref="Forecaster.ImportState"/> and <see cref="ErrorTracker.ImportState"/>) or the
    /// tracker part has seen more periods than the forecaster part. Nothing is imported.
    /// </exception>
    public void ImportState(ReadOnlySpan<double> state)
    {
        if (state.Length != StateLength)
        {
            ThrowHelper.ThrowArgument(nameof(state), string.Create(CultureInfo.InvariantCulture, $"The state has {state.Length} numbers; a tracked {_forecaster.Options.MethodName} forecaster needs {StateLength}. Nothing was imported."));
        }

        int split = _forecaster.StateLength;
        ReadOnlySpan<double> trackerState = state.Slice(split, _tracker.StateLength);
        ReadOnlySpan<double> empiricalState = state[(split + _tracker.StateLength)..];
        string? problem = _tracker.Validate(trackerState);
        if (problem is not null)
        {
            ErrorTracker.ThrowInvalidState(problem);
        }

        // Every period steps both, and only ResetErrors clears the tracker alone: the tracker has seen at most as many
        // actuals as the forecaster (the first number of its state).
        if (ErrorTracker.ActualCountOf(trackerState) > state[0])
        {
            ThrowHelper.ThrowArgument(nameof(state), "The forecaster and tracker parts of the state disagree on the number of periods. Nothing was imported.");
        }

        if (Empirical is { } empirical)
        {
            problem = empirical.Validate(empiricalState, ErrorTracker.ScoredCountOf(trackerState), ErrorTracker.LastErrorOf(trackerState), state[0]);
            if (problem is not null)
            {
                ThrowHelper.ThrowArgument(nameof(state), "The empirical-interval part of the state is not one a series reaches: " + problem + ". Nothing was imported.");
            }
        }

        _forecaster.ImportState(state[..split]); // validates its part and throws before changing anything
        _tracker.ImportValidated(trackerState);
        Empirical?.ImportValidated(empiricalState);
    }
}
