using MathNet.Numerics;
using MathNet.Numerics.Integration;
using MathNet.Numerics.RootFinding;
using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.PostHoc;

/// <summary>Which departures from the control a Dunnett comparison looks for.</summary>
public enum DunnettAlternative
{
    /// <summary>Treatment mean differs from the control mean (either direction): P(max |t_i| &gt;= |t|).</summary>
    TwoSided = 0,

    /// <summary>Treatment mean exceeds the control mean: P(max t_i &gt;= t); intervals (Diff - c se, +∞).</summary>
    Greater = 1,

    /// <summary>Treatment mean is below the control mean: P(min t_i &lt;= t); intervals (-∞, Diff + c se).</summary>
    Less = 2,
}

/// <summary>
/// Dunnett's (1955) two-sided many-to-one comparisons of every treatment level with a control,
/// for equal or unequal group sizes, on the ANOVA pooled variance.
/// <para>
/// For treatment i (i = 1..m, m = k - 1) against the control 0: Diff_i = ȳ_i - ȳ_0,
/// se_i = sqrt(MS_residual (1/n_i + 1/n_0)), t_i = Diff_i / se_i. Under the null hypothesis the
/// vector (t_1, ..., t_m) is multivariate t with ν = df_residual degrees of freedom and correlations
/// ρ_ij = λ_i λ_j, λ_i = sqrt(n_i / (n_i + n_0)) (all comparisons share the control mean and s).
/// </para>
/// <para>
/// This product structure lets Z_i = λ_i X + sqrt(1 - λ_i²) Y_i with X, Y_1..Y_m independent
/// standard normals (Dunnett 1955; Hochberg and Tamhane 1987, on the product correlation structure), so
/// with s ~ chi_ν / sqrt(ν) independent of Z:
/// </para>
/// <code>
/// P(max |t_i| &gt;= c) = ∫₀^∞ f_ν(s) ∫ φ(x) [1 - Π_i (1 - q_i(c s, x))] dx ds,
/// q_i(h, x) = Φ̄((h - λ_i x)/r_i) + Φ̄((h + λ_i x)/r_i),  r_i = sqrt(1 - λ_i²),
/// </code>
/// <para>
/// a one-dimensional integral over a standard normal inside an integral over the chi distribution
/// of s. The upper tail is integrated directly: 1 - Π(1 - q_i) is formed as -expm1(Σ log1p(-q_i))
/// from the upper-tail probabilities q_i, so small p-values keep their relative accuracy. Both
/// integrals use composite 10-point Gauss-Legendre rules: x over [0, L] (the integrand is even
/// in x) in panels no wider than min(1, r_min), and s over 1 ± 14/sqrt(2ν) (clipped at 0) in
/// panels 1/sqrt(2ν) wide (about the standard deviation of s), finer near 0 for large c.
/// Accuracy: with one comparison the result equals the two-sided t p-value to 12 or more digits
/// for ν from 1 to 1000 and p down to 1e-30 (tests); the range of s reaches down to where the
/// far-tail integrand peaks, and the result is kept within its Bonferroni bounds
/// P(|T| &gt;= c) &lt;= p &lt;= m P(|T| &gt;= c). The critical value c solves
/// P(max |t_i| &gt;= c) = alpha by Brent's method on the logarithms, between the unadjusted and
/// the Bonferroni t quantiles, which bracket it.
/// </para>
/// <para>
/// Adjusted p-value of comparison i: P(max_j |t_j| &gt;= |t_i|) (single step). Intervals:
/// Diff_i ± c se_i, simultaneous at 1 - alpha. With one treatment the procedure is the two-sided
/// t test. Undefined when the residual mean square is zero or the residual df is zero.
/// </para>
/// <para>
/// One-sided alternatives (Dunnett 1955, section 2; the same product-correlation integral):
/// P(max_i T_i &gt;= c) = ∫₀^∞ f_ν(s) ∫ φ(x) [1 - Π_i Φ((c s - λ_i x)/r_i)] dx ds, for any real c
/// (a negative c arises for a treatment on the wrong side of the control). The inner integrand
/// is no longer even in x, so x runs over [-L, L]; the keep-probabilities are summed as
/// logarithms of Φ computed from whichever tail of erfc is accurate, and the upper tail is again
/// -expm1 of that sum. The outer integral over s is the two-sided one (same panels, driven by |c|).
/// The result is kept within its Bonferroni bounds max P(T_i &gt;= c) = P(T &gt;= c) &lt;= p &lt;= m P(T &gt;= c).
/// "Greater": t_i = Diff_i/se_i, adjusted p_i = P(max_j T_j &gt;= t_i), one-sided simultaneous
/// intervals (Diff_i - c₁ se_i, +∞) with P(max T_j &gt;= c₁) = alpha. "Less": by the symmetry of
/// the multivariate t, adjusted p_i = P(max_j T_j &gt;= -t_i), intervals (-∞, Diff_i + c₁ se_i).
/// Exact for unequal group sizes (the λ_i differ); the only error is quadrature, which matches the
/// one-sided t probability to 12 digits with one comparison and the 1955 one-sided table entries
/// within their 2-decimal rounding (tests). The open end of a one-sided interval is reported as
/// undefined (no limit), since a <see cref="Quantity"/> is never infinite.
/// </para>
/// Sources: Dunnett, C. W. (1955), "A multiple comparison procedure for comparing several
/// treatments with a control", JASA 50, 1096-1121; Dunnett, C. W. (1964), "New tables for multiple
/// comparisons with a control", Biometrics 20, 482-491; Hochberg, Y. and Tamhane, A. C. (1987),
/// Multiple Comparison Procedures, Wiley.
/// </summary>
public static class Dunnett
{
    private const int Order = 10;
    private static readonly GaussLegendreRule Rule = new(-1.0, 1.0, Order);

