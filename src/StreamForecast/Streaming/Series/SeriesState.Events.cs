namespace StreamForecast.Streaming;

// Known events: the marks a series' step reads, and what a declaration at run time restates.
internal sealed partial class SeriesState<TKey>
{
    /// <summary>The step's marked periods (null: none).</summary>
    internal EventMarks? Marks => _step.Marks;

    /// <summary>The live step (for the lift sums a snapshot holds).</summary>
    internal SeriesStep<TKey> Step => _step;

    /// <summary>The lagged step of the restatement window, or null without restatement.</summary>
    internal SeriesStep<TKey>? LagStep => Restating?.Lag;

    /// <summary>Sets the marks of a new or restored series: nothing has closed under other marks, so nothing is restated.</summary>
    public void SetMarks(EventMarks? marks)
    {
        _step.SetMarks(marks);
        Restating?.Lag.SetMarks(marks);
    }

    /// <summary>
    /// Changes the marks after a known event covering periods [<paramref name="first"/>, <paramref name="last"/>] was
    /// declared or withdrawn: retained closed periods whose marking changed are restated (the model rolls back and
    /// replays); closed periods of the event before the restatement horizon are counted as not restated.
    /// </summary>
    public void ChangeMarks(EventMarks? marks, long first, long last, ISeriesOutput<TKey> output, ref long restated, ref long beyond)
    {
        EventMarks? before = _step.Marks;
        SetMarks(marks);
        if (!_started)
        {
            return;
        }

        long horizon = _nextToClose - ClosedCount; // the oldest closed period that can still be restated
        if (first < horizon)
        {
            beyond += Math.Min(last, horizon - 1) - first + 1;
        }

        if (Restating is not { ClosedCount: > 0 } r)
        {
            return;
        }

        int index = -1;
        for (int i = 0; i < r.ClosedCount; i++)
        {
            if (!EventMarks.SameAt(before, marks, horizon + i))
            {
                index = i;
                break;
            }
        }

        if (index < 0)
        {
            return;
        }

        restated += r.ClosedCount - index;
        RollBackAndReplay(r, index, output);
    }
}
