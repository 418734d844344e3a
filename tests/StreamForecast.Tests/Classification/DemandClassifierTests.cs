using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using MathNet.Numerics.Statistics;
using StreamForecast.Classification;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Classification;

public sealed class DemandClassifierTests
{
    [Fact]
    public void Classify_HandWorkedSeries_MatchesArithmetic()
    {
        // DERIVED by hand with this library's conventions (DemandClassifier remarks):
        // demand periods at positions 2, 5, 6 (from 1): intervals 3 and 1 → ADI = (6 − 2)/2 = 2.
        // Sizes 3, 10, 17: mean 10, squared deviations 49 + 0 + 49 = 98, sample variance 98/2 = 49 → CV² = 49/100.
        // ADI 2 ≥ 1.32 and CV² 0.49 ≥ 0.49 (cut-offs inclusive; Syntetos, Boylan & Croston 2005) → lumpy.
        var result = DemandClassifier.Classify([0, 3, 0, 0, 10, 17, 0]);
        Assert.Equal(DemandClass.Lumpy, result.Class);
        Assert.Equal(2.0, result.AverageDemandInterval);
        Assert.Equal(0.49, result.SquaredCoefficientOfVariation);
        Assert.Equal(3, result.DemandPeriods);
        Assert.Equal(7, result.Periods);
        Assert.True(result.IsDetermined);
    }

    public static TheoryData<double[], DemandClass> Quadrants => new()
    {
        // Demand every period (ADI 1); sizes 10/12: mean 11, sample variance 1.2, CV² ≈ 0.0099 → smooth.
        { new double[] { 10, 12, 10, 12, 10, 12 }, DemandClass.Smooth },
        // Demand every period (ADI 1); sizes 1/20: mean 10.5, sample variance 108.3, CV² ≈ 0.982 → erratic.
        { new double[] { 1, 20, 1, 20, 1, 20 }, DemandClass.Erratic },
        // Every other period (ADI 2); equal sizes (CV² 0) → intermittent.
        { new double[] { 0, 5, 0, 5, 0, 5, 0, 5 }, DemandClass.Intermittent },
        // Every third period (ADI 3); sizes 1/30: mean 15.5, sample variance 280.33, CV² ≈ 1.167 → lumpy.
        { new double[] { 0, 0, 1, 0, 0, 30, 0, 0, 1, 0, 0, 30 }, DemandClass.Lumpy },
    };

    [Theory]
    [MemberData(nameof(Quadrants))]
    public void Classify_OneSeriesPerQuadrant_GivesThatQuadrant(double[] demand, DemandClass expected)
    {
        // Quadrants of Syntetos, Boylan & Croston (2005) with the published cut-offs ADI 1.32 and CV² 0.49.
        Assert.Equal(expected, DemandClassifier.Classify(demand).Class);
    }

    [Fact]
    public void Classify_AdiExactlyAtCutoff_IsOnInfrequentSide()
    {
        // 34 periods, zeros at 8 of them, 26 demand periods spanning positions 0..33: ADI = 33/25 = 1.32 exactly
        // (IEEE division is correctly rounded, as is the literal). Equal sizes: CV² = 0.
        var demand = new double[34];
        for (int t = 0; t < demand.Length; t++)
        {
            demand[t] = t % 4 == 2 ? 0 : 10;
        }

        var atCutoff = DemandClassifier.Classify(demand);
        Assert.Equal(26, atCutoff.DemandPeriods);
        Assert.Equal(1.32, atCutoff.AverageDemandInterval);
        Assert.Equal(DemandClass.Intermittent, atCutoff.Class);

        // One step below the cut-off (a cut-off one ulp above the same ADI) is the frequent side.
        var justAbove = new DemandClassifierOptions(Math.BitIncrement(1.32));
        Assert.Equal(DemandClass.Smooth, DemandClassifier.Classify(demand, justAbove).Class);
    }

