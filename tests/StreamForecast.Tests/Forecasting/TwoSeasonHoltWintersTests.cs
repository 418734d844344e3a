using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

/// <summary>
/// The forecaster contract for Holt-Winters with two seasonal cycles, with a plain batch recomputation of the equations in
/// <see cref="TwoSeasonHoltWintersOptions"/> (Taylor 2003, as recalled from memory) and of its documented start rule.
/// </summary>
public abstract class TwoSeasonHoltWintersContractTests : ForecasterContractTests
{
    protected abstract int ShortCycle { get; }

    protected abstract int LongCycle { get; }

    protected abstract bool Multiplicative { get; }

    protected abstract double LevelWeight { get; }

    protected abstract double? TrendWeight { get; }

    protected abstract double ShortCycleWeight { get; }

    protected abstract double LongCycleWeight { get; }

    protected virtual double ErrorAdjustment => 0;

    protected override ForecasterOptions Options => new TwoSeasonHoltWintersOptions(
        ShortCycle,
        LongCycle,
        Multiplicative ? Seasonality.Multiplicative : Seasonality.Additive,
        LevelWeight,
        TrendWeight,
        ShortCycleWeight,
        LongCycleWeight,
        ErrorAdjustment);

    protected override int WarmUpLength => 2 * LongCycle;

    // Batch reference, written out plainly for each prefix k: the means A1, A2 of the first two long cycles; the combined
    // index of long-cycle position j, the mean over both cycles of y/A_p (or y − A_p); the short-cycle index of position i,
    // the mean of the combined indices at the positions j ≡ i (mod m1); the long-cycle index, combined / short (or minus
    // short); level A1, trend (A2 − A1)/m2 (0 without a trend); then every actual from period m2+1 to k through the
    // equations, tracking the one-step error of the unadjusted forecast; forecast one ahead plus λ·e.
    protected override double[] BatchForecasts(double[] series)
    {
        int m1 = ShortCycle, m2 = LongCycle;
        double a = LevelWeight, b = TrendWeight ?? 0, dl = ShortCycleWeight, om = LongCycleWeight;
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            if (k < 2 * m2)
            {
                result[k] = double.NaN;
                continue;
            }

            double mean1 = 0, mean2 = 0;
            for (int j = 0; j < m2; j++)
            {
                mean1 += series[j];
                mean2 += series[m2 + j];
            }

            mean1 /= m2;
            mean2 /= m2;
            var combined = new double[m2];
            for (int j = 0; j < m2; j++)
            {
                combined[j] = Multiplicative
                    ? ((series[j] / mean1) + (series[m2 + j] / mean2)) / 2
                    : ((series[j] - mean1) + (series[m2 + j] - mean2)) / 2;
            }

            var d = new double[m1];
            for (int i = 0; i < m1; i++)
            {
                double sum = 0;
                int n = 0;
                for (int j = i; j < m2; j += m1)
                {
                    sum += combined[j];
                    n++;
                }

                d[i] = sum / n;
            }

            var w = new double[m2];
            for (int j = 0; j < m2; j++)
            {
                w[j] = Multiplicative ? combined[j] / d[j % m1] : combined[j] - d[j % m1];
            }

            double level = mean1, trend = TrendWeight is null ? 0 : (mean2 - mean1) / m2, error = 0;
            for (int t = m2; t < k; t++)
            {
                double y = series[t], s1 = d[t % m1], s2 = w[t % m2], previous = level, usedTrend = trend;
                if (Multiplicative)
                {
                    error = y - ((previous + trend) * s1 * s2);
                    level = (a * y / (s1 * s2)) + ((1 - a) * (previous + trend));
                    if (level <= 0)
                    {
                        usedTrend = 0;
                        level = (a * y / (s1 * s2)) + ((1 - a) * previous);
                    }

                    d[t % m1] = (dl * y / (level * s2)) + ((1 - dl) * s1);
                    w[t % m2] = (om * y / (level * s1)) + ((1 - om) * s2);
                }
                else
                {
                    error = y - (previous + trend + s1 + s2);
                    level = (a * (y - s1 - s2)) + ((1 - a) * (previous + trend));
                    d[t % m1] = (dl * (y - level - s2)) + ((1 - dl) * s1);
                    w[t % m2] = (om * (y - level - s1)) + ((1 - om) * s2);
                }

                trend = TrendWeight is null ? 0 : (b * (level - previous)) + ((1 - b) * usedTrend);
            }

            double f = Multiplicative ? (level + trend) * d[k % m1] * w[k % m2] : level + trend + d[k % m1] + w[k % m2];
            result[k] = f + (ErrorAdjustment * error);
        }

