namespace StreamForecast.Forecasting;

/// <summary>Which estimator a <see cref="CrostonOptions"/> forecaster reports.</summary>
public enum CrostonVariant
{
    /// <summary>Croston's (1972) estimator: smoothed demand size divided by smoothed inter-demand interval, z/p.</summary>
    Classic = 0,

    /// <summary>
    /// The Syntetos–Boylan approximation (SBA; Syntetos &amp; Boylan 2005, International Journal of Forecasting
    /// 21:303–314): Croston's z/p multiplied by (1 − α/2), with α the interval smoothing weight, which removes most
    /// of the upward bias of z/p.
    /// </summary>
    SyntetosBoylan = 1,
}
