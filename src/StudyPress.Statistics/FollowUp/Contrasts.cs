using System.Globalization;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.FollowUp;

/// <summary>How the p-values and intervals of a family of contrasts are adjusted for multiplicity.</summary>
public enum ContrastAdjustment
{
    /// <summary>No adjustment: each contrast at level alpha (adjusted p equals the raw p).</summary>
    None = 0,

    /// <summary>Holm (1979) step-down p-values; intervals at the Bonferroni level alpha/m (Holm has no matching intervals).</summary>
    Holm = 1,

    /// <summary>Bonferroni: p times m (capped at 1); intervals with t(1 - alpha/(2m); df).</summary>
    Bonferroni = 2,

    /// <summary>Scheffé (1953): simultaneous over every contrast of the k levels, p from F(t²/(k - 1); k - 1, df).</summary>
    Scheffe = 3,
}

/// <summary>A named contrast: one coefficient per level, in level order, summing to zero.</summary>
public sealed record ContrastSpec(string Name, IReadOnlyList<double> Coefficients);

/// <summary>
/// One evaluated contrast L = Σ c_i m_i. <paramref name="SumOfSquares"/> = L² / (c'Mc) and
/// <paramref name="F"/> = SS / MSE = t² (one numerator df), both on the error mean square.
/// <paramref name="PAdjusted"/> and the interval follow the family's adjustment.
/// </summary>
public sealed record ContrastEstimate(
    string Name,
    IReadOnlyList<double> Coefficients,
    double Estimate,
    Quantity Se,
    Quantity T,
    double Df,
    Quantity P,
    Quantity PAdjusted,
    Quantity CiLow,
    Quantity CiHigh,
    Quantity SumOfSquares,
    Quantity F);

/// <summary>
/// Orthogonality of two contrasts c and d: <paramref name="Unweighted"/> = Σ c_i d_i (orthogonal for
/// equal n when zero) and <paramref name="Weighted"/> = c'Md (for group means M = diag(1/n_i), so
/// Σ c_i d_i / n_i: the estimates are uncorrelated when it is zero). Each flag is true when the
/// value is zero within 1e-12 of the product of the two norms in the same metric.
/// </summary>
public sealed record ContrastOrthogonality(string First, string Second, double Unweighted, bool OrthogonalUnweighted, double Weighted, bool OrthogonalWeighted);

/// <summary>A family of contrasts on one set of means, with its adjustment and pairwise orthogonality.</summary>
/// <param name="CriticalValue">The multiplier of the SE for the intervals (t, Bonferroni t or Scheffé's sqrt((k - 1) F)).</param>
/// <param name="Method">The adjustment and the interval rule in words.</param>
public sealed record ContrastFamily(
    IReadOnlyList<ContrastEstimate> Contrasts,
    IReadOnlyList<ContrastOrthogonality> Orthogonality,
    ContrastAdjustment Adjustment,
    double Alpha,
    Quantity CriticalValue,
    string Method);

