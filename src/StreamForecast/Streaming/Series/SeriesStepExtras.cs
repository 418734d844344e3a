using StreamForecast.Alerts;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <summary>
/// The parts of a <see cref="SeriesStep{TKey}"/> that most series never use, held in one object the step creates only
/// for a series that uses one of them: the reference model and its backup, the known-event marks and lift sums, and the
/// rules when there are several. A series with at most one rule and none of these features holds a null reference
/// instead of five fields (issue 15, target 3: memory per series).
/// </summary>
/// <remarks>Not thread-safe; owned by one step.</remarks>
internal sealed class SeriesStepExtras
{
    /// <summary>The reference model, or null without <see cref="SeriesOptions.ReferenceMethod"/>.</summary>
    public TrackedForecaster? Reference;

    /// <summary>The buffer the reference model's state is backed up to before each period (null without one).</summary>
    public double[]? ReferenceBackup;

    /// <summary>The rules when there are two or more, in the options' order (null: none or one, held by the step).</summary>
    public DriftRule[]? Rules;

    /// <summary>The marked periods (null: none).</summary>
    public EventMarks? Marks;

    /// <summary>The lift sums (null until a marked period closed with a forecast).</summary>
    public EventLiftSums? Lift;

    /// <summary>Whether the step runs without the options' rules (the lagged step of a restatement window, a replay).</summary>
    public bool WithoutRules;
}
