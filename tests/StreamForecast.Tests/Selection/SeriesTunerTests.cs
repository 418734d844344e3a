using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StreamForecast.Classification;
using StreamForecast.Forecasting;
using StreamForecast.Periods;
using StreamForecast.Selection;
using StreamForecast.Streaming;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Selection;

public class SeriesTunerTests
{
    private static readonly TuningOptions s_quick = new(horizon: 2, maxMovingAverageLength: 6);

    [Property(MaxTest = 40)]
    public Property Tune_RandomSeries_ChosenNeverWorseThanDefaultInTheBacktest() =>
        Prop.ForAll(
            Gen.Elements(SeriesDomain.Real, SeriesDomain.Positive, SeriesDomain.Intermittent).SelectMany(d => SeriesGen.Series(d, 70)).ToArbitrary(),
            series =>
            {
                TuningResult result = SeriesTuner.Tune(series, s_quick);
                CandidateEvaluation chosen = result.Chosen;
                CandidateEvaluation fallback = result.Default;
                bool defaultFirst = result.Backtest.Candidates[0].Method.Equals(s_quick.DefaultMethod) && fallback.CandidateIndex == 0;
                bool chosenIsBest = ReferenceEquals(chosen, result.Ranking[0]);
                bool neverWorse = !fallback.IsComplete || (chosen.IsComplete && chosen.Score <= fallback.Score);
                return (defaultFirst && chosenIsBest && neverWorse)
                    .Label($"n = {series.Length}: chosen {chosen}, default {fallback}");
            });

    [Fact]
    public void Tune_SeasonalSeries_ChoosesHoltWintersAndBeatsTheDefault()
    {
        double[] y = SelectionTestData.AdditiveSeasonal(12, 12, 0.3, 0.05, 0.2, 1.0, seed: 9);
        TuningResult result = SeriesTuner.Tune(y, new TuningOptions(seasonLength: 12, horizon: 3));
        Assert.IsType<HoltWintersOptions>(result.Method);
        Assert.True(result.ImprovesOnDefault);
        Assert.True(result.Chosen.Score < result.Default.Score);
        Assert.Equal(72, result.FirstOrigin);
        Assert.Contains(result.Ranking, e => e.Method is NaiveOptions { SeasonLength: 12 });
    }

    [Fact]
    public void Tune_IntermittentSeries_AddsCrostonSbaAndTsbCandidates()
    {
        var rng = new Random(12);
        var y = new double[120];
        for (int t = 0; t < y.Length; t++)
        {
            y[t] = rng.NextDouble() < 0.3 ? 1 + rng.Next(6) : 0;
        }

        TuningResult result = SeriesTuner.Tune(y, s_quick);
        Assert.True(result.Demand.Class is DemandClass.Intermittent or DemandClass.Lumpy, $"class {result.Demand.Class}");
        var methods = result.Backtest.Candidates.Select(e => e.Method).ToList();
        Assert.Equal(3, methods.OfType<CrostonOptions>().Count(c => c.Variant == CrostonVariant.Classic));
        Assert.Equal(3, methods.OfType<CrostonOptions>().Count(c => c.Variant == CrostonVariant.SyntetosBoylan));
        Assert.Equal(9, methods.OfType<TsbOptions>().Count());
    }

    [Fact]
    public void Tune_SmoothPositiveSeries_AddsOnlyTheSuggestedIntermittentMethod()
    {
        // DemandClassifier.SuggestMethods(Smooth) names exponential smoothing and Croston: Croston's weights are tried, SBA and TSB are not.
        double[] y = SelectionTestData.StableDemand(80, 100, 3, seed: 13);
        TuningResult result = SeriesTuner.Tune(y, s_quick);
        Assert.Equal(DemandClass.Smooth, result.Demand.Class);
        var methods = result.Backtest.Candidates.Select(e => e.Method).ToList();
        Assert.Equal(3, methods.OfType<CrostonOptions>().Count());
        Assert.All(methods.OfType<CrostonOptions>(), c => Assert.Equal(CrostonVariant.Classic, c.Variant));
        Assert.Empty(methods.OfType<TsbOptions>());
    }

