namespace StreamForecast.Forecasting;

/// <summary>
/// An immutable, validated description of a forecasting method and its parameters. Each method has its own
/// sealed options record, validated when it is constructed; the static factories on this type are a
/// shorthand for those constructors. Create per-series state with <see cref="CreateForecaster"/>.
/// </summary>
/// <remarks>Options are immutable and safe to share across threads and series.</remarks>
public abstract partial record ForecasterOptions
{
    private protected ForecasterOptions()
    {
    }

    /// <summary>A short label for the method and its parameters, such as <c>MA(12)</c>, used in reports.</summary>
    public abstract string MethodName { get; }

    /// <summary>Creates a new, empty forecaster for one series.</summary>
    /// <returns>A forecaster that is not warm yet.</returns>
    /// <remarks>Allocates the forecaster and its buffers once; updates allocate nothing afterwards.</remarks>
    public abstract Forecaster CreateForecaster();
}