/// <summary>
/// Planned contrasts among level means (Scheffé 1959, The Analysis of Variance, ch. 3; Kirk 2013,
/// Experimental Design, 4th ed., ch. 5-6; Maxwell and Delaney 2004, ch. 4-5).
/// <para>
/// For means m (k levels) whose covariance is σ² M (group means: M = diag(1/n_i); estimated
/// marginal means: the rows of (X'X)⁻¹ in their coefficients, see EstimatedMarginalMeans.UnitCovariance),
/// σ² estimated by the error mean square MSE on df degrees of freedom, and coefficients c with
/// Σ c_i = 0: L = c'm, SE = sqrt(MSE c'Mc), t = L/SE on df, p = P(|T_df| &gt;= |t|) two-sided,
/// SS = L²/(c'Mc), F = SS/MSE = t². Interval L ± q SE with q the critical value of the adjustment:
/// none t(1 - alpha/2; df); Holm and Bonferroni t(1 - alpha/(2m); df) (simultaneous by Bonferroni's
/// inequality; Holm's step-down p-values have no matching intervals, so the Bonferroni ones are
/// given); Scheffé sqrt((k - 1) F(1 - alpha; k - 1, df)), simultaneous over all contrasts, with
/// adjusted p = P(F(k - 1, df) &gt;= t²/(k - 1)).
/// </para>
/// <para>
/// Checks: each coefficient vector has k finite entries, not all zero, and sums to zero within
/// 1e-12 of Σ |c_i| (relative); names are distinct. Results are undefined (with a reason) when the
/// error df is below 1 or MSE is not positive.
/// </para>
/// <para>
/// Orthogonal polynomial trends (<see cref="PolynomialTrends"/>): for numeric level values x_i,
/// possibly unequally spaced, with counts n_i, the polynomials P_0 = 1, P_1, ..., P_{k-1} orthogonal
/// in the inner product Σ n_i u(x_i) v(x_i) are built by Stieltjes' recurrence (each P_d is z P_{d-1}
/// made orthogonal to all earlier ones by modified Gram–Schmidt, applied twice, on the centred and
/// scaled values z), so that the mean coefficients c_i = n_i P_d(x_i) sum to zero and are pairwise
/// orthogonal in the 1/n metric. The trend sums of squares then partition the between-level sum
/// of squares exactly: Σ_d SS_d = Σ n_i (ȳ_i - ȳ)² (Kirk 2013, ch. 6; Robson 1959, "A simple method
/// for constructing orthogonal polynomials when the independent variable is unequally spaced",
/// Biometrics 15, 187-191). Coefficients are scaled so that the smallest non-zero |c_i| is 1 (for
/// equally spaced levels and equal n this gives the classical integer tables, e.g. -2, -1, 0, 1, 2),
/// with the highest power's sign positive.
/// </para>
/// </summary>
public static class Contrasts
{
    /// <summary>True when Σ c_i is zero within 1e-12 of Σ |c_i| and some c_i is not zero.</summary>
    public static bool SumsToZero(IReadOnlyList<double> coefficients)
    {
        ArgumentNullException.ThrowIfNull(coefficients);
        double sum = 0, abs = 0;
        foreach (var c in coefficients)
        {
            sum += c;
            abs += Math.Abs(c);
        }

        return abs > 0 && Math.Abs(sum) <= 1e-12 * abs;
    }

    /// <summary>
    /// Evaluates contrasts among group means with counts <paramref name="counts"/> (M = diag(1/n_i)),
    /// on the error mean square <paramref name="mse"/> with <paramref name="df"/> degrees of freedom.
    /// </summary>
    public static ContrastFamily OnGroupMeans(
        IReadOnlyList<double> means,
        IReadOnlyList<long> counts,
        double mse,
        int df,
        IReadOnlyList<ContrastSpec> contrasts,
        ContrastAdjustment adjustment,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(means);
        ArgumentNullException.ThrowIfNull(counts);
        if (counts.Count != means.Count)
        {
            throw new ArgumentException("means and counts differ in number", nameof(counts));
        }

        var k = means.Count;
        var inverse = new double[k];
        for (var i = 0; i < k; i++)
        {
            if (counts[i] < 1)
            {
                throw new ArgumentException("a level has no observations", nameof(counts));
            }

            inverse[i] = 1.0 / counts[i];
        }

        // M is diagonal: its quadratic forms cost O(k), and no k x k matrix is held (a factor may
        // have thousands of levels).
        double Diagonal(IReadOnlyList<double> a, IReadOnlyList<double> b)
        {
            double s = 0;
            for (var i = 0; i < a.Count; i++)
            {
                s += a[i] * inverse[i] * b[i];
            }

            return s;
        }

        return EvaluateWith(means, Diagonal, mse, df, contrasts, adjustment, alpha);
    }

