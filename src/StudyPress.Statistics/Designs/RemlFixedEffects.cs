using MathNet.Numerics.LinearAlgebra;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Designs;

/// <summary>A fixed treatment term of a REML fit: its factors (in the term's order) and its columns in β̂.</summary>
public sealed record RemlFixedTerm(string Name, IReadOnlyList<string> Factors, int Start, int Count);

/// <summary>A linear combination l'β̂ of a REML fit: estimate, standard error √(l'Cov(β̂)l) and Satterthwaite df.</summary>
public sealed record RemlEstimate(double Estimate, Quantity Se, Quantity Df);

/// <summary>The Wald F test of several combinations Lβ̂ = 0 with its Satterthwaite denominator df.</summary>
public sealed record RemlWaldTest(int NumeratorDf, Quantity F, Quantity DfDenominator, Quantity P);

/// <summary>
/// The fixed effects of one REML fit (<see cref="MixedModel"/>), for the views over it: β̂ in the
/// fit's sum-to-zero coding, Cov(β̂) = σ²_e [S⁻¹]_XX, the inverse expected information A of the
/// variance parameters not at zero, and the gradient g(l) of l'Cov(β̂)l in those parameters
/// (g_j = w'V_j w, w = V⁻¹X Cov(β̂) l; Fai and Cornelius 1996; Kuznetsova, Brockhoff and
/// Christensen 2017), the same quantities the fit's F tests use.
/// <para>
/// Estimated marginal means (<see cref="MeanRow"/>): the predicted cell mean averaged with equal
/// weight over the levels of the treatment factors not in the mean's term. In the sum-to-zero
/// coding each factor's coding rows sum to zero over its levels, so the average keeps the intercept
/// and the columns of the terms whose factors all belong to the mean's term: the coefficient row is
/// the cell's coding row (the Kronecker product of its factors' coding rows, first factor
/// outermost, as the fit builds its columns) with every other term's columns zero; the random
/// effects are at their mean, zero.
/// </para>
/// <para>
/// Any combination l'β̂ (<see cref="Combination"/>): SE = √(l'Cov(β̂)l), df ν = 2 (l'Cov l)² / (g'Ag)
/// (Satterthwaite 1946, as set out for mixed models by the two papers above). Several combinations
/// (<see cref="Wald"/>): F = (Lβ̂)'(L Cov L')⁻¹(Lβ̂)/q with ν_i of the eigen-directions of L Cov L',
/// E = Σ ν_i/(ν_i − 2), ν = 2E/(E − q), exactly the rule of the fit's F tests. On balanced data with
/// every variance estimate inside the parameter space these equal the classical strata's means,
/// standard errors and error df (tested).
/// </para>
/// </summary>
public sealed class RemlFixedEffects
{
    private readonly double[] beta;
    private readonly double[,] cov;
    private readonly double[,] parameterCov;
    private readonly Func<double[], double[]> gradient;
    private readonly Dictionary<string, string[]> levels;

    internal RemlFixedEffects(
        double[] beta,
        double[,] cov,
        double[,] parameterCov,
        IReadOnlyList<string> parameters,
        double shift,
        IReadOnlyList<RemlFixedTerm> terms,
        Dictionary<string, string[]> levels,
        Func<double[], double[]> gradient)
    {
        this.beta = beta;
        this.cov = cov;
        this.parameterCov = parameterCov;
        this.gradient = gradient;
        this.levels = new Dictionary<string, string[]>(levels, StringComparer.Ordinal);
        Parameters = parameters;
        Shift = shift;
        Terms = terms;
    }

    /// <summary>The number of fixed-effect columns (intercept first).</summary>
    public int Count => beta.Length;

    /// <summary>The variance parameters not at zero (random terms, then the residual): the order of the gradient.</summary>
    public IReadOnlyList<string> Parameters { get; }

    /// <summary>The response mean the fit removed before fitting (added back to every mean).</summary>
    public double Shift { get; }

