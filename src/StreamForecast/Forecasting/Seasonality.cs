namespace StreamForecast.Forecasting;

/// <summary>How the seasonal pattern combines with level and trend in <see cref="HoltWintersOptions"/>.</summary>
public enum Seasonality
{
    /// <summary>Seasonal effects are added: F = ℓ + (φ + … + φʰ)·b + s. Any finite actuals.</summary>
    Additive = 0,

    /// <summary>Seasonal effects multiply: F = (ℓ + (φ + … + φʰ)·b)·s. Actuals must be ≥ 0 and the level stays positive.</summary>
    Multiplicative = 1,
}
