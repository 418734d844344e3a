namespace StreamForecast.Forecasting;

/// <summary>The kinds of <see cref="LevelStart"/>.</summary>
public enum LevelStartKind
{
    /// <summary>The first actual is the first level (<see cref="LevelStart.FirstActual"/>).</summary>
    FirstActual = 0,

    /// <summary>The mean of the first k actuals is the first level (<see cref="LevelStart.MeanOfFirst"/>).</summary>
    MeanOfFirst = 1,

    /// <summary>The caller gives the level before any actual (<see cref="LevelStart.Given"/>).</summary>
    Given = 2,
}