    /// <summary>
    /// Evaluates contrasts among means with covariance MSE · <paramref name="unitCovariance"/> (k x k,
    /// symmetric positive definite), on <paramref name="df"/> error degrees of freedom.
    /// </summary>
    public static ContrastFamily Evaluate(
        IReadOnlyList<double> means,
        double[,] unitCovariance,
        double mse,
        int df,
        IReadOnlyList<ContrastSpec> contrasts,
        ContrastAdjustment adjustment,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(means);
        ArgumentNullException.ThrowIfNull(unitCovariance);
        ArgumentNullException.ThrowIfNull(contrasts);
        var k = means.Count;
        if (k < 2)
        {
            throw new ArgumentException("contrasts need at least two levels", nameof(means));
        }

        if (unitCovariance.GetLength(0) != k || unitCovariance.GetLength(1) != k)
        {
            throw new ArgumentException("the covariance matrix does not match the means", nameof(unitCovariance));
        }

        return EvaluateWith(means, (a, b) => Quadratic(a, unitCovariance, b), mse, df, contrasts, adjustment, alpha);
    }

    /// <summary>
    /// Orthogonality of every pair of contrasts: the plain coefficient product Σ aᵢbᵢ and the
    /// product weighted by the means' unit covariance a'Mb (<paramref name="quadratic"/>), each with
    /// whether it is zero within 1e-12 of the pair's norms.
    /// </summary>
    public static IReadOnlyList<ContrastOrthogonality> Orthogonality(IReadOnlyList<ContrastSpec> contrasts, Func<IReadOnlyList<double>, IReadOnlyList<double>, double> quadratic)
    {
        ArgumentNullException.ThrowIfNull(contrasts);
        ArgumentNullException.ThrowIfNull(quadratic);
        var pairs = new List<ContrastOrthogonality>();
        for (var a = 0; a < contrasts.Count; a++)
        {
            for (var b = a + 1; b < contrasts.Count; b++)
            {
                var ca = contrasts[a].Coefficients;
                var cb = contrasts[b].Coefficients;
                double plain = 0, na = 0, nb = 0;
                for (var i = 0; i < ca.Count; i++)
                {
                    plain += ca[i] * cb[i];
                    na += ca[i] * ca[i];
                    nb += cb[i] * cb[i];
                }

                var weighted = quadratic(ca, cb);
                pairs.Add(new ContrastOrthogonality(
                    contrasts[a].Name,
                    contrasts[b].Name,
                    plain,
                    Math.Abs(plain) <= 1e-12 * Math.Sqrt(na * nb),
                    weighted,
                    Math.Abs(weighted) <= 1e-12 * Math.Sqrt(quadratic(ca, ca) * quadratic(cb, cb))));
            }
        }

        return pairs;
    }

