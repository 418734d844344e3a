namespace StreamForecast.Tracking;

/// <summary>How an <see cref="ErrorTracker"/> estimates σ, the standard deviation of the one-step forecast error.</summary>
public enum SigmaRule
{
    /// <summary>
    /// σ = factor · MAD with the cumulative MAD. For normally distributed errors σ = √(π/2)·MAD ≈ 1.2533·MAD
    /// (Armstrong, <i>Forecasting Dictionary</i>, "MAD"); the factor is <see cref="ErrorTrackerOptions.MadToSigmaFactor"/>.
    /// The default rule.
    /// </summary>
    ScaledMad = 0,

    /// <summary>
    /// σ = factor · smoothed MAD: as <see cref="ScaledMad"/> but with the exponentially smoothed MAD, so σ follows
    /// recent error levels rather than the whole history.
    /// </summary>
    ScaledSmoothedMad = 1,

    /// <summary>σ = RMSE, the root of the cumulative mean squared error (errors measured about zero, not about their mean).</summary>
    Rmse = 2,
}
