namespace StudyPress.Statistics.FollowUp;

/// <summary>
/// The simple effect of one factor at one level of another: the F test that the factor's marginal
/// means are equal within that level, and the pairwise differences of those means.
/// </summary>
/// <param name="AtLevel">The level of the conditioning factor.</param>
/// <param name="Means">The marginal means compared (one per level of the tested factor, in level order).</param>
/// <param name="Df1">Numerator df: the number of levels compared minus one.</param>
/// <param name="Df2">Denominator df: the error's df.</param>
/// <param name="Pairs">The pairwise differences (first level minus second), adjusted within this level.</param>
public sealed record SimpleEffect(
    string AtLevel,
    IReadOnlyList<MarginalMean> Means,
    int Df1,
    double Df2,
    Quantity SumOfSquares,
    Quantity F,
    Quantity P,
    ContrastFamily Pairs);

/// <summary>
/// Simple effects of a factor B at each level of a factor A, from the estimated marginal means of
/// the A × B cells (<see cref="EstimatedMarginalMeans"/>) and their unit covariance V (so that the
/// means' covariance is σ² V), on an error mean square MSE with df degrees of freedom (Kirk 2013,
/// Experimental Design, 4th ed., sect. 9.6; Maxwell and Delaney 2004, ch. 7; Searle 1987, Linear
/// Models for Unbalanced Data, ch. 4 for the general linear hypothesis).
/// <para>
/// At level a, with m the k means of B there and C the (k - 1) x k matrix of differences from the
/// first level, the hypothesis C m = 0 is tested by the Wald (general linear hypothesis) statistic
/// SS = (C m)' (C V C')⁻¹ (C m), F = SS / ((k - 1) MSE) on (k - 1, df) degrees of freedom. SS does
/// not depend on which k - 1 independent contrasts are taken. For balanced data (n per cell, V =
/// I/n within a level) SS = n Σ_j (m_j - m̄)², the textbook sum of squares of B at a, and the F
/// test is the classical simple-effect test on the pooled error.
/// </para>
/// <para>
/// The pairwise differences m_i - m_j within level a are evaluated by <see cref="Contrasts.Evaluate"/>
/// on the same error with the given adjustment; the family is the pairs within one level of A.
/// Levels of B without a mean at level a (not possible for a complete crossing) are not compared.
/// A level of A with fewer than two means has no test and is left out.
/// </para>
/// </summary>
public static class SimpleEffects
{
    /// <summary>
    /// The simple effects of <paramref name="factor"/> at each level of <paramref name="at"/>, from
    /// <paramref name="cells"/> (the marginal means of the term made of exactly these two factors).
    /// </summary>
    public static IReadOnlyList<SimpleEffect> Compute(
        MarginalMeansTerm cells,
        string factor,
        string at,
        double mse,
        int df,
        ContrastAdjustment adjustment,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(cells);
        var fi = IndexOf(cells.Factors, factor);
        var ai = IndexOf(cells.Factors, at);
        if (cells.Factors.Count != 2 || fi == ai)
        {
            throw new ArgumentException("the cells must be those of the two factors' crossing", nameof(cells));
        }

        string? problem = df < 1
            ? "there are no error degrees of freedom"
            : !(mse > 0) || !double.IsFinite(mse) ? "the error mean square is not a positive finite number" : null;
        var result = new List<SimpleEffect>();
        var atLevels = new List<string>();
        foreach (var m in cells.Means)
        {
            if (!atLevels.Contains(m.Levels[ai]))
            {
                atLevels.Add(m.Levels[ai]);
            }
        }

        foreach (var level in atLevels)
        {
            var idx = Enumerable.Range(0, cells.Means.Count).Where(i => string.Equals(cells.Means[i].Levels[ai], level, StringComparison.Ordinal)).ToArray();
            var k = idx.Length;
            if (k < 2)
            {
                continue;
            }

            var means = idx.Select(i => cells.Means[i].Mean.Value).ToArray();
            var v = new double[k, k];
            for (var a = 0; a < k; a++)
            {
                for (var b = 0; b < k; b++)
                {
                    v[a, b] = cells.UnitCovariance[idx[a], idx[b]];
                }
            }

            // C m and C V C' for the differences from the first level.
            var q = k - 1;
            var cm = new double[q];
            var cvc = new double[q, q];
            for (var r = 0; r < q; r++)
            {
                cm[r] = means[r + 1] - means[0];
                for (var s = 0; s < q; s++)
                {
                    cvc[r, s] = v[r + 1, s + 1] - v[r + 1, 0] - v[0, s + 1] + v[0, 0];
                }
            }

            var ss = Quadratic(cvc, cm);
            Quantity f, p;
            if (problem is null)
            {
                var fv = ss / (q * mse);
                f = Quantity.Of(fv);
                p = Quantity.Of(Probability.FUpper(fv, q, df));
            }
            else
            {
                f = p = Quantity.Undefined(problem);
            }

            var specs = new List<ContrastSpec>();
            for (var a = 0; a < k; a++)
            {
                for (var b = a + 1; b < k; b++)
                {
                    var c = new double[k];
                    c[a] = 1;
                    c[b] = -1;
                    specs.Add(new ContrastSpec(cells.Means[idx[a]].Levels[fi] + " − " + cells.Means[idx[b]].Levels[fi], c));
                }
            }

            var pairs = Contrasts.Evaluate(means, v, mse, df, specs, adjustment, alpha);
            result.Add(new SimpleEffect(level, [.. idx.Select(i => cells.Means[i])], q, df, Quantity.Of(ss), f, p, pairs));
        }

        return result;
    }

    private static int IndexOf(IReadOnlyList<string> names, string name)
    {
        for (var i = 0; i < names.Count; i++)
        {
            if (string.Equals(names[i], name, StringComparison.Ordinal))
            {
                return i;
            }
        }

        throw new ArgumentException("'" + name + "' is not a factor of the cells", nameof(name));
    }

    /// <summary>x' A⁻¹ x for a symmetric positive definite A, by Cholesky.</summary>
    private static double Quadratic(double[,] a, double[] x)
    {
        var n = x.Length;
        var l = new double[n, n];
        for (var i = 0; i < n; i++)
        {
            for (var j = 0; j <= i; j++)
            {
                var s = a[i, j];
                for (var t = 0; t < j; t++)
                {
                    s -= l[i, t] * l[j, t];
                }

                if (i == j)
                {
                    if (!(s > 0))
                    {
                        throw new ArgumentException("the means' covariance is not positive definite", nameof(a));
                    }

                    l[i, i] = Math.Sqrt(s);
                }
                else
                {
                    l[i, j] = s / l[j, j];
                }
            }
        }

        // Solve L z = x; x' A⁻¹ x = z'z.
        double sum = 0;
        var z = new double[n];
        for (var i = 0; i < n; i++)
        {
            var s = x[i];
            for (var t = 0; t < i; t++)
            {
                s -= l[i, t] * z[t];
            }

            z[i] = s / l[i, i];
            sum += z[i] * z[i];
        }

        return sum;
    }
}
