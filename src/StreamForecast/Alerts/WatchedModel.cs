namespace StreamForecast.Alerts;

/// <summary>
/// Whose one-step errors a drift rule reads: the model whose forecasts a series publishes, or the slower reference model
/// a series can run beside it (<see cref="Streaming.SeriesOptions.ReferenceMethod"/>).
/// </summary>
/// <remarks>
/// A fast-adapting method follows a lasting shift within a few periods, so its own errors return to normal before any
/// rule sees a run of them; a slower reference model keeps missing the new level for longer, so a rule watching it reports
/// the shift, once. See <c>docs/reference-model.md</c> for the trade-off.
/// </remarks>
public enum WatchedModel
{
    /// <summary>The published model's errors (the default, and the only choice without a reference model).</summary>
    Published = 0,

    /// <summary>The reference model's errors; needs <see cref="Streaming.SeriesOptions.ReferenceMethod"/>.</summary>
    Reference = 1,
}
