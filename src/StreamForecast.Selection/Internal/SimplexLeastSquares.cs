using MathNet.Numerics.LinearAlgebra;

namespace StreamForecast.Selection.Internal;

/// <summary>
/// Least squares with non-negative coefficients that sum to one: minimise ‖y − Xw‖² subject to w ≥ 0 and Σw = 1, in the
/// form of its normal equations, minimise ½·wᵀGw − cᵀw with G = XᵀX and c = Xᵀy.
/// </summary>
/// <remarks>
/// <para><b>Algorithm.</b> The primal active-set method for convex quadratic programs (Nocedal &amp; Wright, Numerical
/// Optimization, 2nd ed., §16.5, Algorithm 16.3 — from memory), specialised to one equality constraint and bounds
/// w ≥ 0. It starts from the feasible equal weights 1/k with no bound active. Each iteration solves the equality-constrained
/// sub-problem on the free coefficients through its KKT system [G_FF 1; 1ᵀ 0]·[z; ν] = [c_F; 1] with MathNet's dense LU
/// decomposition; it then either moves towards z as far as feasibility allows (fixing at zero the first coefficient that
/// would turn negative) or, once z is reached, frees the fixed coefficient with the most negative multiplier
/// μᵢ = (Gw − c)ᵢ + ν, stopping when none is negative (the KKT conditions hold). For a convex problem this ends at the
/// global minimum in finitely many steps.</para>
/// <para><b>Singular G.</b> A tiny ridge, 10⁻¹² × the mean diagonal of G, is added so that every KKT system is
/// non-singular (a constant history makes every column of X equal); it moves the solution by a negligible amount.</para>
/// </remarks>
internal static class SimplexLeastSquares
{
    public static double[] Solve(Matrix<double> gram, Vector<double> cross)
    {
        int k = cross.Count;
        double meanDiagonal = gram.Diagonal().Sum() / k;
        double ridge = 1e-12 * (meanDiagonal > 0 ? meanDiagonal : 1.0);
        var a = gram.Clone();
        for (int i = 0; i < k; i++)
        {
            a[i, i] += ridge;
        }

        var w = new double[k];
        Array.Fill(w, 1.0 / k);
        var fixedAtZero = new bool[k];
        var free = new int[k];
        int maxIterations = 100 + (20 * k);
        for (int iteration = 0; iteration < maxIterations; iteration++)
        {
            int m = 0;
            for (int i = 0; i < k; i++)
            {
                if (!fixedAtZero[i])
                {
                    free[m++] = i;
                }
            }

            var kkt = Matrix<double>.Build.Dense(m + 1, m + 1);
            var rhs = Vector<double>.Build.Dense(m + 1);
            for (int r = 0; r < m; r++)
            {
                for (int s = 0; s < m; s++)
                {
                    kkt[r, s] = a[free[r], free[s]];
                }

                kkt[r, m] = 1;
                kkt[m, r] = 1;
                rhs[r] = cross[free[r]];
            }

            rhs[m] = 1;
            Vector<double> solution = kkt.LU().Solve(rhs);
            double largestStep = 0;
            for (int r = 0; r < m; r++)
            {
                largestStep = Math.Max(largestStep, Math.Abs(solution[r] - w[free[r]]));
            }

            if (largestStep <= 1e-13)
            {
                // At the sub-problem's minimum: check the multipliers of the coefficients fixed at zero.
                double nu = solution[m];
                int release = -1;
                double mostNegative = 0;
                double scale = 1e-12 * (1 + cross.AbsoluteMaximum());
                for (int i = 0; i < k; i++)
                {
                    if (!fixedAtZero[i])
                    {
                        continue;
                    }

                    double gradient = -cross[i];
                    for (int j = 0; j < k; j++)
                    {
                        gradient += a[i, j] * w[j];
                    }

                    double multiplier = gradient + nu;
                    if (multiplier < mostNegative - scale)
                    {
                        mostNegative = multiplier;
                        release = i;
                    }
                }

                if (release < 0)
                {
                    break;
                }

                fixedAtZero[release] = false;
                continue;
            }

            // Move towards the sub-problem's minimum as far as w ≥ 0 allows.
            double step = 1;
            int blocking = -1;
            for (int r = 0; r < m; r++)
            {
                double direction = solution[r] - w[free[r]];
                if (direction < 0)
                {
                    double ratio = -w[free[r]] / direction;
                    if (ratio < step)
                    {
                        step = ratio;
                        blocking = free[r];
                    }
                }
            }

            for (int r = 0; r < m; r++)
            {
                w[free[r]] += step * (solution[r] - w[free[r]]);
            }

            if (blocking >= 0)
            {
                w[blocking] = 0;
                fixedAtZero[blocking] = true;
            }
        }

        double total = 0;
        for (int i = 0; i < k; i++)
        {
            w[i] = Math.Max(0, w[i]);
            total += w[i];
        }

        for (int i = 0; i < k; i++)
        {
            w[i] /= total;
        }

        return w;
    }
}