    /// <summary>The family on means whose unit covariance is given by its quadratic form a'Mb.</summary>
    private static ContrastFamily EvaluateWith(
        IReadOnlyList<double> means,
        Func<IReadOnlyList<double>, IReadOnlyList<double>, double> quadratic,
        double mse,
        int df,
        IReadOnlyList<ContrastSpec> contrasts,
        ContrastAdjustment adjustment,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(contrasts);
        var k = means.Count;
        if (k < 2)
        {
            throw new ArgumentException("contrasts need at least two levels", nameof(means));
        }

        if (contrasts.Count == 0)
        {
            throw new ArgumentException("no contrast given", nameof(contrasts));
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        if (!Enum.IsDefined(adjustment))
        {
            throw new ArgumentOutOfRangeException(nameof(adjustment));
        }

        var names = new HashSet<string>(StringComparer.Ordinal);
        foreach (var c in contrasts)
        {
            ArgumentNullException.ThrowIfNull(c);
            if (!names.Add(c.Name))
            {
                throw new ArgumentException("contrast '" + c.Name + "' is given twice", nameof(contrasts));
            }

            if (c.Coefficients.Count != k)
            {
                throw new ArgumentException(string.Create(CultureInfo.InvariantCulture, $"contrast '{c.Name}' has {c.Coefficients.Count} coefficients for {k} levels"), nameof(contrasts));
            }

            if (c.Coefficients.Any(v => !double.IsFinite(v)))
            {
                throw new ArgumentException("contrast '" + c.Name + "' has a coefficient that is not finite", nameof(contrasts));
            }

            if (!SumsToZero(c.Coefficients))
            {
                throw new ArgumentException("the coefficients of contrast '" + c.Name + "' do not sum to zero", nameof(contrasts));
            }
        }

        var count = contrasts.Count;
        string? problem = df < 1
            ? "there are no error degrees of freedom"
            : !(mse > 0) || !double.IsFinite(mse) ? "the error mean square is not a positive finite number" : null;
        var critical = problem is not null ? Quantity.Undefined(problem) : Quantity.Of(Critical(adjustment, alpha, count, k, df));
        var raw = new Quantity[count];
        var rows = new (double L, double V)[count];
        for (var j = 0; j < count; j++)
        {
            var c = contrasts[j].Coefficients;
            double l = 0;
            for (var i = 0; i < k; i++)
            {
                l += c[i] * means[i];
            }

            var v = quadratic(c, c);
            if (!(v > 0))
            {
                throw new ArgumentException("contrast '" + contrasts[j].Name + "' has no variance (the covariance matrix is not positive definite)", nameof(means));
            }

            rows[j] = (l, v);
            raw[j] = problem is null ? Quantity.Of(Probability.TTwoSided(l / Math.Sqrt(mse * v), df)) : Quantity.Undefined(problem);
        }

        var adjusted = problem is not null ? raw : Adjust(raw, rows, mse, adjustment, k, df);
        var list = new List<ContrastEstimate>(count);
        for (var j = 0; j < count; j++)
        {
            var (l, v) = rows[j];
            var ss = l * l / v;
            if (problem is not null)
            {
                var u = Quantity.Undefined(problem);
                list.Add(new ContrastEstimate(contrasts[j].Name, contrasts[j].Coefficients, l, u, u, df, u, u, u, u, Quantity.Of(ss), u));
                continue;
            }

            var se = Math.Sqrt(mse * v);
            var half = critical.Value * se;
            list.Add(new ContrastEstimate(
                contrasts[j].Name,
                contrasts[j].Coefficients,
                l,
                Quantity.Of(se),
                Quantity.Of(l / se),
                df,
                raw[j],
                adjusted[j],
                Quantity.Of(l - half),
                Quantity.Of(l + half),
                Quantity.Of(ss),
                Quantity.Of(ss / mse)));
        }

        var pairs = Orthogonality(contrasts, quadratic);
        return new ContrastFamily(list, pairs, adjustment, alpha, critical, Describe(adjustment, count, k));
    }

    /// <summary>
    /// The orthogonal polynomial trend contrasts (degrees 1 .. <paramref name="maxDegree"/>, at most
    /// k - 1) for levels with numeric <paramref name="values"/> (distinct, any spacing, any order)
    /// and <paramref name="counts"/>, named "linear", "quadratic", "cubic", "quartic", then "degree d".
    /// See the class summary for the construction and scaling.
    /// </summary>
    public static IReadOnlyList<ContrastSpec> PolynomialTrends(IReadOnlyList<double> values, IReadOnlyList<long> counts, int maxDegree)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentNullException.ThrowIfNull(counts);
        var k = values.Count;
        if (counts.Count != k)
        {
            throw new ArgumentException("values and counts differ in number", nameof(counts));
        }

        if (k < 2)
        {
            throw new ArgumentException("a trend needs at least two levels", nameof(values));
        }

        if (values.Any(v => !double.IsFinite(v)) || values.Distinct().Count() != k)
        {
            throw new ArgumentException("the level values must be finite and distinct", nameof(values));
        }

        if (counts.Any(n => n < 1))
        {
            throw new ArgumentException("a level has no observations", nameof(counts));
        }

        if (maxDegree < 1 || maxDegree > k - 1)
        {
            throw new ArgumentOutOfRangeException(nameof(maxDegree), "the degree must lie between 1 and the number of levels minus 1");
        }

        // Weighted centre and scale keep the powers of z within [-1, 1].
        double total = 0, centre = 0;
        for (var i = 0; i < k; i++)
        {
            total += counts[i];
            centre += counts[i] * values[i];
        }

        centre /= total;
        var scale = values.Max(v => Math.Abs(v - centre));
        var z = values.Select(v => (v - centre) / scale).ToArray();
        var w = counts.Select(n => (double)n).ToArray();
        var basis = new List<double[]> { Normalise(Enumerable.Repeat(1.0, k).ToArray(), w) };
        var result = new List<ContrastSpec>(maxDegree);
        for (var d = 1; d <= maxDegree; d++)
        {
            var prev = basis[d - 1];
            var p = new double[k];
            for (var i = 0; i < k; i++)
            {
                p[i] = z[i] * prev[i];
            }

            for (var pass = 0; pass < 2; pass++)
            {
                foreach (var q in basis)
                {
                    var proj = Dot(p, q, w);
                    for (var i = 0; i < k; i++)
                    {
                        p[i] -= proj * q[i];
                    }
                }
            }

            p = Normalise(p, w);
            basis.Add(p);
            var c = new double[k];
            for (var i = 0; i < k; i++)
            {
                c[i] = w[i] * p[i];
            }

            var max = c.Max(Math.Abs);
            var smallest = double.PositiveInfinity;
            for (var i = 0; i < k; i++)
            {
                // Only rounding noise (a few ulps of the largest) is taken for an exact zero, so that
                // the remaining coefficients still sum to zero within the 1e-12 check.
                if (Math.Abs(c[i]) <= 1e-14 * max)
                {
                    c[i] = 0;
                }
                else
                {
                    smallest = Math.Min(smallest, Math.Abs(c[i]));
                }
            }

            for (var i = 0; i < k; i++)
            {
                c[i] /= smallest;
            }

            result.Add(new ContrastSpec(TrendName(d), c));
        }

        return result;
    }

