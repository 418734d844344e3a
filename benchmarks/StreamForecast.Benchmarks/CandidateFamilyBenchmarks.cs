using BenchmarkDotNet.Attributes;
using StreamForecast.Forecasting;
using StreamForecast.Selection;

namespace StreamForecast.Benchmarks;

/// <summary>
/// Issue 15, target 5: where a tuning run's time goes, per candidate family. Each method fits one family (or backtests every
/// candidate a tuning run backtests) over the fitting windows (the first half, 365 days) of 40 of the invented daily
/// histories of <see cref="TuningWorkload"/> with regular sales (the intermittent ones have zeros, which the multiplicative
/// fits refuse), on one thread. The baseline is the cheapest fit a tuning run does, single exponential smoothing; each
/// ratio says how many of those a family costs. Times are per 40 series.
/// </summary>
[MemoryDiagnoser]
public class CandidateFamilyBenchmarks
{
    private double[][] _windows = [];
    private double[][] _histories = [];
    private ForecasterOptions[][] _candidates = [];
    private BacktestOptions[] _backtests = [];

    /// <summary>Generates the histories and the candidate list of each (from one tuning run).</summary>
    [GlobalSetup]
    public void Setup()
    {
        int count = TuningWorkload.Smoke ? 2 : 40;
        var windows = new List<double[]>();
        for (int i = 0; windows.Count < count; i++)
        {
            if (i % 8 != 7)
            {
                windows.Add(TuningWorkload.Series(i));
            }
        }

        _histories = [.. windows];
        _windows = new double[_histories.Length][];
        _candidates = new ForecasterOptions[_histories.Length][];
        _backtests = new BacktestOptions[_histories.Length];
        for (int i = 0; i < _histories.Length; i++)
        {
            TuningResult result = SeriesTuner.Tune(_histories[i], TuningWorkload.Options(1));
            _windows[i] = _histories[i][..result.FirstOrigin];
            _candidates[i] = [.. result.Backtest.Candidates.Select(c => c.Method)];
            _backtests[i] = result.Backtest.Options;
        }
    }

    /// <summary>Single exponential smoothing (α).</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark(Baseline = true)]
    public double ExponentialSmoothing() => Sum(w => MethodFitter.FitExponentialSmoothing(w));

    /// <summary>Weighted moving average of 3 (least squares).</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double WeightedMovingAverage() => Sum(w => MethodFitter.FitWeightedMovingAverage(w, 3));

    /// <summary>Holt (α, β).</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double Holt() => Sum(w => MethodFitter.FitHolt(w));

    /// <summary>Holt with a damped trend (α, β, φ).</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double HoltDamped() => Sum(w => MethodFitter.FitHolt(w, damped: true));

    /// <summary>Holt-Winters additive (α, β, γ).</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double HoltWintersAdditive() => Sum(w => MethodFitter.FitHoltWinters(w, 7));

    /// <summary>Holt-Winters additive with a damped trend.</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double HoltWintersAdditiveDamped() => Sum(w => MethodFitter.FitHoltWinters(w, 7, damped: true));

    /// <summary>Holt-Winters multiplicative.</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double HoltWintersMultiplicative() => Sum(w => MethodFitter.FitHoltWinters(w, 7, Seasonality.Multiplicative));

    /// <summary>Holt-Winters multiplicative with a damped trend.</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double HoltWintersMultiplicativeDamped() => Sum(w => MethodFitter.FitHoltWinters(w, 7, Seasonality.Multiplicative, damped: true));

    /// <summary>Holt-Winters additive with fitted start values (what <see cref="TuningOptions.FitStartValues"/> adds per variant).</summary>
    /// <returns>A checksum of the fitted errors.</returns>
    [Benchmark]
    public double HoltWintersAdditiveFittedStart() => Sum(w => MethodFitter.FitHoltWinters(w, 7, fitStartValues: true));

    /// <summary>The backtest of every candidate of the tuning run over the whole history.</summary>
    /// <returns>A checksum of the scores.</returns>
    [Benchmark]
    public double BacktestAllCandidates()
    {
        double sum = 0;
        for (int i = 0; i < _histories.Length; i++)
        {
            sum += Backtester.Run(_histories[i], _candidates[i], _backtests[i]).Best.Score;
        }

        return sum;
    }

    private double Sum(Func<double[], FittedMethod> fit)
    {
        double sum = 0;
        foreach (double[] window in _windows)
        {
            sum += fit(window).SumOfSquaredErrors;
        }

        return sum;
    }
}
