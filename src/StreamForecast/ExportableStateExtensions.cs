namespace StreamForecast;

/// <summary>Conveniences over <see cref="IExportableState"/>.</summary>
public static class ExportableStateExtensions
{
    /// <summary>Returns the full state as a new array of <see cref="IExportableState.StateLength"/> numbers.</summary>
    /// <param name="state">The state to export.</param>
    /// <returns>The exported state.</returns>
    /// <exception cref="ArgumentNullException"><paramref name="state"/> is null.</exception>
    /// <remarks>Allocates the array; use <see cref="IExportableState.ExportState(Span{double})"/> on a hot path.</remarks>
    public static double[] ExportState(this IExportableState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        var numbers = new double[state.StateLength];
        state.ExportState(numbers);
        return numbers;
    }
}
