using System.Diagnostics;
using System.Runtime.CompilerServices;
using StreamForecast.Alerts;
using StreamForecast.Tracking;

namespace StreamForecast.Streaming;

/// <content>Drift rules: which rules see a scored period, and how their transitions are published.</content>
public sealed partial class SeriesStep<TKey>
{
    /// <summary>Shows one model's scored period to every rule that watches that model and can read the input.</summary>
    private void EvaluateRules(WatchedModel watched, in ErrorSummary errors, double error, long period, ISeriesSink<TKey> sink, SeriesCounters? counters, DateTimeOffset start)
    {
        DriftInput input = errors.ToDriftInput(error);
        for (int i = 0, count = RuleCount; i < count; i++)
        {
            if (_options.Rules[i].Watches != watched)
            {
                continue;
            }

            DriftRule rule = RuleAt(i);
            if (rule.CanRead(input))
            {
                // Most scored periods change no episode: skip the call and the copy of the summary it takes.
                DriftTransition transition = rule.Evaluate(input);
                if (!transition.IsNone)
                {
                    Publish(i, transition, period, sink, counters, errors, start);
                }
            }
        }
    }

    private void Publish(int ruleIndex, in DriftTransition transition, long period, ISeriesSink<TKey> sink, SeriesCounters? counters, ErrorSummary? errors, DateTimeOffset? start)
    {
        if (transition.IsNone)
        {
            return;
        }

        if (counters is not null)
        {
            switch (transition.Kind)
            {
                case DriftTransitionKind.Raised:
                    counters.AlertsRaised++;
                    break;
                case DriftTransitionKind.Escalated:
                    counters.AlertsEscalated++;
                    break;
                case DriftTransitionKind.Cleared:
                    counters.AlertsCleared++;
                    break;
            }
        }

        sink.Alert(new DriftAlert<TKey>(
            _key, period, start ?? _options.Calendar.StartOf(period), ruleIndex, _options.RuleLabels[ruleIndex],
            transition, errors ?? ErrorSummary.Of(WatchedTracker(ruleIndex))));
    }

    /// <summary>The error tracker the rule at <paramref name="ruleIndex"/> watches.</summary>
    internal ErrorTracker WatchedTracker(int ruleIndex) =>
        _options.Rules[ruleIndex].Watches == WatchedModel.Reference ? _extras!.Reference!.Tracker : _model.Tracker;
}