    /// <summary>"linear", "quadratic", "cubic", "quartic", then "degree d".</summary>
    public static string TrendName(int degree) => degree switch
    {
        1 => "linear",
        2 => "quadratic",
        3 => "cubic",
        4 => "quartic",
        _ => string.Create(CultureInfo.InvariantCulture, $"degree {degree}"),
    };

    /// <summary>
    /// All k - 1 orthogonal polynomial trends of group means (or the first <paramref name="maxDegree"/>),
    /// evaluated on the error mean square: each with SS, F = SS/MSE, p; with every degree their SS
    /// add up to the between-level SS.
    /// </summary>
    public static ContrastFamily Trends(
        IReadOnlyList<double> values,
        IReadOnlyList<double> means,
        IReadOnlyList<long> counts,
        double mse,
        int df,
        int maxDegree,
        ContrastAdjustment adjustment,
        double alpha) =>
        OnGroupMeans(means, counts, mse, df, PolynomialTrends(values, counts, maxDegree), adjustment, alpha);

    private static double Critical(ContrastAdjustment adjustment, double alpha, int m, int k, int df) => adjustment switch
    {
        ContrastAdjustment.None => Probability.TCritical(alpha, df),
        ContrastAdjustment.Holm or ContrastAdjustment.Bonferroni => Probability.TCritical(alpha / m, df),
        ContrastAdjustment.Scheffe => Math.Sqrt((k - 1) * Probability.FCritical(alpha, k - 1, df)),
        _ => throw new ArgumentOutOfRangeException(nameof(adjustment)),
    };

    private static Quantity[] Adjust(Quantity[] raw, (double L, double V)[] rows, double mse, ContrastAdjustment adjustment, int k, int df)
    {
        switch (adjustment)
        {
            case ContrastAdjustment.None:
                return raw;
            case ContrastAdjustment.Holm:
                return PValueAdjustment.Adjust(raw, PValueAdjustmentMethod.Holm);
            case ContrastAdjustment.Bonferroni:
                return PValueAdjustment.Adjust(raw, PValueAdjustmentMethod.Bonferroni);
            default:
                return [.. rows.Select(r => Quantity.Of(Probability.FUpper(r.L * r.L / (mse * r.V) / (k - 1), k - 1, df)))];
        }
    }

