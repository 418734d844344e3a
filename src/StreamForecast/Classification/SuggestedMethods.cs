namespace StreamForecast.Classification;

/// <summary>
/// Forecasting methods commonly suggested for a <see cref="DemandClass"/>; see
/// <see cref="DemandClassifier.SuggestMethods(DemandClass)"/>. A flags value: a class may have more than one.
/// </summary>
[Flags]
public enum SuggestedMethods
{
    /// <summary>No suggestion (the class is <see cref="DemandClass.Undetermined"/>).</summary>
    None = 0,

    /// <summary>Ordinary exponential smoothing of the per-period demand.</summary>
    ExponentialSmoothing = 1,

    /// <summary>Croston's method (<c>ForecasterOptions.Croston</c>).</summary>
    Croston = 2,

    /// <summary>The Syntetos–Boylan approximation (<c>ForecasterOptions.SyntetosBoylan</c>).</summary>
    SyntetosBoylan = 4,

    /// <summary>The TSB method (<c>ForecasterOptions.Tsb</c>), which also lets the forecast decay when an item stops selling.</summary>
    Tsb = 8,
}
