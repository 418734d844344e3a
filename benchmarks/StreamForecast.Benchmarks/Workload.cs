using System.Runtime.CompilerServices;
using StreamForecast.Alerts;
using StreamForecast.Forecasting;
using StreamForecast.Tracking;

namespace StreamForecast.Benchmarks;

/// <summary>Invented inputs, generated before anything is measured (fixed seeds, so every run sees the same data).</summary>
internal static class Workload
{
    /// <summary>Demand-like values: a level of 100 with uniform noise of ±10.</summary>
    public static double[] Demand(int count, int seed)
    {
        var rng = new Random(seed);
        var data = new double[count];
        for (int i = 0; i < count; i++)
        {
            data[i] = 90 + (rng.NextDouble() * 20);
        }

        return data;
    }

    /// <summary>Weights n, n−1, …, 1 (most recent first): the linearly weighted average.</summary>
    public static double[] LinearWeights(int n)
    {
        var w = new double[n];
        for (int i = 0; i < n; i++)
        {
            w[i] = n - i;
        }

        return w;
    }

    /// <summary>Arbitrary positive weights (not linear, so the forecaster takes its dot-product path).</summary>
    public static double[] ArbitraryWeights(int n, int seed)
    {
        var rng = new Random(seed);
        var w = new double[n];
        for (int i = 0; i < n; i++)
        {
            w[i] = 0.5 + rng.NextDouble();
        }

        return w;
    }

    /// <summary>The forecasting method under test by name: "MA" (moving average) or "LinearWMA" (weights n … 1).</summary>
    public static ForecasterOptions Method(string name, int n) => name switch
    {
        "MA" => new MovingAverageOptions(n),
        "LinearWMA" => new WeightedMovingAverageOptions(LinearWeights(n)),
        _ => throw new ArgumentOutOfRangeException(nameof(name), name, "use MA or LinearWMA"),
    };

    /// <summary>
    /// <paramref name="rounds"/> random permutations of 0 … keys−1, one after another: every key appears once per round,
    /// in a random order that differs between rounds.
    /// </summary>
    public static int[] ShuffledRounds(int keys, int rounds, int seed)
    {
        var rng = new Random(seed);
        var order = new int[keys * rounds];
        for (int r = 0; r < rounds; r++)
        {
            Span<int> round = order.AsSpan(r * keys, keys);
            for (int i = 0; i < keys; i++)
            {
                round[i] = i;
            }

            rng.Shuffle(round);
        }

        return order;
    }

    /// <summary>Shop/item style string keys, e.g. "shop-17/item-4711".</summary>
    public static string StringKey(int i) => $"shop-{i / 1000}/item-{i % 1000}";

    /// <summary>Distinct, scattered long keys (an odd multiplier is a bijection on 64-bit integers).</summary>
    public static long LongKey(int i) => unchecked((long)(((ulong)i + 1) * 0x9E3779B97F4A7C15UL));
}

/// <summary>
/// One full per-period step of a series, written with the library's public operators: score the forecast made for
/// this period and update the error statistics and the forecaster (<see cref="TrackedForecaster.Update"/>), check the
/// tracking-signal alert rule, and read the next forecast with its interval.
/// </summary>
internal sealed class SeriesStep
{
    private readonly TrackedForecaster _model;
    private readonly DriftRule _rule;

    public SeriesStep(ForecasterOptions method)
    {
        _model = new TrackedForecaster(method);
        _rule = new TrackingSignalRuleOptions().CreateRule();
    }

    /// <summary>Runs one period; returns a checksum so the work cannot be removed.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Step(double actual)
    {
        PeriodScore score = _model.Update(actual);
        double check = 0;
        if (score.IsScored)
        {
            ErrorTracker t = _model.Tracker;
            DriftTransition transition = _rule.Evaluate(new DriftInput(score.Error, t.Sigma, t.TrackingSignal, t.TriggSignal));
            check += (int)transition.Kind;
        }

        if (_model.TryForecast(1, NormalMultiplier.Coverage80, out double forecast, out PredictionInterval interval))
        {
            check += forecast + interval.Upper;
        }

        return check;
    }
}

/// <summary>The floor for one moving-average update: a ring buffer with an uncompensated rolling sum, nothing else.</summary>
internal sealed class BareRing
{
    private readonly double[] _ring;
    private double _sum;
    private int _next;

    public BareRing(int n) => _ring = new double[n];

    public int Length => _ring.Length;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Push(double x)
    {
        double[] ring = _ring;
        int next = _next;
        _sum += x - ring[next];
        ring[next] = x;
        _next = next + 1 == ring.Length ? 0 : next + 1;
        return _sum / ring.Length;
    }
}
