using MathNet.Numerics.Statistics;
using StreamForecast.Forecasting;
using StreamForecast.Tests.Infrastructure;

namespace StreamForecast.Tests.Forecasting;

public abstract class MovingAverageContractTests : ForecasterContractTests
{
    protected abstract int N { get; }

    protected override ForecasterOptions Options => new MovingAverageOptions(N);

    protected override int WarmUpLength => N;

    // Batch reference: the plain mean of the n actuals before period k (never including period k).
    protected override double[] BatchForecasts(double[] series)
    {
        var result = new double[series.Length + 1];
        for (int k = 0; k <= series.Length; k++)
        {
            if (k < N)
            {
                result[k] = double.NaN;
                continue;
            }

            double sum = 0;
            for (int i = k - N; i < k; i++)
            {
                sum += series[i];
            }

            result[k] = sum / N;
        }

        return result;
    }
}

public sealed class MovingAverage1Tests : MovingAverageContractTests
{
    protected override int N => 1;
}

public sealed class MovingAverageTests : MovingAverageContractTests
{
    protected override int N => 3;

    [Fact]
    public void ImportState_StatesReachedNearTheLimits_ImportAndContinueIdentically()
    {
        // A sequence the snapshot properties found (before the rounding bound was derived from the arithmetic): every
        // state it reaches was refused by its own import ("the running sum does not match the window").
        double[] y = [-705.44, 1e-300, 5e-324, -333333333333333.3, 1e-155, 1e-155, -517.44, 678.19, 999999999767669, 678.19,
            1e15, 1e15, -947481, -517.44, 0.1, -333333333332655.1, -517.44, 0, 0, 1e-160];
        var f = new MovingAverageOptions(3).CreateForecaster();
        foreach (double v in y)
        {
            f.Update(v);
            var copy = new MovingAverageOptions(3).CreateForecaster();
            copy.ImportState(f.ExportState());
            copy.Update(7);
            var twin = new MovingAverageOptions(3).CreateForecaster();
            twin.ImportState(f.ExportState());
            twin.Update(7);
            Assert.Equal(twin.ExportState(), copy.ExportState());
        }
    }

    [Fact]
    public void Forecast_NistAveragingSeries_MatchesShiftedThreePointAverages()
    {
        // NIST/SEMATECH e-Handbook §6.4.2.1 prints the 3-point moving average (a smoother that includes the
        // current point) 8.667, 9.667, 10.000, 11.000, 10.667, 10.000, 10.333, 9.667, 11.000, 10.000 at t=3..12.
        // The forecast for period t+1 is that smoother at t (check-values N3/N3f): F_4..F_13.
        double[] published = [8.667, 9.667, 10.000, 11.000, 10.667, 10.000, 10.333, 9.667, 11.000, 10.000];
        var f = new MovingAverageOptions(3).CreateForecaster();
        var forecasts = new List<double>();
        foreach (double y in ReferenceData.NistAveraging)
        {
            f.Update(y);
            if (f.TryForecast(1, out double next))
            {
                forecasts.Add(next);
            }
        }

        Assert.Equal(published.Length, forecasts.Count);
        for (int i = 0; i < published.Length; i++)
        {
            Assert.Equal(published[i], Math.Round(forecasts[i], 3), 10);
        }
    }

    [Fact]
    public void Forecast_PeriodT_NeverIncludesActualOfT()
    {
        // The forecast read before period t's update uses t−n..t−1 only (common practice; check-values convention 1).
        var f = new MovingAverageOptions(3).CreateForecaster();
        f.Update(1);
        f.Update(2);
        f.Update(3);
        double forecastForPeriod4 = f.Forecast();
        f.Update(1000);
        Assert.Equal(2.0, forecastForPeriod4);
        Assert.Equal((2 + 3 + 1000) / 3.0, f.Forecast());
    }

    [Fact]
    public void Forecast_RandomData_MatchesMathNetMovingStatistics()
    {
        // Independent oracle: MathNet.Numerics (NuGet) MovingStatistics over a window of n; its mean after
        // pushing y_1..y_t is our forecast for t+1.
        var rng = new Random(7);
        foreach (int n in new[] { 1, 3, 12, 52 })
        {
            var oracle = new MovingStatistics(n);
            var f = new MovingAverageOptions(n).CreateForecaster();
            for (int t = 0; t < 2000; t++)
            {
                double y = Math.Round((rng.NextDouble() * 500) - 100, 3);
                oracle.Push(y);
                f.Update(y);
                if (t + 1 >= n)
                {
                    Approx.Equal(oracle.Mean, f.Forecast(), 1e-12, $"n={n} t={t}");
                }
            }
        }
    }

    [Fact]
    public void Forecast_TenMillionRandomWalkUpdates_MatchesFreshAverageOfFinalWindow()
    {
        // Exactness bound (issue 2): after 10^7 random-walk updates the rolling sum matches a from-scratch
        // average of the final window to ≤ 1e-12 relative.
        const int updates = 10_000_000;
        foreach (int n in new[] { 12, 365 })
        {
            var rng = new Random(42 + n);
            var f = new MovingAverageOptions(n).CreateForecaster();
            var last = new double[n];
            double y = 1e6;
            for (int t = 0; t < updates; t++)
            {
                y += (rng.NextDouble() - 0.5) * 1000;
                f.Update(y);
                last[t % n] = y;
            }

            double exact = 0;
            double compensation = 0;
            foreach (double v in last)
            {
                double s = exact + v;
                compensation += Math.Abs(exact) >= Math.Abs(v) ? (exact - s) + v : (v - s) + exact;
                exact = s;
            }

            double expected = (exact + compensation) / n;
            Assert.True(Math.Abs(f.Forecast() - expected) <= 1e-12 * Math.Abs(expected), $"n={n}: {f.Forecast():R} vs {expected:R}");
        }
    }

    [Fact]
    public void Forecast_NistMeanAsEstimator_GivesPublishedMean()
    {
        // NIST e-Handbook §6.4.2 (check-values N1, N2): the mean of the whole series, i.e. MA(n) at n = length.
        var f = new MovingAverageOptions(12).CreateForecaster();
        foreach (double y in ReferenceData.NistAveraging)
        {
            f.Update(y);
        }

        Assert.Equal(10.0, f.Forecast(), 12);
        var g = new MovingAverageOptions(10).CreateForecaster();
        foreach (double y in ReferenceData.NistAveraging2)
        {
            g.Update(y);
        }

        Assert.Equal(48.676, Math.Round(g.Forecast(), 3), 12);
    }

    [Fact]
    public void Constructor_LengthOutOfRange_ThrowsWithAllowedRange()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new MovingAverageOptions(0));
        Assert.Contains("between 1 and", ex.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentOutOfRangeException>(() => new MovingAverageOptions(MovingAverageOptions.MaxLength + 1));
    }

    [Fact]
    public void ImportState_SumThatDoesNotMatchWindow_IsRejected()
    {
        var f = new MovingAverageOptions(3).CreateForecaster();
        foreach (double y in new double[] { 1, 2, 3, 4 })
        {
            f.Update(y);
        }

        double[] state = f.ExportState();
        state[^2] += 1; // corrupt the running sum
        var g = new MovingAverageOptions(3).CreateForecaster();
        Assert.Throws<ArgumentException>(() => g.ImportState(state));
        Assert.Equal(0, g.Count);
    }
}

public sealed class MovingAverage52Tests : MovingAverageContractTests
{
    protected override int N => 52;

    protected override double[] Sample => [.. Enumerable.Range(0, 200).Select(t => 100 + (t % 13) + (0.5 * t))];
}