    /// <summary>The fixed treatment terms and their columns.</summary>
    public IReadOnlyList<RemlFixedTerm> Terms { get; }

    /// <summary>β̂, a copy.</summary>
    public double[] Beta => (double[])beta.Clone();

    /// <summary>Cov(β̂), a copy.</summary>
    public double[,] BetaCovariance => (double[,])cov.Clone();

    /// <summary>The levels of a treatment factor in the coding order of the fit (order of first appearance).</summary>
    public IReadOnlyList<string> Levels(string factor) =>
        levels.TryGetValue(factor, out var l) ? l : throw new KeyNotFoundException("no treatment factor " + factor);

    /// <summary>
    /// The coefficient row of the estimated marginal mean of the cell <paramref name="cell"/> of
    /// <paramref name="factors"/> (one level per factor); see the class summary.
    /// </summary>
    public double[] MeanRow(IReadOnlyList<string> factors, IReadOnlyList<string> cell)
    {
        ArgumentNullException.ThrowIfNull(factors);
        ArgumentNullException.ThrowIfNull(cell);
        if (factors.Count != cell.Count)
        {
            throw new ArgumentException("one level per factor is needed", nameof(cell));
        }

        var row = new double[beta.Length];
        row[0] = 1;
        foreach (var t in Terms)
        {
            if (!t.Factors.All(f => factors.Contains(f, StringComparer.Ordinal)))
            {
                continue;
            }

            double[] prod = [1.0];
            foreach (var f in t.Factors)
            {
                var lv = levels.TryGetValue(f, out var known) ? known : throw new KeyNotFoundException("no treatment factor " + f);
                var li = Array.IndexOf(lv, cell[IndexOf(factors, f)]);
                if (li < 0)
                {
                    throw new ArgumentException("'" + cell[IndexOf(factors, f)] + "' is not a level of " + f, nameof(cell));
                }

                var code = new double[lv.Length - 1];
                for (var c = 0; c < code.Length; c++)
                {
                    code[c] = li == c ? 1 : li == lv.Length - 1 ? -1 : 0;
                }

                prod = [.. prod.SelectMany(a => code.Select(b => a * b))];
            }

            Array.Copy(prod, 0, row, t.Start, t.Count);
        }

        return row;
    }

    /// <summary>l'β̂ with its SE and Satterthwaite df (no shift: for differences and contrasts).</summary>
    public RemlEstimate Combination(IReadOnlyList<double> l)
    {
        ArgumentNullException.ThrowIfNull(l);
        var lv = Check(l);
        var estimate = 0.0;
        for (var i = 0; i < lv.Length; i++)
        {
            estimate += lv[i] * beta[i];
        }

        var variance = Form(lv, lv);
        if (!(variance > 0) || !double.IsFinite(variance))
        {
            var u = Quantity.Undefined("the combination has no variance in this fit");
            return new RemlEstimate(estimate, u, u);
        }

        return new RemlEstimate(estimate, Quantity.Of(Math.Sqrt(variance)), Satterthwaite(lv, variance));
    }

    /// <summary>The estimated marginal mean of a row from <see cref="MeanRow"/> (the shift added back), with its (1 − α) interval.</summary>
    public (RemlEstimate Mean, Quantity Low, Quantity High) Mean(double[] row, double alpha)
    {
        var e = Combination(row);
        var mean = e with { Estimate = e.Estimate + Shift };
        if (!e.Se.IsDefined || !e.Df.IsDefined)
        {
            var u = Quantity.Undefined(e.Df.Reason ?? e.Se.Reason ?? "not defined");
            return (mean, u, u);
        }

        var half = Probability.TCritical(alpha, e.Df.Value) * e.Se.Value;
        return (mean, Quantity.Of(mean.Estimate - half), Quantity.Of(mean.Estimate + half));
    }