    [Fact]
    public void Classify_CvSquaredExactlyAtCutoff_IsOnVariableSide()
    {
        // Sizes 3, 10, 17 every period: ADI 1, CV² = 49/100 = 0.49 exactly (see the hand-worked test).
        double[] demand = [3, 10, 17];
        var atCutoff = DemandClassifier.Classify(demand);
        Assert.Equal(0.49, atCutoff.SquaredCoefficientOfVariation);
        Assert.Equal(DemandClass.Erratic, atCutoff.Class);

        var justAbove = new DemandClassifierOptions(DemandClassifierOptions.DefaultIntervalCutoff, Math.BitIncrement(0.49));
        Assert.Equal(DemandClass.Smooth, DemandClassifier.Classify(demand, justAbove).Class);
    }

    [Fact]
    public void Classify_LeadingAndTrailingZeros_AreNotCountedInAdi()
    {
        // Convention: ADI = mean of the intervals between consecutive demands. Here demands at positions 5 and 7
        // (from 1) of 12 periods: one interval of 2, so ADI = 2 — not 12/2 = 6 (periods per demand period) nor
        // 7/2 = 3.5 (counting the leading zeros as a first interval).
        var result = DemandClassifier.Classify([0, 0, 0, 0, 4, 0, 4, 0, 0, 0, 0, 0]);
        Assert.Equal(2.0, result.AverageDemandInterval);
        Assert.Equal(DemandClass.Intermittent, result.Class);
    }

    [Fact]
    public void Classify_RandomSeries_MatchesMathNetStatistics()
    {
        // Oracle: MathNet.Numerics (a general-purpose library). ADI = Statistics.Mean of the intervals between
        // demand positions; CV² = Statistics.Variance (sample, n − 1) / Mean² of the non-zero sizes. The
        // population variance gives a different number, which pins the sample-variance convention.
        var rng = new Random(5);
        for (int run = 0; run < 200; run++)
        {
            int length = rng.Next(2, 120);
            var demand = new double[length];
            for (int t = 0; t < length; t++)
            {
                demand[t] = rng.NextDouble() < 0.45 ? Math.Round(rng.NextDouble() * 50, 2) : 0;
            }

            var sizes = new List<double>();
            var intervals = new List<double>();
            int previous = -1;
            for (int t = 0; t < length; t++)
            {
                if (demand[t] > 0)
                {
                    if (previous >= 0)
                    {
                        intervals.Add(t - previous);
                    }

                    sizes.Add(demand[t]);
                    previous = t;
                }
            }

            var result = DemandClassifier.Classify(demand);
            if (sizes.Count < 2)
            {
                Assert.Equal(DemandClass.Undetermined, result.Class);
                continue;
            }

            double mean = sizes.Mean();
            double sampleCv2 = sizes.Variance() / (mean * mean);
            double populationCv2 = sizes.PopulationVariance() / (mean * mean);
            Approx.Equal(intervals.Mean(), result.AverageDemandInterval, 1e-12, $"run {run} ADI");
            Approx.Equal(sampleCv2, result.SquaredCoefficientOfVariation, 1e-10, $"run {run} CV²");
            Assert.False(Approx.Close(populationCv2, result.SquaredCoefficientOfVariation, 1e-10) && populationCv2 > 0, $"run {run}: matches the population variance");
            Assert.Equal(sizes.Count, result.DemandPeriods);
        }
    }

    [Fact]
    public void Classify_LargeSizesWithSmallSpread_StaysAccurate()
    {
        // Welford's single pass keeps the variance of 1e9 + {1, 2, 3, 4} accurate, where the naive
        // Σx² − n·mean² would lose every digit. Oracle: MathNet Statistics.Variance (two-pass).
        double[] sizes = [1e9 + 1, 1e9 + 2, 1e9 + 3, 1e9 + 4];
        double mean = sizes.Mean();
        double expected = sizes.Variance() / (mean * mean);
        var result = DemandClassifier.Classify(sizes);
        Approx.Equal(expected, result.SquaredCoefficientOfVariation, 1e-9);
        Assert.True(result.SquaredCoefficientOfVariation > 0);
    }

