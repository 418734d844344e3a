namespace StreamForecast.Classification;

/// <summary>
/// The four demand patterns of Syntetos, Boylan &amp; Croston (2005, Journal of the Operational Research Society
/// 56:495–503), told apart by the average inter-demand interval (ADI) and the squared coefficient of variation of
/// the non-zero demand sizes (CV²); see <see cref="DemandClassifier"/>.
/// </summary>
public enum DemandClass
{
    /// <summary>Not enough data to classify: fewer than two periods with demand (the default value).</summary>
    Undetermined = 0,

    /// <summary>Frequent demand of steady size: ADI below the interval cut-off and CV² below the variation cut-off.</summary>
    Smooth = 1,

    /// <summary>Frequent demand of varying size: ADI below the interval cut-off, CV² at or above the variation cut-off.</summary>
    Erratic = 2,

    /// <summary>Infrequent demand of steady size: ADI at or above the interval cut-off, CV² below the variation cut-off.</summary>
    Intermittent = 3,

    /// <summary>Infrequent demand of varying size: ADI and CV² both at or above their cut-offs.</summary>
    Lumpy = 4,
}