    /// <summary>The covariance matrix of several combinations, L Cov(β̂) L'.</summary>
    public double[,] Covariance(IReadOnlyList<IReadOnlyList<double>> rows)
    {
        ArgumentNullException.ThrowIfNull(rows);
        var ls = rows.Select(Check).ToArray();
        var c = new double[ls.Length, ls.Length];
        for (var a = 0; a < ls.Length; a++)
        {
            for (var b = a; b < ls.Length; b++)
            {
                c[a, b] = c[b, a] = Form(ls[a], ls[b]);
            }
        }

        return c;
    }

    /// <summary>The Wald F test of Lβ̂ = 0 (rows linearly independent) with its Satterthwaite df (class summary).</summary>
    public RemlWaldTest Wald(IReadOnlyList<IReadOnlyList<double>> rows)
    {
        ArgumentNullException.ThrowIfNull(rows);
        var q = rows.Count;
        var ls = rows.Select(Check).ToArray();
        var lc = Matrix<double>.Build.DenseOfArray(Covariance(rows));
        var lb = Vector<double>.Build.Dense(q, i => ls[i].Select((v, j) => v * beta[j]).Sum());
        var evd = lc.Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Symmetric);
        if (!(evd.EigenValues.Real().Minimum() > 1e-12 * Math.Max(evd.EigenValues.Real().Maximum(), double.Epsilon)))
        {
            var u = Quantity.Undefined("the differences tested are not estimable independently in this fit");
            return new RemlWaldTest(q, u, u, u);
        }

        var f = lb.DotProduct(lc.Solve(lb)) / q;
        var nus = new double[q];
        for (var i = 0; i < q; i++)
        {
            var d = evd.EigenValues[i].Real;
            var u = evd.EigenVectors.Column(i);
            var l = new double[beta.Length];
            for (var r = 0; r < q; r++)
            {
                for (var j = 0; j < l.Length; j++)
                {
                    l[j] += u[r] * ls[r][j];
                }
            }

            var g = gradient(l);
            nus[i] = 2 * d * d / Quadratic(g);
        }

        Quantity df;
        if (nus.All(v => double.IsFinite(v) && v > 0) && (q == 1 || nus.Max() - nus.Min() <= 1e-9 * nus.Max()))
        {
            df = Quantity.Of(nus.Average());
        }
        else
        {
            var e = nus.Where(v => v > 2).Sum(v => v / (v - 2));
            df = nus.All(v => v > 2) && e > q
                ? Quantity.Of(2 * e / (e - q))
                : Quantity.Undefined("the Satterthwaite df is not defined for this test (a direction of its hypothesis has 2 df or fewer)");
        }

        var p = df.IsDefined ? Quantity.Of(Probability.FUpper(f, q, df.Value)) : df;
        return new RemlWaldTest(q, Quantity.Of(f), df, p);
    }

    private Quantity Satterthwaite(double[] l, double variance)
    {
        var g = gradient(l);
        var denominator = Quadratic(g);
        var nu = 2 * variance * variance / denominator;
        return denominator > 0 && double.IsFinite(nu)
            ? Quantity.Of(nu)
            : Quantity.Undefined("the Satterthwaite df is not defined (the variance of this estimate does not depend on the variance estimates)");
    }

    private double Quadratic(double[] g)
    {
        var s = 0.0;
        for (var a = 0; a < g.Length; a++)
        {
            for (var b = 0; b < g.Length; b++)
            {
                s += g[a] * parameterCov[a, b] * g[b];
            }
        }

        return s;
    }

    private double Form(double[] a, double[] b)
    {
        var s = 0.0;
        for (var i = 0; i < a.Length; i++)
        {
            if (a[i] == 0)
            {
                continue;
            }

            var row = 0.0;
            for (var j = 0; j < b.Length; j++)
            {
                row += cov[i, j] * b[j];
            }

            s += a[i] * row;
        }

        return s;
    }

    private double[] Check(IReadOnlyList<double> l)
    {
        if (l.Count != beta.Length)
        {
            throw new ArgumentException("a combination needs one coefficient per fixed-effect column", nameof(l));
        }

        return [.. l];
    }

    private static int IndexOf(IReadOnlyList<string> list, string item)
    {
        for (var i = 0; i < list.Count; i++)
        {
            if (string.Equals(list[i], item, StringComparison.Ordinal))
            {
                return i;
            }
        }

        return -1;
    }
}