        return result;
    }
}

public sealed class TwoSeasonHoltWintersAdditiveTests : TwoSeasonHoltWintersContractTests
{
    protected override int ShortCycle => 3;

    protected override int LongCycle => 7;

    protected override bool Multiplicative => false;

    protected override double LevelWeight => 0.4;

    protected override double? TrendWeight => 0.1;

    protected override double ShortCycleWeight => 0.3;

    protected override double LongCycleWeight => 0.2;

    protected override double ErrorAdjustment => 0.6;
}

public sealed class TwoSeasonHoltWintersAdditiveNoTrendTests : TwoSeasonHoltWintersContractTests
{
    // Cycles that are not multiples of each other: the equations need only m1 < m2.
    protected override int ShortCycle => 2;

    protected override int LongCycle => 5;

    protected override bool Multiplicative => false;

    protected override double LevelWeight => 0.7;

    protected override double? TrendWeight => null;

    protected override double ShortCycleWeight => 0.5;

    protected override double LongCycleWeight => 0.1;
}

public sealed class TwoSeasonHoltWintersMultiplicativeTests : TwoSeasonHoltWintersContractTests
{
    protected override int ShortCycle => 4;

    protected override int LongCycle => 12;

    protected override bool Multiplicative => true;

    protected override double LevelWeight => 0.5;

    protected override double? TrendWeight => 0.05;

    protected override double ShortCycleWeight => 0.2;

    protected override double LongCycleWeight => 0.3;

    protected override double ErrorAdjustment => -0.4;

    protected override SeriesDomain Domain => SeriesDomain.Positive;

    protected override bool IsShiftEquivariant => false;

    protected override double[] OutOfDomainActuals => [-1, -0.01];

    [Fact]
    public void Update_StartWindowOfZeros_HoldsIndicesAtTheFloorAndStaysFinite()
    {
        var f = Options.CreateForecaster();
        for (int t = 0; t < WarmUpLength; t++)
        {
            f.Update(0);
        }

        Assert.True(f.IsWarm);
        Assert.Equal(0, f.Forecast(), 1e-12);
        double[] state = f.ExportState();
        for (int i = 4; i < 4 + ShortCycle + LongCycle; i++)
        {
            Assert.True(state[i] >= HoltWinters.MultiplicativeFloor, $"index {i} is {state[i]:R}");
        }

        f.Update(50);
        Assert.True(double.IsFinite(f.Forecast()) && double.IsFinite(f.Forecast(30)));
    }
}

public sealed class TwoSeasonHoltWintersMultiplicativeNoTrendTests : TwoSeasonHoltWintersContractTests
{
    protected override int ShortCycle => 2;

    protected override int LongCycle => 6;

    protected override bool Multiplicative => true;

    protected override double LevelWeight => 0.3;

    protected override double? TrendWeight => null;

    protected override double ShortCycleWeight => 0.4;

    protected override double LongCycleWeight => 0.15;

    protected override SeriesDomain Domain => SeriesDomain.Positive;

    protected override bool IsShiftEquivariant => false;

    protected override double[] OutOfDomainActuals => [-1, -0.01];
}