    private static string Describe(ContrastAdjustment adjustment, int m, int k) => adjustment switch
    {
        ContrastAdjustment.None => "no multiplicity adjustment; t intervals at 1 - alpha",
        ContrastAdjustment.Holm => string.Create(CultureInfo.InvariantCulture, $"Holm step-down adjustment over {m} contrasts; Bonferroni intervals (t at alpha/{m})"),
        ContrastAdjustment.Bonferroni => string.Create(CultureInfo.InvariantCulture, $"Bonferroni adjustment over {m} contrasts; intervals with t at alpha/{m}"),
        _ => string.Create(CultureInfo.InvariantCulture, $"Scheffé adjustment over all contrasts of {k} levels (F on {k - 1} and the error df)"),
    };

    /// <summary>
    /// The joint (Wald) sum of squares of several contrasts c_1..c_q among means with unit
    /// covariance M: SS = L' (C M C')⁻¹ L, L = C m, on q df (F = SS / q / MSE). For contrasts
    /// uncorrelated in M it is the sum of their single SS; for a full set of k − 1 independent
    /// contrasts of estimated marginal means it is the sum of squares of the hypothesis that the
    /// means are equal (the factor's marginal, type 3, sum of squares in a full-rank model).
    /// Solved by Cholesky of C M C' (throws when the contrasts are linearly dependent).
    /// </summary>
    public static double JointSumOfSquares(IReadOnlyList<double> means, double[,] unitCovariance, IReadOnlyList<ContrastSpec> contrasts)
    {
        ArgumentNullException.ThrowIfNull(means);
        ArgumentNullException.ThrowIfNull(unitCovariance);
        ArgumentNullException.ThrowIfNull(contrasts);
        var q = contrasts.Count;
        if (q == 0 || contrasts.Any(c => c.Coefficients.Count != means.Count))
        {
            throw new ArgumentException("one or more contrasts over the means are needed", nameof(contrasts));
        }

        var l = contrasts.Select(c => c.Coefficients.Select((v, i) => v * means[i]).Sum()).ToArray();
        var a = new double[q, q];
        for (var i = 0; i < q; i++)
        {
            for (var j = 0; j <= i; j++)
            {
                a[i, j] = a[j, i] = Quadratic(contrasts[i].Coefficients, unitCovariance, contrasts[j].Coefficients);
            }
        }

        // Cholesky A = G G', then SS = |G⁻¹ L|².
        var g = new double[q, q];
        for (var i = 0; i < q; i++)
        {
            for (var j = 0; j <= i; j++)
            {
                var sum = a[i, j];
                for (var r = 0; r < j; r++)
                {
                    sum -= g[i, r] * g[j, r];
                }

                if (i == j)
                {
                    if (!(sum > 1e-12 * Math.Abs(a[i, i])))
                    {
                        throw new ArgumentException("the contrasts are linearly dependent", nameof(contrasts));
                    }

                    g[i, i] = Math.Sqrt(sum);
                }
                else
                {
                    g[i, j] = sum / g[j, j];
                }
            }
        }

        double ss = 0;
        var z = new double[q];
        for (var i = 0; i < q; i++)
        {
            var sum = l[i];
            for (var r = 0; r < i; r++)
            {
                sum -= g[i, r] * z[r];
            }

            z[i] = sum / g[i, i];
            ss += z[i] * z[i];
        }

        return ss;
    }

    private static double Quadratic(IReadOnlyList<double> a, double[,] m, IReadOnlyList<double> b)
    {
        var k = a.Count;
        double s = 0;
        for (var i = 0; i < k; i++)
        {
            double row = 0;
            for (var j = 0; j < k; j++)
            {
                row += m[i, j] * b[j];
            }

            s += a[i] * row;
        }

        return s;
    }

    private static double Dot(double[] a, double[] b, double[] w)
    {
        double s = 0;
        for (var i = 0; i < a.Length; i++)
        {
            s += w[i] * a[i] * b[i];
        }

        return s;
    }

    private static double[] Normalise(double[] v, double[] w)
    {
        var norm = Math.Sqrt(Dot(v, v, w));
        if (!(norm > 0))
        {
            throw new ArgumentException("the level values do not support a polynomial of this degree");
        }

        return [.. v.Select(x => x / norm)];
    }
}