/// <summary>One comparison of two estimated marginal means of a REML fit (Diff = a − b), with its own Satterthwaite df.</summary>
public sealed record RemlComparison(string LevelA, string LevelB, double Diff, Quantity Se, Quantity T, Quantity Df, Quantity P, Quantity PAdjusted, Quantity CiLow, Quantity CiHigh);

/// <summary>How a family of pairwise differences of REML marginal means is adjusted.</summary>
public enum RemlPairAdjustment
{
    /// <summary>Tukey–Kramer: p = P(Q_{k,ν} ≥ √2 |t|) and interval Diff ± q_{α;k,ν}/√2 · SE, ν each pair's own Satterthwaite df.</summary>
    TukeyKramer,

    /// <summary>Holm step-down p-values of the t tests (each on its own df); Bonferroni intervals.</summary>
    Holm,

    /// <summary>Bonferroni p-values (p × m, capped at 1) and intervals.</summary>
    Bonferroni,

    /// <summary>No adjustment (one comparison, or asked for).</summary>
    None,
}

/// <summary>Comparisons with a control from a REML fit: the comparisons, the common df, the critical value and the multivariate t error estimate.</summary>
public sealed record RemlControlComparisons(IReadOnlyList<RemlComparison> Comparisons, double Df, Quantity CriticalValue, double Error)
{
    /// <summary>False when a multivariate t probability missed <see cref="AdjustedComparisons.RequiredAccuracy"/> within the work limit (<see cref="AdjustedComparisons.ManyToOne"/>): <see cref="Comparisons"/> is empty.</summary>
    public bool Accurate { get; init; } = true;
}

/// <summary>
/// Comparisons of the estimated marginal means of a REML fit (<see cref="RemlFixedEffects"/>): each
/// difference is a combination of β̂ with its own SE and Satterthwaite df.
/// <para>
/// Pairwise (<see cref="Pairwise"/>): t = Diff/SE on the pair's df; Tukey–Kramer with the studentized
/// range of the k means on that df (Kramer 1956; with unequal df an approximation, the one the
/// lmerTest/emmeans-style analyses of mixed models use), Holm or Bonferroni.
/// </para>
/// <para>
/// With a control (<see cref="WithControl"/>; Dunnett 1955; Hochberg and Tamhane 1987, ch. 3): the
/// differences (level − control) are multivariate t with the correlations of their covariance
/// L Cov(β̂) L', on ONE df: the smallest Satterthwaite df of the comparisons (conservative when
/// they differ; on balanced data they are equal, the error df of the strata). Probabilities by
/// <see cref="MultivariateT"/> (Genz–Bretz quasi-Monte Carlo, fixed seed), kept within the
/// Bonferroni bounds; the critical value solves p(c) = α by Brent's method between the single and
/// the Bonferroni t quantiles.
/// </para>
/// </summary>
public static class RemlComparisons
{
    /// <summary>Every pair a &lt; b of <paramref name="rows"/> (the means' coefficient rows, in level order).</summary>
    public static IReadOnlyList<RemlComparison> Pairwise(RemlFixedEffects fit, IReadOnlyList<string> levels, IReadOnlyList<double[]> rows, RemlPairAdjustment adjustment, double alpha)
    {
        ArgumentNullException.ThrowIfNull(fit);
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(rows);
        var k = rows.Count;
        var pairs = new List<(int A, int B, RemlEstimate E)>();
        for (var a = 0; a < k; a++)
        {
            for (var b = a + 1; b < k; b++)
            {
                pairs.Add((a, b, fit.Combination(Difference(rows[a], rows[b]))));
            }
        }

        return Adjust(pairs.Select(p => (levels[p.A], levels[p.B], p.E)).ToList(), adjustment, alpha, k);
    }

