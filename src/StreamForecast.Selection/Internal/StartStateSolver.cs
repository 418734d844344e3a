using MathNet.Numerics.LinearAlgebra;
using StreamForecast.Forecasting;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// For fixed smoothing weights, finds the start state (a given level, trend and seasonal indices) that minimises the sum of
/// squared one-step errors over the whole history, by Gauss–Newton least squares on the library's own forecaster.
/// </summary>
/// <remarks>
/// <para><b>Why this works.</b> With the weights fixed, every one-step error of additive exponential smoothing is an affine
/// function of the start state (the equations are linear in it), so one Gauss–Newton step from any point is the exact least-
/// squares start (the usual state-space practice of estimating the initial states, here concentrated out of the weight
/// search; common practice). Multiplicative seasonality is not linear in the start: a few damped Gauss–Newton steps from the
/// seed, each accepted only when it lowers the error.</para>
/// <para><b>Method.</b> The Jacobian is formed by forward differences, one run of the forecaster per state number; the step
/// solves the linearised problem through its small normal equations (MathNet's LU; its SVD when LU meets a singular system). Every
/// residual comes from running a fresh forecaster created from the trial start, so the fitted start and the live numbers
/// cannot differ. Cost: (p + 1) runs of O(n) per iteration for p state numbers.</para>
/// </remarks>
internal static class StartStateSolver
{
    /// <summary>Solves for the start state.</summary>
    /// <param name="series">The history.</param>
    /// <param name="seed">The starting state numbers.</param>
    /// <param name="scale">A typical magnitude of the state numbers (for the difference steps).</param>
    /// <param name="create">Options from state numbers; throws <see cref="ArgumentException"/> for a state the method refuses.</param>
    /// <param name="maxIterations">Gauss–Newton iterations (1 suffices for a linear problem).</param>
    /// <returns>The best state found (the seed when nothing improved on it) and its SSE, or null when even the seed cannot run.</returns>
    public static (double[] State, double Sse)? Solve(double[] series, double[] seed, double scale, Func<double[], ForecasterOptions> create, int maxIterations)
    {
        int p = seed.Length;
        double[] theta = (double[])seed.Clone();
        double[]? residuals = Residuals(series, theta, create);
        if (residuals is null)
        {
            return null;
        }

        double sse = SumOfSquares(residuals);
        int n = residuals.Length;
        for (int iteration = 0; iteration < maxIterations; iteration++)
        {
            var jacobian = new double[p][];
            bool ok = true;
            for (int j = 0; j < p && ok; j++)
            {
                double h = 1e-4 * Math.Max(Math.Abs(theta[j]), scale);
                double[] shifted = (double[])theta.Clone();
                shifted[j] += h;
                double[]? r = Residuals(series, shifted, create);
                if (r is null || r.Length != n)
                {
                    h = -h;
                    shifted[j] = theta[j] + h;
                    r = Residuals(series, shifted, create);
                }

                if (r is null || r.Length != n)
                {
                    ok = false;
                    break;
                }

                for (int i = 0; i < n; i++)
                {
                    r[i] = (r[i] - residuals[i]) / h;
                }

                jacobian[j] = r;
            }

            if (!ok)
            {
                break;
            }

            double[]? step = GaussNewtonStep(jacobian, residuals);
            if (step is null)
            {
                break;
            }

            bool improved = false;
            for (double length = 1; length >= 1.0 / 64 && !improved; length /= 2)
            {
                double[] trial = (double[])theta.Clone();
                for (int j = 0; j < p; j++)
                {
                    trial[j] += length * step[j];
                }

                double[]? r = Residuals(series, trial, create);
                if (r is not null && r.Length == n)
                {
                    double trialSse = SumOfSquares(r);
                    if (trialSse < sse)
                    {
                        improved = sse - trialSse > 1e-12 * sse;
                        theta = trial;
                        residuals = r;
                        sse = trialSse;
                        if (!improved)
                        {
                            return (theta, sse);
                        }
                    }
                }
            }

            if (!improved)
            {
                break;
            }
        }

        return (theta, sse);
    }

    private static double[]? Residuals(double[] series, double[] theta, Func<double[], ForecasterOptions> create)
    {
        Forecaster forecaster;
        try
        {
            forecaster = create(theta).CreateForecaster();
        }
        catch (ArgumentException)
        {
            return null;
        }

        var residuals = new double[series.Length];
        int count = 0;
        foreach (double actual in series)
        {
            if (forecaster.TryForecast(1, out double forecast))
            {
                residuals[count++] = actual - forecast;
            }

            try
            {
                forecaster.Update(actual);
            }
            catch (ArgumentOutOfRangeException)
            {
                return null;
            }
        }

        foreach (double r in residuals.AsSpan(0, count))
        {
            if (!double.IsFinite(r))
            {
                return null;
            }
        }

        return count == series.Length ? residuals : residuals[..count];
    }

    /// <summary>
    /// Solves min ‖J·δ + r‖ through the normal equations JᵀJ·δ = −Jᵀr (p × p, with p the few state numbers), columns scaled
    /// to unit length first so the level, trend and index columns are comparable; MathNet's LU solves the small system and
    /// its SVD (minimum-norm) takes over when LU meets a singular one.
    /// </summary>
    private static double[]? GaussNewtonStep(double[][] jacobian, double[] residuals)
    {
        int p = jacobian.Length;
        var norms = new double[p];
        for (int j = 0; j < p; j++)
        {
            norms[j] = Math.Sqrt(Dot(jacobian[j], jacobian[j]));
            if (!(norms[j] > 0) || !double.IsFinite(norms[j]))
            {
                norms[j] = 1;
            }
        }

        Matrix<double> normal = Matrix<double>.Build.Dense(p, p);
        Vector<double> rhs = Vector<double>.Build.Dense(p);
        for (int j = 0; j < p; j++)
        {
            rhs[j] = -Dot(jacobian[j], residuals) / norms[j];
            for (int k = 0; k <= j; k++)
            {
                double g = Dot(jacobian[j], jacobian[k]) / (norms[j] * norms[k]);
                normal[j, k] = g;
                normal[k, j] = g;
            }
        }

        Vector<double> solution = normal.LU().Solve(rhs);
        if (!IsFinite(solution))
        {
            solution = normal.Svd().Solve(rhs);
        }

        if (!IsFinite(solution))
        {
            return null;
        }

        var step = new double[p];
        for (int j = 0; j < p; j++)
        {
            step[j] = solution[j] / norms[j];
        }

        return step;
    }

    private static double Dot(double[] a, double[] b)
    {
        double total = 0;
        for (int i = 0; i < a.Length; i++)
        {
            total += a[i] * b[i];
        }

        return total;
    }

    private static bool IsFinite(Vector<double> values)
    {
        foreach (double v in values)
        {
            if (!double.IsFinite(v))
            {
                return false;
            }
        }

        return true;
    }

    private static double SumOfSquares(double[] values)
    {
        double total = 0;
        foreach (double v in values)
        {
            total += v * v;
        }

        return total;
    }
}
