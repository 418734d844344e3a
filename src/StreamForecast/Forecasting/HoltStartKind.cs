namespace StreamForecast.Forecasting;

/// <summary>The kinds of <see cref="HoltStart"/>.</summary>
public enum HoltStartKind
{
    /// <summary>FPP 1st ed.: ℓ₀ = y₁, b₀ = y₂ − y₁, smoothing from y₁ on (<see cref="HoltStart.FirstTwoActuals"/>).</summary>
    FirstTwoActuals = 0,

    /// <summary>NIST: S₁ = y₁, b₁ = mean of the first d differences (<see cref="HoltStart.MeanOfFirstDifferences"/>).</summary>
    MeanOfFirstDifferences = 1,

    /// <summary>NIST: S₁ = y₁ with a given b₁ (<see cref="HoltStart.FirstActualAndTrend"/>).</summary>
    FirstActualAndTrend = 2,

    /// <summary>Level ℓ₀ and trend b₀ given before any actual (<see cref="HoltStart.Given"/>).</summary>
    Given = 3,
}