    /// <summary>Adjusts a family of differences (each with its SE and df); <paramref name="k"/> is the number of means for Tukey–Kramer.</summary>
    public static IReadOnlyList<RemlComparison> Adjust(IReadOnlyList<(string A, string B, RemlEstimate E)> pairs, RemlPairAdjustment adjustment, double alpha, int k)
    {
        ArgumentNullException.ThrowIfNull(pairs);
        var m = pairs.Count;
        var raw = pairs.Select(p => p.E.Se.IsDefined && p.E.Df.IsDefined ? Probability.TTwoSided(p.E.Estimate / p.E.Se.Value, p.E.Df.Value) : double.NaN).ToArray();
        var defined = raw.Where(double.IsFinite).ToArray();
        var holm = adjustment == RemlPairAdjustment.Holm && defined.Length > 0 ? PValueAdjustment.Holm(defined) : [];
        var tukeyQuantile = adjustment == RemlPairAdjustment.TukeyKramer
            ? TukeyQuantiles(alpha, k, [.. pairs.Where((_, i) => double.IsFinite(raw[i])).Select(p => p.E.Df.Value)])
            : null;
        var list = new List<RemlComparison>(m);
        var h = 0;
        for (var i = 0; i < m; i++)
        {
            var (a, b, e) = pairs[i];
            if (!double.IsFinite(raw[i]))
            {
                var u = Quantity.Undefined(e.Df.Reason ?? e.Se.Reason ?? "not defined");
                list.Add(new RemlComparison(a, b, e.Estimate, e.Se, u, e.Df, u, u, u, u));
                continue;
            }

            var se = e.Se.Value;
            var df = e.Df.Value;
            var t = e.Estimate / se;
            double adjusted, multiplier;
            switch (adjustment)
            {
                case RemlPairAdjustment.TukeyKramer:
                    adjusted = StudentizedRange.Upper(Math.Sqrt(2.0) * Math.Abs(t), k, df);
                    multiplier = tukeyQuantile!(df) / Math.Sqrt(2.0);
                    break;
                case RemlPairAdjustment.Holm:
                    adjusted = holm[h];
                    multiplier = Probability.TCritical(alpha / m, df);
                    break;
                case RemlPairAdjustment.Bonferroni:
                    adjusted = raw[i] * m;
                    multiplier = Probability.TCritical(alpha / m, df);
                    break;
                default:
                    adjusted = raw[i];
                    multiplier = Probability.TCritical(alpha, df);
                    break;
            }

            h++;
            list.Add(new RemlComparison(a, b, e.Estimate, e.Se, Quantity.Of(t), e.Df, Quantity.Of(raw[i]), Quantity.Of(Math.Min(1.0, adjusted)), Quantity.Of(e.Estimate - (multiplier * se)), Quantity.Of(e.Estimate + (multiplier * se))));
        }

        return list;
    }

    /// <summary>Most distinct df whose studentized range quantiles <see cref="TukeyQuantiles"/> computes one by one.</summary>
    public const int DirectQuantiles = 8;

    /// <summary>Chebyshev nodes of the quantile's interpolation in 1/ν.</summary>
    public const int QuantileNodes = 16;