    /// <summary>Compares every level other than <paramref name="control"/> with the control (Diff = level - control).</summary>
    public static PostHocResult Compare(
        IReadOnlyList<string> levels,
        IReadOnlyList<double[]> groups,
        double msResidual,
        int dfResidual,
        double alpha,
        string control)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        ArgumentNullException.ThrowIfNull(control);
        PostHocInput.Validate(levels, groups, alpha);

        // The work is done once, from the groups' counts, means and sums of squares.
        return PostHocFromSummaries.CompareDunnett(levels, PostHocFromSummaries.Summaries(groups), msResidual, dfResidual, alpha, control);
    }

    /// <summary>
    /// P(max_i |T_i| &gt;= c) for the multivariate t with ν = <paramref name="df"/> degrees of freedom
    /// (<see cref="double.PositiveInfinity"/> for the multivariate normal) and correlations
    /// ρ_ij = λ_i λ_j, each 0 &lt;= λ_i &lt; 1. Returns 1 for c &lt;= 0.
    /// </summary>
    public static double UpperProbability(double c, IReadOnlyList<double> lambdas, double df)
    {
        ValidateDistribution(lambdas, df);
        if (!(c > 0))
        {
            return 1.0;
        }

        if (double.IsPositiveInfinity(c))
        {
            return 0.0;
        }

        // Equal lambdas (equal group sizes) give equal factors of the product: evaluate each
        // distinct lambda once and weight its log by its multiplicity.
        var distinct = lambdas.GroupBy(l => l).Select(g => (Lambda: g.Key, Count: g.Count())).ToArray();
        var lam = distinct.Select(d => d.Lambda).ToArray();
        var mult = distinct.Select(d => (double)d.Count).ToArray();
        var r = lam.Select(l => Math.Sqrt((1.0 - l) * (1.0 + l))).ToArray();
        if (double.IsPositiveInfinity(df))
        {
            var z1 = Probability.NormalTwoSided(c);
            return Math.Clamp(NormalPart(c, lam, mult, r), z1, Math.Min(1.0, lambdas.Count * z1));
        }

        var ratio = ChiMixture(c, df, h => NormalPart(h, lam, mult, r));

        // The single-comparison tail p1 = P(|T| >= c) and m p1 bound the probability (Bonferroni);
        // quadrature error never takes the value outside them.
        var single = Probability.TTwoSided(c, df);
        var bound = Math.Min(1.0, lambdas.Count * single);
        return Math.Clamp(ratio, single, bound);
    }

    /// <summary>
    /// E_s[g(c s)] for s ~ chi_ν/sqrt(ν): the outer integral shared by the two-sided and one-sided
    /// probabilities, with <paramref name="normalPart"/> the probability for the normal vector at
    /// threshold h = c s. The panels depend on |c| only (c is negative only for one-sided tails).
    /// </summary>
    private static double ChiMixture(double c, double df, Func<double, double> normalPart)
    {
        var ac = Math.Abs(c);

        // Outer integral over s ~ chi_ν / sqrt(ν). Its standard deviation is about 1/sqrt(2ν); the
        // range 1 ± 14 of those (clipped at 0) holds all but a negligible part of the mass for
        // every ν >= 1 (for ν = 1, s = |N(0,1)| and the range reaches 10.9). The density weights are
        // normalised over the quadrature nodes, which removes the constant and its cancellation.
        // In the far tail the integrand f(s) P(max |Z| >= c s) ≈ s^(ν−1) e^(−(ν + c²) s²/2) peaks
        // at s* = √((ν − 1)/(ν + c²)), with spread about 1/√(2(ν + c²)), below the range of s
        // itself: the range is widened down to s* − 14 of those spreads so that the mass there
        // is not cut off (it was, for p below about 1e-85 at large ν).
        var sd = 1.0 / Math.Sqrt(2.0 * df);
        var spread = 1.0 / Math.Sqrt(2.0 * (df + (c * c)));
        var peak = Math.Sqrt(Math.Max(df - 1.0, 0.0) / (df + (c * c)));
        var bulkLo = Math.Max(0.0, 1.0 - (14.0 * sd));
        var lo = Math.Max(0.0, Math.Min(bulkLo, peak - (14.0 * spread)));
        var hi = 1.0 + (14.0 * sd);
        var edges = new List<double>();

        // Below the bulk of s (large ν, far tail): panels about the tail's spread wide (at most 400).
        AddPanels(edges, lo, bulkLo, Math.Max(spread, (bulkLo - lo) / 400.0));

        // Panels about one standard deviation of s wide; finer (1/(2c)) where c s < 12, since
        // for small ν and large c the mass of the integrand sits at small s, where P(max |Z| >= c s)
        // still changes quickly.
        var coarse = sd;
        var fine = Math.Min(coarse, 0.5 / ac);
        var edge = Math.Min(hi, Math.Max(bulkLo, 12.0 / ac));
        AddPanels(edges, bulkLo, edge, fine);
        AddPanels(edges, edge, hi, coarse);
        edges.Add(hi);
        var panels = edges.Count - 1;
        var nodes = new double[panels * Order];
        var logw = new double[panels * Order];
        var maxLog = double.NegativeInfinity;
        for (var p = 0; p < panels; p++)
        {
            var h = edges[p + 1] - edges[p];
            var mid = 0.5 * (edges[p] + edges[p + 1]);
            for (var j = 0; j < Order; j++)
            {
                var s = mid + (0.5 * h * Rule.Abscissas[j]);
                var idx = (p * Order) + j;
                nodes[idx] = s;

                // log of the chi_ν/sqrt(ν) density without its constant: (ν - 1) log s - ν s²/2.
                logw[idx] = Math.Log(h * Rule.Weights[j]) + ((df - 1.0) * Math.Log(s)) - (0.5 * df * s * s);
                maxLog = Math.Max(maxLog, logw[idx]);
            }
        }

        double num = 0, den = 0;
        for (var i = 0; i < nodes.Length; i++)
        {
            var w = Math.Exp(logw[i] - maxLog);
            if (w < 1e-300)
            {
                continue;
            }

            den += w;
            num += w * normalPart(c * nodes[i]);
        }

        return num / den;
    }

    /// <summary>
    /// One-sided P(max_i T_i &gt;= c) for the multivariate t with ν = <paramref name="df"/> degrees of
    /// freedom (<see cref="double.PositiveInfinity"/> for the multivariate normal) and correlations
    /// ρ_ij = λ_i λ_j (see the class summary). Any real c; 1 at c = -∞, 0 at c = +∞.
    /// </summary>
    public static double UpperProbabilityOneSided(double c, IReadOnlyList<double> lambdas, double df)
    {
        ValidateDistribution(lambdas, df);
        if (double.IsNaN(c))
        {
            throw new ArgumentException("the threshold is not a number", nameof(c));
        }

        if (double.IsPositiveInfinity(c))
        {
            return 0.0;
        }

        if (double.IsNegativeInfinity(c))
        {
            return 1.0;
        }

        var distinct = lambdas.GroupBy(l => l).Select(g => (Lambda: g.Key, Count: g.Count())).ToArray();
        var lam = distinct.Select(d => d.Lambda).ToArray();
        var mult = distinct.Select(d => (double)d.Count).ToArray();
        var r = lam.Select(l => Math.Sqrt((1.0 - l) * (1.0 + l))).ToArray();
        double single;
        double value;
        if (double.IsPositiveInfinity(df))
        {
            single = c >= 0 ? 0.5 * Probability.NormalTwoSided(c) : 1.0 - (0.5 * Probability.NormalTwoSided(c));
            value = NormalPartOneSided(c, lam, mult, r);
        }
        else
        {
            single = c >= 0 ? 0.5 * Probability.TTwoSided(c, df) : 1.0 - (0.5 * Probability.TTwoSided(-c, df));
            value = ChiMixture(c, df, h => NormalPartOneSided(h, lam, mult, r));
        }

        return Math.Clamp(value, single, Math.Min(1.0, lambdas.Count * single));
    }

    /// <summary>
    /// The one-sided critical value c₁ with P(max_i T_i &gt;= c₁) = alpha, 0 &lt; alpha &lt; ½ (see
    /// <see cref="UpperProbabilityOneSided"/>). With one comparison it is the t quantile t(1 - alpha; ν).
    /// Solved like the two-sided value: Brent's method on ln P - ln alpha against ln c, bracketed by
    /// the one-sided t quantiles at alpha and alpha/m (Bonferroni).
    /// </summary>
    public static double CriticalValueOneSided(double alpha, IReadOnlyList<double> lambdas, double df)
    {
        ValidateDistribution(lambdas, df);
        if (!(alpha > 0 && alpha < 0.5))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "a one-sided alpha must lie in (0, 1/2)");
        }

        // One-sided at alpha is the two-sided t quantile at 2 alpha (and 2 alpha / m for Bonferroni).
        return SolveCritical(alpha, 2.0 * alpha, lambdas.Count, df, c => UpperProbabilityOneSided(c, lambdas, df));
    }

    /// <summary>
    /// Many-to-one comparisons against <paramref name="control"/> with the given alternative
    /// (Diff = level - control). Two-sided gives exactly the result of
    /// <see cref="Compare(IReadOnlyList{string}, IReadOnlyList{double[]}, double, int, double, string)"/>.
    /// </summary>
    public static PostHocResult CompareWithAlternative(
        IReadOnlyList<string> levels,
        IReadOnlyList<double[]> groups,
        double msResidual,
        int dfResidual,
        double alpha,
        string control,
        DunnettAlternative alternative)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        ArgumentNullException.ThrowIfNull(control);
        PostHocInput.Validate(levels, groups, alpha);
        return CompareFromSummaries(levels, PostHocFromSummaries.Summaries(groups), msResidual, dfResidual, alpha, control, alternative);
    }

    /// <summary>
    /// The comparisons of <see cref="CompareWithAlternative"/>
    /// from each group's count, mean and sum of squares. One-sided results: the statistic is
    /// t = Diff/se with its sign; the interval's open end is undefined ("no upper limit" for
    /// greater, "no lower limit" for less); the critical value is the one-sided c₁.
    /// </summary>
    public static PostHocResult CompareFromSummaries(
        IReadOnlyList<string> levels,
        IReadOnlyList<GroupStatistics> groups,
        double msResidual,
        int dfResidual,
        double alpha,
        string control,
        DunnettAlternative alternative)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        ArgumentNullException.ThrowIfNull(control);
        if (alternative == DunnettAlternative.TwoSided)
        {
            return PostHocFromSummaries.CompareDunnett(levels, groups, msResidual, dfResidual, alpha, control);
        }

        if (alternative is not DunnettAlternative.Greater and not DunnettAlternative.Less)
        {
            throw new ArgumentOutOfRangeException(nameof(alternative));
        }

        if (levels.Count != groups.Count || groups.Count < 2)
        {
            throw new ArgumentException("levels and groups must match, with at least two groups", nameof(groups));
        }

        if (!(alpha > 0 && alpha < 0.5))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "a one-sided alpha must lie in (0, 1/2)");
        }

        if (groups.Any(g => g.Count < 1 || !double.IsFinite(g.Mean)))
        {
            throw new ArgumentException("a group is empty or its mean is not finite", nameof(groups));
        }

        var greater = alternative == DunnettAlternative.Greater;
        var c0 = PostHocInput.ControlIndex(levels, control);
        var pairs = PostHocInput.Pairs(levels, control);
        var n0 = groups[c0].Count;
        var lambdas = pairs.Select(p => Math.Sqrt(groups[p.A].Count / (double)(groups[p.A].Count + n0))).ToArray();
        var name = "Dunnett many-to-one comparisons against control " + control + (greater ? " (one-sided: greater)" : " (one-sided: less)");
        var problem = PostHocInput.VarianceProblem(msResidual, dfResidual);
        Quantity critical;
        if (problem is not null)
        {
            critical = Quantity.Undefined(problem);
        }
        else
        {
            try
            {
                critical = Quantity.Of(CriticalValueOneSided(alpha, lambdas, dfResidual));
            }
            catch (NonConvergenceException)
            {
                critical = Quantity.Undefined("the Dunnett critical value could not be computed (the root search did not converge)");
            }
        }

        var df = problem is null ? Quantity.Of(dfResidual) : Quantity.Undefined(problem);
        var open = Quantity.Undefined(greater ? "a one-sided (greater) interval has no upper limit" : "a one-sided (less) interval has no lower limit");
        var list = new PairwiseComparison[pairs.Count];
        for (var k = 0; k < pairs.Count; k++)
        {
            var (a, b) = pairs[k];
            var diff = groups[a].Mean - groups[b].Mean;
            if (problem is not null)
            {
                var u = Quantity.Undefined(problem);
                list[k] = new PairwiseComparison(levels[a], levels[b], diff, u, u, u, u, u, u);
                continue;
            }

            var se = Math.Sqrt(msResidual * ((1.0 / groups[a].Count) + (1.0 / n0)));
            var t = diff / se;
            var p = Quantity.Of(UpperProbabilityOneSided(greater ? t : -t, lambdas, dfResidual));
            var half = critical.Map(cv => cv * se);
            list[k] = greater
                ? new PairwiseComparison(levels[a], levels[b], diff, Quantity.Of(se), Quantity.Of(t), half.Map(h => diff - h), open, p, df)
                : new PairwiseComparison(levels[a], levels[b], diff, Quantity.Of(se), Quantity.Of(t), open, half.Map(h => diff + h), p, df);
        }

        return new PostHocResult(name, alpha, list, critical);
    }

    /// <summary>
    /// ∫ φ(x) [1 - Π_i Φ((h - λ_i x)/r_i)] dx = P(max Z_i &gt;= h) for the normal vector Z, any real h,
    /// over x in [-L, L], L = min(40, λ_max |h| + 9) (the integrand's mass lies near x = λ h and
    /// φ(9) is below 1e-17 of its peak). log Φ(u) is log1p(-Φ̄(u)) for u &gt;= 0 and ln Φ̄(-u) below,
    /// each accurate.
    /// </summary>
    private static double NormalPartOneSided(double h, double[] lam, double[] mult, double[] r)
    {
        var lmax = lam.Max();
        var rmin = r.Min();
        var upper = Math.Min(40.0, (lmax * Math.Abs(h)) + 9.0);
        var width = Math.Min(1.0, Math.Max(rmin, 0.02));
        var panels = Math.Max(2, (int)Math.Ceiling(2.0 * upper / width));
        var step = 2.0 * upper / panels;
        double sum = 0;
        for (var p = 0; p < panels; p++)
        {
            var mid = -upper + ((p + 0.5) * step);
            for (var j = 0; j < Order; j++)
            {
                var x = mid + (0.5 * step * Rule.Abscissas[j]);
                var phi = Math.Exp(-0.5 * x * x) / Math.Sqrt(2.0 * Math.PI);
                double logKeep = 0;
                for (var i = 0; i < lam.Length; i++)
                {
                    var u = (h - (lam[i] * x)) / r[i];
                    logKeep += mult[i] * (u >= 0 ? Elementary.Log1P(-UpperNormal(u)) : Math.Log(UpperNormal(-u)));
                }

                var tail = -Elementary.Expm1(logKeep);
                sum += 0.5 * step * Rule.Weights[j] * phi * tail;
            }
        }

        return sum;
    }

    /// <summary>Appends the left edges of equal panels no wider than <paramref name="width"/> covering [a, b).</summary>
    private static void AddPanels(List<double> edges, double a, double b, double width)
    {
        if (!(b > a))
        {
            return;
        }

        var n = Math.Max(1, (int)Math.Ceiling((b - a) / width));
        for (var i = 0; i < n; i++)
        {
            edges.Add(a + ((b - a) * i / n));
        }
    }

    /// <summary>
    /// The two-sided critical value c with P(max_i |T_i| &gt;= c) = alpha (see
    /// <see cref="UpperProbability"/>). With one comparison it is the t quantile t(1 - alpha/2; ν).
    /// </summary>
    public static double CriticalValue(double alpha, IReadOnlyList<double> lambdas, double df)
    {
        ValidateDistribution(lambdas, df);
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        return SolveCritical(alpha, alpha, lambdas.Count, df, c => UpperProbability(c, lambdas, df));
    }

    /// <summary>
    /// The c with <paramref name="upper"/>(c) = alpha for m comparisons. The single and the
    /// Bonferroni quantiles (two-sided t quantiles at <paramref name="tailAlpha"/> and
    /// tailAlpha / m) bracket c, since the probability lies within its Bonferroni bounds. Solved by
    /// Brent's method on ln P − ln alpha against ln c, so that tiny alphas keep their relative
    /// accuracy (an absolute tolerance on P would accept any c there); only rounding can put an end
    /// of the bracket beyond the root, and then that end is the answer.
    /// </summary>
    private static double SolveCritical(double alpha, double tailAlpha, int m, double df, Func<double, double> upper)
    {
        var single = Quantile(tailAlpha, df);
        if (m == 1)
        {
            return single;
        }

        var bonferroni = Quantile(tailAlpha / m, df);
        var lnAlpha = Math.Log(alpha);
        double G(double u) => lnAlpha - Math.Log(upper(Math.Exp(u)));
        double lo = Math.Log(single), hi = Math.Log(bonferroni);
        double glo = G(lo), ghi = G(hi);
        if (glo >= 0)
        {
            return single;
        }

        if (ghi <= 0)
        {
            return bonferroni;
        }

        return Math.Exp(Distributions.RootFinding.Brent(G, lo, hi, glo, ghi, 1e-13));
    }

    private static Quantity CriticalValueQuantity(double alpha, IReadOnlyList<double> lambdas, double df)
    {
        try
        {
            return Quantity.Of(CriticalValue(alpha, lambdas, df));
        }
        catch (NonConvergenceException)
        {
            return Quantity.Undefined("the Dunnett critical value could not be computed (the root search did not converge)");
        }
    }

    /// <summary>Two-sided alpha quantile of t(ν), or of the standard normal for ν = ∞.</summary>
    private static double Quantile(double alpha, double df) =>
        double.IsPositiveInfinity(df)
            ? -MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, alpha / 2.0)
            : Probability.TCritical(alpha, df);

    /// <summary>
    /// ∫ φ(x) [1 - Π_i (1 - q_i(h, x))] dx = P(max |Z_i| &gt;= h) for the normal vector Z.
    /// The integrand is even in x, so twice the integral over [0, L] is taken. Beyond
    /// x = λ_max h + 9 the normal density is below 1e-18 of its peak relative to where the mass
    /// lies; L is capped at 40 (φ(40) underflows).
    /// </summary>
    private static double NormalPart(double h, double[] lam, double[] mult, double[] r)
    {
        var lmax = lam.Max();
        var rmin = r.Min();
        var upper = Math.Min(40.0, (lmax * h) + 9.0);
        var width = Math.Min(1.0, Math.Max(rmin, 0.02));
        var panels = Math.Max(1, (int)Math.Ceiling(upper / width));
        var step = upper / panels;
        double sum = 0;
        for (var p = 0; p < panels; p++)
        {
            var mid = (p + 0.5) * step;
            for (var j = 0; j < Order; j++)
            {
                var x = mid + (0.5 * step * Rule.Abscissas[j]);
                var phi = Math.Exp(-0.5 * x * x) / Math.Sqrt(2.0 * Math.PI);
                double logKeep = 0;
                for (var i = 0; i < lam.Length; i++)
                {
                    var q = UpperNormal((h - (lam[i] * x)) / r[i]) + UpperNormal((h + (lam[i] * x)) / r[i]);
                    logKeep += q >= 1.0 ? double.NegativeInfinity : mult[i] * Elementary.Log1P(-q);
                }

                var tail = -Elementary.Expm1(logKeep);
                sum += 0.5 * step * Rule.Weights[j] * phi * tail;
            }
        }

        return 2.0 * sum;
    }

    /// <summary>Φ̄(u) = P(Z &gt;= u) = erfc(u/√2)/2, accurate in the upper tail.</summary>
    private static double UpperNormal(double u) => 0.5 * SpecialFunctions.Erfc(u / Math.Sqrt(2.0));

    private static void ValidateDistribution(IReadOnlyList<double> lambdas, double df)
    {
        ArgumentNullException.ThrowIfNull(lambdas);
        if (lambdas.Count == 0)
        {
            throw new ArgumentException("at least one comparison is needed", nameof(lambdas));
        }

        foreach (var l in lambdas)
        {
            if (!(l >= 0 && l < 1))
            {
                throw new ArgumentException("each lambda must lie in [0, 1)", nameof(lambdas));
            }
        }

        if (!(df >= 1))
        {
            throw new ArgumentOutOfRangeException(nameof(df), "degrees of freedom must be at least 1");
        }
    }
}