    [Fact]
    public void Tune_FittedParameters_UseOnlyTheFittingWindow()
    {
        // The first half is a flat random walk, the second a steep trend; a fit that saw the second half would differ.
        double[] y = SelectionTestData.LocalLevel(200, 0.3, 1.0, seed: 14);
        for (int t = 100; t < y.Length; t++)
        {
            y[t] += 3 * (t - 100);
        }

        TuningResult result = SeriesTuner.Tune(y);
        Assert.Equal(100, result.FirstOrigin);
        FittedMethod onWindow = MethodFitter.FitExponentialSmoothing(y.AsSpan(0, 100));
        Assert.Contains(result.Backtest.Candidates, e => e.Method.Equals(onWindow.Method));
        Assert.Equal(100, result.Chosen.AtHorizon(1).Count);
    }

    [Fact]
    public void Tune_HistoryNoLongerThanTheFittingWindow_ChoosesTheDefault()
    {
        TuningResult result = SeriesTuner.Tune([5, 6, 7], new TuningOptions(firstOrigin: 3));
        Assert.Same(result.Default, result.Chosen);
        Assert.Equal(TuningOptions.Default.DefaultMethod, result.Method);
        Assert.False(result.ImprovesOnDefault);
    }

    [Fact]
    public void Tune_NegativeValues_SkipsTheIntermittentMethodsAndClassification()
    {
        double[] y = [-3, 2, -1, 4, 0, -2, 3, 1, -4, 2, 0, 1, -1, 3, 2, -2];
        TuningResult result = SeriesTuner.Tune(y, s_quick);
        Assert.Equal(DemandClass.Undetermined, result.Demand.Class);
        Assert.DoesNotContain(result.Backtest.Candidates, e => e.Method is CrostonOptions or TsbOptions);
        Assert.All(result.Backtest.Candidates, e => Assert.Null(e.Failure));
    }

    [Fact]
    public void ToSeriesOptions_Result_CarriesTheChosenMethodForTheEngine()
    {
        double[] y = SelectionTestData.LocalLevel(120, 0.4, 1.0, seed: 15);
        TuningResult result = SeriesTuner.Tune(y);
        PeriodCalendar calendar = PeriodCalendar.FixedInterval(TimeSpan.FromHours(1));
        SeriesOptions options = result.ToSeriesOptions(calendar);
        Assert.Same(result.Method, options.Method);
        Assert.Same(calendar, options.Calendar);
        Assert.Equal(result.Options.Tracking, options.Tracking);

        var template = new SeriesOptions(new NaiveOptions(), calendar, gaps: GapPolicy.Missing, horizon: 7, duplicateWindow: 12);
        SeriesOptions applied = result.ApplyTo(template);
        Assert.Same(result.Method, applied.Method);
        Assert.Equal(GapPolicy.Missing, applied.Gaps);
        Assert.Equal(7, applied.Horizon);
        Assert.Equal(12, applied.DuplicateWindow);
    }

    [Fact]
    public void TuneMany_AnyDegreeOfParallelism_SameChoicesInInputOrder()
    {
        var histories = new List<KeyValuePair<int, double[]>>();
        for (int k = 0; k < 12; k++)
        {
            histories.Add(new KeyValuePair<int, double[]>(100 - k, SelectionTestData.LocalLevel(60 + (5 * k), 0.1 + (0.05 * k), 1.0, seed: 100 + k)));
        }

        var one = SeriesTuner.TuneMany(histories, new TuningOptions(maxDegreeOfParallelism: 1, maxMovingAverageLength: 6));
        var many = SeriesTuner.TuneMany(histories, new TuningOptions(maxDegreeOfParallelism: 3, maxMovingAverageLength: 6));
        Assert.Equal(histories.Select(h => h.Key), many.Select(r => r.Key));
        for (int k = 0; k < histories.Count; k++)
        {
            Assert.Equal(one[k].Value.Method, many[k].Value.Method);
            Assert.Equal(
                one[k].Value.Ranking.Select(e => (e.CandidateIndex, e.Score)),
                many[k].Value.Ranking.Select(e => (e.CandidateIndex, e.Score)));
        }
    }

    [Fact]
    public void TuningOptions_OutOfRange_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions(trainingFraction: 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions(minMovingAverageLength: 5, maxMovingAverageLength: 4));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions(weightedLength: 201));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions(intermittentWeights: [0.1, 0]));
        Assert.Throws<ArgumentOutOfRangeException>(() => new TuningOptions(firstOrigin: 0));
    }
}
