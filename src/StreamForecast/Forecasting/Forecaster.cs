using StreamForecast.Internal;

namespace StreamForecast.Forecasting;

/// <summary>
/// The mutable forecasting state of one series: it takes one actual per period with <see cref="Update"/>
/// and gives the forecast for the next period, or for <c>h</c> periods ahead, with <see cref="Forecast"/>.
/// Create one from a validated <see cref="ForecasterOptions"/> with <see cref="ForecasterOptions.CreateForecaster"/>.
/// </summary>
/// <remarks>
/// <para><b>Periods.</b> Each call to <see cref="Update"/> is one closed period. The forecast read
/// <i>before</i> an update is the forecast for that update's period; a forecaster never looks at the actual
/// of the period it forecasts.</para>
/// <para><b>Warm-up.</b> <see cref="IsWarm"/> turns true once the method has seen the actuals its published
/// convention needs before its first forecast (one for the naive forecast, <c>n</c> for an
/// <c>n</c>-period moving average, two seasons for Holt-Winters, the first non-zero demand for Croston...).
/// Until then <see cref="Forecast"/> throws and <see cref="TryForecast"/> returns <see langword="false"/>.</para>
/// <para><b>Bad input.</b> NaN, infinities and magnitudes beyond <see cref="NumericDomain.MaxMagnitude"/> are rejected
/// with <see cref="ArgumentOutOfRangeException"/>, as is any value outside a method's domain (for example negative demand for the intermittent methods). A
/// rejected update leaves the state exactly as it was.</para>
/// <para><b>Cost.</b> Updates are O(1) and allocation-free unless a method's documentation says otherwise
/// (an arbitrary-weight moving average costs O(n) per update as one vectorised dot product).</para>
/// <para><b>Snapshots.</b> <see cref="ExportState(Span{double})"/> writes the full state as a plain array of
/// <see cref="StateLength"/> numbers; <see cref="ImportState"/> reads it back into a forecaster created from
/// equal options. Continuing after an import gives bit-identical results to an uninterrupted run.</para>
/// <para><b>Thread safety.</b> Not thread-safe: one owner (one thread or one reader loop at a time) updates and
/// reads a forecaster. Different forecasters are independent.</para>
/// </remarks>
public abstract class Forecaster : IExportableState
{
    private protected Forecaster()
    {
    }

    /// <summary>The validated options this forecaster was created from.</summary>
    public abstract ForecasterOptions Options { get; }

    /// <summary>
    /// For a method that publishes one of several candidates' forecasts (a <see cref="MethodSelector"/>), the name of the
    /// candidate whose forecast is published now; null for every other method. Forecast updates report it.
    /// </summary>
    internal virtual string? ActiveMethodName => null;

    /// <summary>The number of actuals taken since creation or the last <see cref="Reset"/>.</summary>
    public long Count { get; private set; }

    /// <summary>
    /// Whether the forecaster can forecast: <see langword="true"/> once it has seen the actuals its method needs
    /// (see the remarks on <see cref="Forecaster"/>).
    /// </summary>
    public abstract bool IsWarm { get; }

    /// <summary>Takes the actual of the period that just closed.</summary>
    /// <param name="actual">
    /// The period's actual; must be finite, of magnitude at most <see cref="NumericDomain.MaxMagnitude"/>, and inside
    /// the method's domain.
    /// </param>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="actual"/> is NaN, infinite, beyond <see cref="NumericDomain.MaxMagnitude"/>, or outside the
    /// method's domain. The state is unchanged.
    /// </exception>
    /// <remarks>O(1) and allocation-free unless the method says otherwise. Not thread-safe.</remarks>
    public void Update(double actual)
    {
        if (!NumericDomain.Contains(actual))
        {
            ThrowOutside(actual);
        }

        UpdateCore(actual);
        Count++;
    }

    /// <summary>The forecast for <paramref name="horizon"/> periods after the last actual.</summary>
    /// <param name="horizon">Periods ahead, 1 or more; 1 (the default) is the next period.</param>
    /// <returns>The point forecast.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is less than 1.</exception>
    /// <exception cref="InvalidOperationException">The forecaster is not warm yet (<see cref="IsWarm"/>).</exception>
    /// <remarks>O(1) for every method. Does not change the state.</remarks>
    public double Forecast(int horizon = 1)
    {
        ThrowHelper.CheckHorizon(horizon);
        ThrowIfCold();
        return ForecastCore(horizon);
    }

    /// <summary>Throws <see cref="InvalidOperationException"/> naming the method when it is not warm yet.</summary>
    private protected void ThrowIfCold()
    {
        if (!IsWarm)
        {
            ThrowHelper.ThrowNotWarm(Options.MethodName);
        }
    }

    /// <summary>Returns <paramref name="value"/> (a state component) once the forecaster is warm; throws before.</summary>
    private protected double WhenWarm(double value)
    {
        ThrowIfCold();
        return value;
    }