    /// <summary>
    /// q(α; k, ν) for every ν of <paramref name="dfs"/>: each computed (<see cref="StudentizedRange.UpperQuantile"/>)
    /// when there are at most <see cref="DirectQuantiles"/> distinct values, else interpolated in
    /// x = 1/ν, where the quantile is smooth (analytic for ν ≥ 1), by the barycentric formula on
    /// <see cref="QuantileNodes"/> Chebyshev points of [1/ν_max, 1/ν_min] (Berrut and Trefethen 2004,
    /// SIAM Review 46, 501-517): a fixed number of quantile evaluations however many pairs
    /// (each costs about as much as ten probabilities), with error below 1e-9 relative on the
    /// ranges tested (RemlFixedEffectsTests).
    /// </summary>
    public static Func<double, double> TukeyQuantiles(double alpha, int k, IReadOnlyList<double> dfs)
    {
        ArgumentNullException.ThrowIfNull(dfs);
        var distinct = dfs.Distinct().ToArray();
        if (distinct.Length <= DirectQuantiles)
        {
            var direct = distinct.ToDictionary(v => v, v => StudentizedRange.UpperQuantile(alpha, k, v));
            return v => direct.TryGetValue(v, out var q) ? q : StudentizedRange.UpperQuantile(alpha, k, v);
        }

        double lo = 1 / distinct.Max(), hi = 1 / distinct.Min();
        var n = QuantileNodes;
        var nodes = new double[n];
        var values = new double[n];
        var weights = new double[n];
        for (var j = 0; j < n; j++)
        {
            var angle = (2 * j + 1) * Math.PI / (2 * n);
            nodes[j] = (0.5 * (lo + hi)) + (0.5 * (hi - lo) * Math.Cos(angle));
            values[j] = StudentizedRange.UpperQuantile(alpha, k, 1 / nodes[j]);
            weights[j] = (j % 2 == 0 ? 1 : -1) * Math.Sin(angle);
        }

        return v =>
        {
            var x = 1 / v;
            double num = 0, den = 0;
            for (var j = 0; j < n; j++)
            {
                if (x == nodes[j])
                {
                    return values[j];
                }

                var w = weights[j] / (x - nodes[j]);
                num += w * values[j];
                den += w;
            }

            return num / den;
        };
    }

