namespace StreamForecast.Forecasting;

/// <summary>The kinds of <see cref="HoltWintersStart"/>.</summary>
public enum HoltWintersStartKind
{
    /// <summary>Season means of the first c seasons (NIST §6.4.3.5; <see cref="HoltWintersStart.SeasonMeans"/>, the default).</summary>
    SeasonMeans = 0,

    /// <summary>Classical decomposition of the first c seasons (<see cref="HoltWintersStart.ClassicalDecomposition"/>).</summary>
    ClassicalDecomposition = 1,

    /// <summary>Level, trend and seasonal indices given before any actual (<see cref="HoltWintersStart.Given"/>).</summary>
    Given = 2,
}