    /// <summary>Gets the forecast for <paramref name="horizon"/> periods ahead if the forecaster is warm.</summary>
    /// <param name="horizon">Periods ahead, 1 or more.</param>
    /// <param name="forecast">The point forecast, or NaN when the result is <see langword="false"/>.</param>
    /// <returns>Whether a forecast could be made (<see cref="IsWarm"/>).</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is less than 1.</exception>
    public bool TryForecast(int horizon, out double forecast)
    {
        ThrowHelper.CheckHorizon(horizon);
        if (!IsWarm)
        {
            forecast = double.NaN;
            return false;
        }

        forecast = ForecastCore(horizon);
        return true;
    }

    /// <summary>
    /// The variance of the <paramref name="horizon"/>-step forecast error relative to the one-step error variance,
    /// under the method's usual error model; the prediction interval for <c>h</c> steps scales the one-step
    /// σ by the square root of this ratio.
    /// </summary>
    /// <param name="horizon">Periods ahead, 1 or more. The ratio is 1 at horizon 1.</param>
    /// <returns>A number ≥ 1.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="horizon"/> is less than 1.</exception>
    /// <remarks>Each method documents the model behind its ratio. O(1). Does not change the state.</remarks>
    public double HorizonVarianceRatio(int horizon)
    {
        ThrowHelper.CheckHorizon(horizon);
        return horizon == 1 ? 1.0 : HorizonVarianceRatioCore(horizon);
    }

    /// <summary>Forgets every actual: the forecaster is as if just created from <see cref="Options"/>.</summary>
    public void Reset()
    {
        ResetCore();
        Count = 0;
    }

    /// <summary>How many numbers <see cref="ExportState(Span{double})"/> writes; fixed by the options.</summary>
    public int StateLength => 1 + CoreStateLength;

    /// <summary>Writes the full state into <paramref name="destination"/> as plain numbers.</summary>
    /// <param name="destination">At least <see cref="StateLength"/> numbers long.</param>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is too short.</exception>
    /// <remarks>Allocation-free. The layout is private to the method and versioned with the library.</remarks>
    public void ExportState(Span<double> destination)
    {
        if (destination.Length < StateLength)
        {
            ThrowHelper.ThrowArgument(nameof(destination), $"The destination holds {destination.Length} numbers; the state needs {StateLength}.");
        }

        destination[0] = Count;
        ExportCore(destination.Slice(1, CoreStateLength));
    }

    /// <summary>Replaces the state with one exported from a forecaster created from equal options.</summary>
    /// <param name="state">Exactly <see cref="StateLength"/> numbers from <see cref="ExportState(Span{double})"/>.</param>
    /// <exception cref="ArgumentException">
    /// The state has the wrong length, a non-finite number, or values the method cannot hold. Nothing is imported.
    /// </exception>
    public void ImportState(ReadOnlySpan<double> state)
    {
        if (state.Length != StateLength)
        {
            ThrowHelper.ThrowInvalidState(Options.MethodName, $"it has {state.Length} numbers, expected {StateLength}");
        }

        double count = state[0];
        if (!WholeNumbers.IsCount(count))
        {
            ThrowHelper.ThrowInvalidState(Options.MethodName, "the count must be a whole number ≥ 0");
        }

        ReadOnlySpan<double> core = state[1..];
        for (int i = 0; i < core.Length; i++)
        {
            if (!double.IsFinite(core[i]))
            {
                ThrowHelper.ThrowInvalidState(Options.MethodName, $"number {i + 1} is not finite");
            }
        }

        string? problem = ValidateCore(core, (long)count);
        if (problem is not null)
        {
            ThrowHelper.ThrowInvalidState(Options.MethodName, problem);
        }

        ImportCore(core, (long)count);
        Count = (long)count;
    }

    private static void ThrowOutside(double actual)
    {
        if (!double.IsFinite(actual))
        {
            ThrowHelper.ThrowNonFiniteActual(actual);
        }

        ThrowHelper.ThrowOutsideDomain(actual);
    }

    /// <summary>Validates the method's domain for <paramref name="actual"/> (already finite), then updates the state.</summary>
    /// <remarks>Must throw before changing anything when the actual is not allowed.</remarks>
    private protected abstract void UpdateCore(double actual);

    /// <summary>The forecast for a checked horizon on a warm forecaster.</summary>
    private protected abstract double ForecastCore(int horizon);

    /// <summary>The h-step error variance ratio for <paramref name="horizon"/> ≥ 2.</summary>
    private protected abstract double HorizonVarianceRatioCore(int horizon);

    /// <summary>Clears the method's state (the base clears <see cref="Count"/>).</summary>
    private protected abstract void ResetCore();

    /// <summary>The number of method-specific state numbers.</summary>
    private protected abstract int CoreStateLength { get; }

    /// <summary>Writes the method-specific state (exactly <see cref="CoreStateLength"/> numbers).</summary>
    private protected abstract void ExportCore(Span<double> destination);

    /// <summary>Returns why <paramref name="state"/> (all finite, right length) cannot be imported, or null if it can.</summary>
    private protected abstract string? ValidateCore(ReadOnlySpan<double> state, long count);

    /// <summary>Reads a state that <see cref="ValidateCore"/> accepted.</summary>
    private protected abstract void ImportCore(ReadOnlySpan<double> state, long count);
}
