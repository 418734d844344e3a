using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.Optimization;
using StreamForecast.Forecasting;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// Minimises a method's one-step sum of squared errors over bounded parameters with MathNet's Nelder–Mead simplex. The
/// objective runs the library's own forecaster over the history for every trial point.
/// </summary>
/// <remarks>
/// <para><b>Bounds.</b> Each parameter p in [lo, hi] is searched as an unbounded x with p = lo + (hi − lo)/(1 + e^(−x))
/// (a logistic transform), so the simplex never leaves the box. The fitted values are rounded to four decimals and
/// clamped into the box, which lets them reach the bounds themselves (a trend weight of 0, α = 1).</para>
/// <para><b>Search.</b> A small grid of starting points is scored first; the simplex starts from the best, with one
/// restart from where it stopped (Nelder–Mead can stall on a ridge). The best point ever evaluated is kept, so reaching
/// the iteration limit is harmless. Parameters for which the forecaster rejects an actual (a multiplicative method on a
/// zero) score +∞.</para>
/// </remarks>
internal sealed class ParameterSearch
{
    /// <summary>The SSE and error count of a trial point, or false when the forecaster must be run for it.</summary>
    public delegate bool TryObjective(double[] parameters, out double sse, out long count);

    private const double Tolerance = 1e-10;
    private readonly int _maxIterations;
    private readonly int _passes;

    private readonly double[] _series;
    private readonly double[] _lower;
    private readonly double[] _upper;
    private readonly Func<double[], ForecasterOptions> _create;
    private double[]? _best;
    private double _bestSse = double.PositiveInfinity;
    private long _bestCount;

    private readonly TryObjective? _tryObjective;

    /// <summary>
    /// Creates a search. <paramref name="tryObjective"/>, when given, computes a trial's SSE and error count without
    /// creating the options (it must give exactly what running the forecaster of <paramref name="create"/> gives) or
    /// returns false to have the forecaster run instead.
    /// </summary>
    public ParameterSearch(
        double[] series,
        double[] lower,
        double[] upper,
        Func<double[], ForecasterOptions> create,
        int maxIterations = 1_000,
        int passes = 2,
        TryObjective? tryObjective = null)
    {
        _tryObjective = tryObjective;
        _maxIterations = maxIterations;
        _passes = passes;
        _series = series;
        _lower = lower;
        _upper = upper;
        _create = create;
    }

    public int Evaluations { get; private set; }

    public string? LastRejection { get; private set; }

    /// <summary>Scores the grid, runs the simplex twice, rounds, and returns the best options with their SSE.</summary>
    public FittedMethod Fit(IEnumerable<double[]> grid)
    {
        foreach (double[] start in grid)
        {
            Evaluate(start);
        }

        if (_best is null)
        {
            SelectionThrowHelper.ThrowArgument("series", $"No parameters could be fitted: the method could not run over the history ({LastRejection ?? "no one-step error to score"}).");
        }

        IObjectiveFunction objective = ObjectiveFunction.Value(x => Evaluate(ToBox(x)));
        for (int pass = 0; pass < _passes; pass++)
        {
            Vector<double> start = FromBox(_best);
            Vector<double> perturbation = Vector<double>.Build.Dense(start.Count, pass == 0 ? 1.0 : 0.25);
            try
            {
                new NelderMeadSimplex(Tolerance, _maxIterations).FindMinimum(objective, start, perturbation);
            }
            catch (MaximumIterationsException)
            {
                // The best point evaluated so far is kept; a slow simplex only costs time.
            }
        }

        var rounded = new double[_best.Length];
        for (int i = 0; i < rounded.Length; i++)
        {
            rounded[i] = Math.Clamp(Math.Round(_best[i], 4, MidpointRounding.ToEven), _lower[i], _upper[i]);
        }

        ForecasterOptions options = _create(rounded);
        (double sse, long count) = MethodFitter.OneStepSquaredErrors(_series, options, 0);
        Evaluations++;
        if (!(sse <= _bestSse * (1 + 1e-6)) && double.IsFinite(_bestSse))
        {
            // Rounding cost more than a rounding's worth: keep the unrounded optimum.
            return new FittedMethod(_create(_best), _bestSse, _bestCount, Evaluations);
        }

        return new FittedMethod(options, sse, count, Evaluations);
    }

    private double Evaluate(double[] parameters)
    {
        Evaluations++;
        double sse;
        long count;
        if (_tryObjective is null || !_tryObjective(parameters, out sse, out count))
        {
            try
            {
                (sse, count) = MethodFitter.OneStepSquaredErrors(_series, _create(parameters), 0);
            }
            catch (ArgumentOutOfRangeException ex)
            {
                LastRejection = ex.Message;
                return double.PositiveInfinity;
            }
        }

        if (count == 0 || !double.IsFinite(sse))
        {
            return double.PositiveInfinity;
        }

        if (sse < _bestSse)
        {
            _bestSse = sse;
            _bestCount = count;
            _best = (double[])parameters.Clone();
        }

        return sse;
    }

    private double[] ToBox(Vector<double> x)
    {
        var p = new double[x.Count];
        for (int i = 0; i < p.Length; i++)
        {
            p[i] = _lower[i] + ((_upper[i] - _lower[i]) / (1 + Math.Exp(-x[i])));
            p[i] = Math.Clamp(p[i], _lower[i], _upper[i]);
        }

        return p;
    }

    private Vector<double> FromBox(double[] p)
    {
        var x = Vector<double>.Build.Dense(p.Length);
        for (int i = 0; i < p.Length; i++)
        {
            double width = _upper[i] - _lower[i];
            double u = Math.Clamp((p[i] - _lower[i]) / width, 1e-6, 1 - 1e-6);
            x[i] = Math.Log(u / (1 - u));
        }

        return x;
    }
}