    [Theory]
    [InlineData(new double[0], 0)]
    [InlineData(new double[] { 0, 0, 0 }, 0)]
    [InlineData(new double[] { 0, 5, 0, 0 }, 1)]
    public void Classify_FewerThanTwoDemandPeriods_IsUndetermined(double[] demand, long demandPeriods)
    {
        var result = DemandClassifier.Classify(demand);
        Assert.Equal(DemandClass.Undetermined, result.Class);
        Assert.False(result.IsDetermined);
        Assert.True(double.IsNaN(result.AverageDemandInterval));
        Assert.True(double.IsNaN(result.SquaredCoefficientOfVariation));
        Assert.Equal(demandPeriods, result.DemandPeriods);
        Assert.Equal(demand.Length, result.Periods);
    }

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    [InlineData(-1.0)]
    [InlineData(-0.01)]
    public void Classify_InvalidDemand_ThrowsSayingWhatIsAllowed(double bad)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => DemandClassifier.Classify([1, 0, bad, 2]));
        Assert.Contains("zero or more", ex.Message, StringComparison.Ordinal);
        Assert.Contains("demand 2", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Classify_NullOptions_Throws()
    {
        Assert.Throws<ArgumentNullException>(() => DemandClassifier.Classify([1, 2], null!));
    }

    [Fact]
    public void Options_Defaults_ArePublishedCutoffs()
    {
        // Syntetos, Boylan & Croston (2005): ADI 1.32, CV² 0.49 (practice.md "Demand classes").
        Assert.Equal(1.32, DemandClassifierOptions.Default.IntervalCutoff);
        Assert.Equal(0.49, DemandClassifierOptions.Default.VariationCutoff);
        Assert.Equal(new DemandClassifierOptions(), DemandClassifierOptions.Default);
        Assert.Equal(new DemandClassifierOptions(1.5, 0.3), new DemandClassifierOptions(1.5, 0.3));
    }

    [Theory]
    [InlineData(1.0)]
    [InlineData(0.5)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void Options_IntervalCutoffNotAboveOne_Throws(double cutoff)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new DemandClassifierOptions(cutoff));
        Assert.Equal("intervalCutoff", ex.ParamName);
        Assert.Contains("greater than 1", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-0.2)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void Options_VariationCutoffNotPositive_Throws(double cutoff)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new DemandClassifierOptions(1.32, cutoff));
        Assert.Equal("variationCutoff", ex.ParamName);
        Assert.Contains("greater than 0", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Classify_CustomCutoffs_MoveTheBoundaries()
    {
        // ADI 2 and CV² 0 (every other period, equal sizes): intermittent with the published cut-offs,
        // smooth once the ADI cut-off is raised above 2.
        double[] demand = [0, 5, 0, 5, 0, 5];
        Assert.Equal(DemandClass.Intermittent, DemandClassifier.Classify(demand).Class);
        Assert.Equal(DemandClass.Smooth, DemandClassifier.Classify(demand, new DemandClassifierOptions(2.5)).Class);
    }

    [Theory]
    [InlineData(DemandClass.Undetermined, SuggestedMethods.None)]
    [InlineData(DemandClass.Smooth, SuggestedMethods.ExponentialSmoothing | SuggestedMethods.Croston)]
    [InlineData(DemandClass.Erratic, SuggestedMethods.SyntetosBoylan)]
    [InlineData(DemandClass.Intermittent, SuggestedMethods.SyntetosBoylan | SuggestedMethods.Tsb)]
    [InlineData(DemandClass.Lumpy, SuggestedMethods.SyntetosBoylan | SuggestedMethods.Tsb)]
    public void SuggestMethods_EachClass_GivesDocumentedAdvice(DemandClass demandClass, SuggestedMethods expected)
    {
        // Common practice (DemandClassifier.SuggestMethods remarks).
        Assert.Equal(expected, DemandClassifier.SuggestMethods(demandClass));
    }

    [Fact]
    public void SuggestMethods_UndefinedClass_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => DemandClassifier.SuggestMethods((DemandClass)42));
    }
}