    /// <summary>Every other level against <paramref name="control"/> (index into <paramref name="rows"/>); see the class summary.</summary>
    public static RemlControlComparisons WithControl(RemlFixedEffects fit, IReadOnlyList<string> levels, IReadOnlyList<double[]> rows, int control, DunnettAlternative direction, double alpha)
    {
        ArgumentNullException.ThrowIfNull(fit);
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(rows);
        var twoSided = direction == DunnettAlternative.TwoSided;
        if (!(alpha > 0 && alpha < (twoSided ? 1.0 : 0.5)))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), twoSided ? "alpha must lie in (0, 1)" : "a one-sided alpha must lie in (0, 1/2)");
        }

        var others = Enumerable.Range(0, rows.Count).Where(i => i != control).ToArray();
        var m = others.Length;
        var diffRows = others.Select(i => Difference(rows[i], rows[control])).ToArray();
        var est = diffRows.Select(fit.Combination).ToArray();
        if (est.Any(e => !e.Se.IsDefined || !e.Df.IsDefined))
        {
            var bad = est.First(e => !e.Se.IsDefined || !e.Df.IsDefined);
            var u = Quantity.Undefined(bad.Se.Reason ?? bad.Df.Reason!);
            return new RemlControlComparisons([.. others.Select((i, q) => new RemlComparison(levels[i], levels[control], est[q].Estimate, est[q].Se, u, est[q].Df, u, u, u, u))], double.NaN, u, 0);
        }

        var df = est.Min(e => e.Df.Value);
        var se = est.Select(e => e.Se.Value).ToArray();
        var t = est.Select((e, q) => e.Estimate / se[q]).ToArray();
        var raw = t.Select(v => twoSided ? Probability.TTwoSided(v, df) : Equivalence.UpperTail(direction == DunnettAlternative.Greater ? v : -v, df)).ToArray();
        double[,]? r = null;
        if (m > 1)
        {
            var c = fit.Covariance(diffRows);
            r = new double[m, m];
            for (var i = 0; i < m; i++)
            {
                for (var j = 0; j < m; j++)
                {
                    r[i, j] = i == j ? 1.0 : c[i, j] / Math.Sqrt(c[i, i] * c[j, j]);
                }
            }
        }

        // The same many-to-one probabilities as the comparisons of adjusted means, on the smallest df.
        var probabilities = AdjustedComparisons.ManyToOne(r, df, t, direction, alpha);
        if (!probabilities.Accurate)
        {
            var missed = Quantity.Undefined("the multivariate t probabilities did not reach the required accuracy within the work limit");
            return new RemlControlComparisons([], df, missed, probabilities.Error) { Accurate = false };
        }

        var adjusted = probabilities.Adjusted;
        var critical = probabilities.Critical;
        var open = Quantity.Undefined(direction == DunnettAlternative.Greater ? "a one-sided (greater) interval has no upper limit" : "a one-sided (less) interval has no lower limit");
        var list = new List<RemlComparison>(m);
        for (var q = 0; q < m; q++)
        {
            var d = est[q].Estimate;
            var half = critical * se[q];
            list.Add(new RemlComparison(
                levels[others[q]],
                levels[control],
                d,
                est[q].Se,
                Quantity.Of(t[q]),
                Quantity.Of(df),
                Quantity.Of(raw[q]),
                Quantity.Of(adjusted[q]),
                direction == DunnettAlternative.Less ? open : Quantity.Of(d - half),
                direction == DunnettAlternative.Greater ? open : Quantity.Of(d + half)));
        }

        return new RemlControlComparisons(list, df, Quantity.Of(critical), probabilities.Error);
    }

    /// <summary>
    /// Two one-sided tests (or non-inferiority with one margin) of the difference <paramref name="e"/>
    /// on its own SE and Satterthwaite df (Schuirmann 1987), the same rule as <see cref="Equivalence"/>:
    /// p_lower = P(T ≥ (Diff − low)/SE), p_upper = P(T ≤ (Diff − high)/SE), TOST p the larger, interval
    /// Diff ± t(1 − α; ν) SE.
    /// </summary>
    public static EquivalenceResult Tost(string levelA, string levelB, RemlEstimate e, double? low, double? high, double alpha)
    {
        ArgumentNullException.ThrowIfNull(e);
        var tost = low.HasValue && high.HasValue;
        var diff = e.Estimate;
        if (!e.Se.IsDefined || !e.Df.IsDefined)
        {
            var u = Quantity.Undefined(e.Se.Reason ?? e.Df.Reason!);
            return new EquivalenceResult(levelA, levelB, diff, e.Se, e.Df, low, high, u, u, u, u, u, u, u, u,
                tost ? EquivalenceVerdict.NotShownEquivalent : EquivalenceVerdict.NotShownNonInferior, EquivalenceVariance.Pooled, alpha);
        }

        return Equivalence.FromEstimate(levelA, levelB, diff, e.Se, e.Df, low, high, alpha, EquivalenceVariance.Pooled);
    }

    /// <summary>
    /// Planned contrasts (or polynomial trends) Σ c_i m_i of the marginal means whose coefficient
    /// rows are <paramref name="rows"/> (level order): each the combination Σ c_i l_i of β̂ with its
    /// SE and Satterthwaite df; t = estimate/SE on that df, adjusted as in
    /// <see cref="FollowUp.Contrasts"/> (none, Holm, Bonferroni, Scheffé with F(k − 1, ν) on the
    /// contrast's own ν). A mixed model has no single error mean square, so no sum of squares is
    /// given (F = t²). Orthogonality: Σ c_i d_i, and c'Wd with W the means' covariance (zero: the
    /// estimates are uncorrelated).
    /// </summary>
    public static ContrastFamily Contrasts(RemlFixedEffects fit, IReadOnlyList<double[]> rows, IReadOnlyList<ContrastSpec> specs, ContrastAdjustment adjustment, double alpha)
    {
        ArgumentNullException.ThrowIfNull(fit);
        ArgumentNullException.ThrowIfNull(rows);
        ArgumentNullException.ThrowIfNull(specs);
        var k = rows.Count;
        var m = specs.Count;
        var combos = specs.Select(c =>
        {
            var l = new double[fit.Count];
            for (var i = 0; i < k; i++)
            {
                for (var j = 0; j < l.Length; j++)
                {
                    l[j] += c.Coefficients[i] * rows[i][j];
                }
            }

            return l;
        }).ToArray();
        var est = combos.Select(fit.Combination).ToArray();
        var raw = est.Select(e => e.Se.IsDefined && e.Df.IsDefined ? Probability.TTwoSided(e.Estimate / e.Se.Value, e.Df.Value) : double.NaN).ToArray();
        var defined = raw.Where(double.IsFinite).ToArray();
        var holm = adjustment == ContrastAdjustment.Holm && defined.Length > 0 ? PValueAdjustment.Holm(defined) : [];
        var noSs = Quantity.Undefined("a mixed-model fit has no single error mean square, so a contrast has no sum of squares");
        var list = new List<ContrastEstimate>(m);
        var h = 0;
        for (var j = 0; j < m; j++)
        {
            var e = est[j];
            if (!double.IsFinite(raw[j]))
            {
                var u = Quantity.Undefined(e.Se.Reason ?? e.Df.Reason ?? "not defined");
                list.Add(new ContrastEstimate(specs[j].Name, specs[j].Coefficients, e.Estimate, e.Se, u, double.NaN, u, u, u, u, noSs, u));
                continue;
            }

            var se = e.Se.Value;
            var df = e.Df.Value;
            var t = e.Estimate / se;
            var (adjusted, critical) = adjustment switch
            {
                ContrastAdjustment.None => (raw[j], Probability.TCritical(alpha, df)),
                ContrastAdjustment.Holm => (holm[h], Probability.TCritical(alpha / m, df)),
                ContrastAdjustment.Bonferroni => (Math.Min(1.0, raw[j] * m), Probability.TCritical(alpha / m, df)),
                ContrastAdjustment.Scheffe => (Probability.FUpper(t * t / (k - 1), k - 1, df), Math.Sqrt((k - 1) * Probability.FCritical(alpha, k - 1, df))),
                _ => throw new ArgumentOutOfRangeException(nameof(adjustment)),
            };
            h++;
            list.Add(new ContrastEstimate(specs[j].Name, specs[j].Coefficients, e.Estimate, e.Se, Quantity.Of(t), df, Quantity.Of(raw[j]), Quantity.Of(Math.Min(1.0, adjusted)),
                Quantity.Of(e.Estimate - (critical * se)), Quantity.Of(e.Estimate + (critical * se)), noSs, Quantity.Of(t * t)));
        }

        var w = fit.Covariance([.. rows.Select(r => (IReadOnlyList<double>)r)]);
        double Quad(IReadOnlyList<double> a, IReadOnlyList<double> b)
        {
            var s = 0.0;
            for (var i = 0; i < k; i++)
            {
                for (var j = 0; j < k; j++)
                {
                    s += a[i] * w[i, j] * b[j];
                }
            }

            return s;
        }

        var pairs = StudyPress.Statistics.FollowUp.Contrasts.Orthogonality(specs, Quad);

        var method = adjustment switch
        {
            ContrastAdjustment.None => "no adjustment; each interval at 1 − α on the contrast's own Satterthwaite df",
            ContrastAdjustment.Holm => "Holm step-down adjustment; Bonferroni intervals, each on the contrast's own Satterthwaite df",
            ContrastAdjustment.Bonferroni => "Bonferroni adjustment and intervals, each on the contrast's own Satterthwaite df",
            _ => "Scheffé adjustment and intervals, each on the contrast's own Satterthwaite df",
        };
        return new ContrastFamily(list, pairs, adjustment, alpha, Quantity.Undefined("each contrast has its own Satterthwaite df"), method);
    }

    /// <summary>Row a − row b.</summary>
    public static double[] Difference(double[] a, double[] b)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        return [.. a.Zip(b, (x, y) => x - y)];
    }
}
