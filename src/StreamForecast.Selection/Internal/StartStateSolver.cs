using MathNet.Numerics.LinearAlgebra;

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
/// <para><b>Method.</b> The Jacobian is formed by forward differences, one run over the history per state number; the step
/// solves the linearised problem through its small normal equations (MathNet's LU; its SVD when LU meets a singular system). Every
/// residual comes from the caller's run (<see cref="GivenStartResiduals"/>, the forecaster's own equations from the trial start,
/// the same numbers as a fresh forecaster bit for bit), so the fitted start and the live numbers cannot differ. Cost: (p + 1)
/// runs of O(n) per iteration for p state numbers; the residual and Jacobian buffers are allocated once per solver.</para>
/// </remarks>
internal sealed class StartStateSolver
{
    private readonly double[][] _jacobian;
    private readonly double[] _shifted;
    private double[] _residuals;
    private double[] _trial;

    /// <summary>
    /// Creates a solver for <paramref name="stateLength"/> state numbers and histories of <paramref name="length"/> errors; its
    /// buffers are reused by every <see cref="Solve"/>, so one solver serves a whole fit (not thread-safe).
    /// </summary>
    public StartStateSolver(int length, int stateLength)
    {
        _jacobian = new double[stateLength][];
        for (int j = 0; j < stateLength; j++)
        {
            _jacobian[j] = new double[length];
        }

        _shifted = new double[stateLength];
        _residuals = new double[length];
        _trial = new double[length];
    }

    /// <summary>
    /// Writes the one-step error of every period for the state numbers into the array; false for a state the method refuses
    /// or a run that fails (the array's contents are then ignored).
    /// </summary>
    public delegate bool ResidualRun(double[] state, double[] residuals);

    /// <summary>Solves for the start state.</summary>
    /// <param name="seed">The starting state numbers.</param>
    /// <param name="scale">A typical magnitude of the state numbers (for the difference steps).</param>
    /// <param name="run">The residuals of a state (<see cref="GivenStartResiduals.TryRun"/>: the forecaster's bit for bit).</param>
    /// <param name="maxIterations">Gauss–Newton iterations (1 suffices for a linear problem).</param>
    /// <returns>The best state found (the seed when nothing improved on it) and its SSE, or null when even the seed cannot run.</returns>
    public (double[] State, double Sse)? Solve(double[] seed, double scale, ResidualRun run, int maxIterations)
    {
        int p = seed.Length;
        double[] theta = (double[])seed.Clone();
        double[] residuals = _residuals;
        if (!run(theta, residuals))
        {
            return null;
        }

        double sse = SumOfSquares(residuals);
        int n = residuals.Length;
        double[][] jacobian = _jacobian;
        double[] shifted = _shifted;
        for (int iteration = 0; iteration < maxIterations; iteration++)
        {
            bool ok = true;
            for (int j = 0; j < p; j++)
            {
                double h = 1e-4 * Math.Max(Math.Abs(theta[j]), scale);
                theta.CopyTo(shifted, 0);
                shifted[j] += h;
                double[] r = jacobian[j];
                if (!run(shifted, r))
                {
                    h = -h;
                    shifted[j] = theta[j] + h;
                    if (!run(shifted, r))
                    {
                        ok = false;
                        break;
                    }
                }

                for (int i = 0; i < n; i++)
                {
                    r[i] = (r[i] - residuals[i]) / h;
                }
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
            bool tiny = false;
            for (double length = 1; length >= 1.0 / 64 && !improved && !tiny; length /= 2)
            {
                double[] trial = (double[])theta.Clone();
                for (int j = 0; j < p; j++)
                {
                    trial[j] += length * step[j];
                }

                if (run(trial, _trial))
                {
                    double trialSse = SumOfSquares(_trial);
                    if (trialSse < sse)
                    {
                        // Accepted; an improvement below 1e-12 of the SSE ends the solve here.
                        improved = sse - trialSse > 1e-12 * sse;
                        tiny = !improved;
                        theta = trial;
                        (residuals, _trial) = (_trial, residuals);
                        sse = trialSse;
                    }
                }
            }

            if (!improved)
            {
                break;
            }
        }

        _residuals = residuals;
        return (theta, sse);
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
