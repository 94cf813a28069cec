using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.FollowUp;

/// <summary>
/// The adjusted means of one treatment factor from ONE fitted analysis of covariance: the levels,
/// the means (covariates at their means), their covariance MSE · L (X'X)⁻¹ L' (L the means'
/// coefficient rows) and the error mean square and df. Every comparison of the adjusted means
/// (<see cref="AdjustedComparisons"/>) is computed from this object; differences and their
/// variances are formed from the coefficient rows of the same fit (L_a − L_b) b and
/// (L_a − L_b)(X'X)⁻¹(L_a − L_b)', which equal the differences of the means and
/// C_aa + C_bb − 2 C_ab of the covariance exactly in arithmetic and keep their digits in floating point.
/// </summary>
public sealed class AdjustedMeansFamily
{
    private readonly LinearFit fit;
    private readonly double[][] rows;
    private readonly double[,] unit;

    private AdjustedMeansFamily(LinearFit fit, double[][] rows, string factor, IReadOnlyList<string> levels, IReadOnlyList<double> means, double[,] unit, double mse, int df)
    {
        this.fit = fit;
        this.rows = rows;
        this.unit = unit;
        Factor = factor;
        Levels = levels;
        Means = means;
        ErrorMeanSquare = mse;
        ErrorDf = df;
    }

    /// <summary>The treatment factor.</summary>
    public string Factor { get; }

    /// <summary>Its levels with data, in level order.</summary>
    public IReadOnlyList<string> Levels { get; }

    /// <summary>The adjusted means, on the response's scale (the compiler's centre added back).</summary>
    public IReadOnlyList<double> Means { get; }

    /// <summary>The residual mean square of the fit (σ² estimate).</summary>
    public double ErrorMeanSquare { get; }

    /// <summary>The residual df of the fit.</summary>
    public int ErrorDf { get; }

    /// <summary>The number of levels.</summary>
    public int Count => Levels.Count;

    /// <summary>L (X'X)⁻¹ L' (the covariance of the means is MSE times it), a copy.</summary>
    public double[,] UnitCovariance => (double[,])unit.Clone();

    /// <summary>The covariance matrix of the adjusted means, MSE · L (X'X)⁻¹ L'.</summary>
    public double[,] Covariance
    {
        get
        {
            var k = Count;
            var c = new double[k, k];
            for (var a = 0; a < k; a++)
            {
                for (var b = 0; b < k; b++)
                {
                    c[a, b] = ErrorMeanSquare * unit[a, b];
                }
            }

            return c;
        }
    }

    /// <summary>The index of <paramref name="level"/>, or -1.</summary>
    public int IndexOf(string level)
    {
        for (var i = 0; i < Levels.Count; i++)
        {
            if (string.Equals(Levels[i], level, StringComparison.Ordinal))
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>Mean a − mean b, from the fit's coefficients.</summary>
    public double Difference(int a, int b) => fit.Estimate(Row(a, b));

    /// <summary>The unit variance of mean a − mean b (its variance is MSE times it).</summary>
    public double DifferenceUnitVariance(int a, int b)
    {
        var d = Row(a, b);
        return fit.Form(d, d);
    }

    /// <summary>The unit covariance of (mean a − mean b) and (mean c − mean d).</summary>
    public double DifferenceUnitCovariance(int a, int b, int c, int d) => fit.Form(Row(a, b), Row(c, d));

    private double[] Row(int a, int b) => rows[a].Zip(rows[b], (u, v) => u - v).ToArray();

    internal static AdjustedMeansFamily Of(LinearFit fit, IReadOnlyList<FactorColumn> factors, int factor, double mse, int df, double centre)
    {
        var (rows, cells) = fit.Rows([factor]);
        var k = rows.Length;
        var levels = cells.Select(c => factors[factor].Levels[fit.Coding.Used[factor][c[0]]]).ToArray();
        var means = rows.Select(r => fit.Estimate(r) + centre).ToArray();
        var unit = new double[k, k];
        for (var a = 0; a < k; a++)
        {
            for (var b = a; b < k; b++)
            {
                unit[a, b] = unit[b, a] = fit.Form(rows[a], rows[b]);
            }
        }

        return new AdjustedMeansFamily(fit, rows, factors[factor].Name, levels, means, unit, mse, df);
    }
}

/// <summary>Comparisons of adjusted means with a control: the comparisons, the critical value and how exact the probabilities are.</summary>
/// <param name="Error">The largest error estimate of the multivariate t probabilities behind the p-values and the critical value (0 with one comparison: exact t).</param>
public sealed record AdjustedControlComparisons(IReadOnlyList<AdjustedMeanComparison> Comparisons, Quantity CriticalValue, double Error, DunnettAlternative Direction, string Method)
{
    /// <summary>
    /// False when a multivariate t probability did not reach <see cref="AdjustedComparisons.RequiredAccuracy"/>
    /// within <see cref="MultivariateT.WorkLimit"/>: the computation stopped there, <see cref="Comparisons"/>
    /// is empty, <see cref="CriticalValue"/> is not defined and <see cref="Error"/> is the error estimate reached.
    /// </summary>
    public bool Accurate { get; init; } = true;
}

/// <summary>Many-to-one probabilities (<see cref="AdjustedComparisons.ManyToOne"/>): adjusted p-values in the order of the t statistics, the critical value, the largest error estimate, and whether every estimate met the required accuracy (when not, <c>Adjusted</c> is empty and <c>Critical</c> NaN).</summary>
public sealed record ManyToOneProbabilities(IReadOnlyList<double> Adjusted, double Critical, double Error, bool Accurate);

/// <summary>
/// Comparisons of the adjusted means of one fitted analysis of covariance (<see cref="AdjustedMeansFamily"/>).
/// <para>
/// Pairwise (every pair a &lt; b in level order; Diff = a − b, SE = sqrt(MSE v_ab), t = Diff/SE on
/// the error df): <see cref="AdjustedMeansComparison.Holm"/>, <see cref="AdjustedMeansComparison.Bonferroni"/>
/// and <see cref="AdjustedMeansComparison.TukeyKramer"/> (see that enum).
/// </para>
/// <para>
/// With a control (<see cref="WithControl"/>; Dunnett 1955 for adjusted means, Hochberg and Tamhane
/// 1987, ch. 3): for each other level i, Diff_i = mean_i − mean_control, t_i = Diff_i / SE_i.
/// Under the null hypothesis (t_1..t_m) is multivariate t on the error df with correlations
/// ρ_ij = v(i,j) / sqrt(v(i,i) v(j,j)) of the differences, which the covariate makes a general
/// (not product) pattern. Two-sided adjusted p_i = P(max_j |T_j| ≥ |t_i|), higher: P(max_j T_j ≥ t_i),
/// lower: P(max_j T_j ≥ −t_i) (by symmetry); each is 1 minus a rectangle probability of
/// <see cref="MultivariateT"/> (Genz–Bretz randomized quasi-Monte Carlo, fixed seed), kept within
/// its Bonferroni bounds P(one) ≤ p ≤ m P(one). The critical value c solves p(c) = alpha by
/// Brent's method between the unadjusted and the Bonferroni t quantiles, on a fixed point set (the
/// number of points the schedule needs at the Bonferroni quantile, at most <see cref="SearchPoints"/>),
/// so that p(c) is one smooth function of c. Intervals Diff ± c SE (two-sided), (Diff − c SE, no upper limit) or (no lower
/// limit, Diff + c SE) one-sided. With one comparison: the t test exactly.
/// </para>
/// <para>
/// Cost: each probability is one rectangle of at most <see cref="MultivariateT.WorkLimit"/> work,
/// and there are m p-values, the rectangle at the Bonferroni quantile and the root search's steps.
/// Every error estimate must be at most <see cref="RequiredAccuracy"/>; the rectangle at the
/// Bonferroni quantile is integrated first, then the critical value's bracket (the search's point
/// set), its search, and the p-values; when one of them misses that accuracy
/// within the work limit (many levels: the error of the rule grows with the dimension while the
/// points it may use shrink), the computation stops and the result says so
/// (<see cref="AdjustedControlComparisons.Accurate"/> false) instead of running for minutes.
/// </para>
/// </summary>
public static class AdjustedComparisons
{
    /// <summary>The most points per shift the critical value's root search uses (each of its steps integrates once).</summary>
    public const int SearchPoints = 16000;

    /// <summary>The largest error estimate accepted for any multivariate t probability behind the p-values and the critical value.</summary>
    public const double RequiredAccuracy = 1e-4;

    /// <summary>The method's name in words.</summary>
    public static string Describe(AdjustedMeansComparison method) => method switch
    {
        AdjustedMeansComparison.Holm => "Holm step-down adjustment of t tests of adjusted-mean differences within each factor; Bonferroni intervals",
        AdjustedMeansComparison.TukeyKramer => "Tukey–Kramer style: studentized range with each pair's own standard error (an approximation with covariates)",
        _ => "Bonferroni adjustment of t tests of adjusted-mean differences within each factor; Bonferroni intervals",
    };

    /// <summary>
    /// Every pair of the family's levels, adjusted by <paramref name="method"/> at <paramref name="alpha"/>;
    /// with <paramref name="control"/>, each other level against the control only (m = k − 1, Diff =
    /// level − control, two-sided), for Holm or Bonferroni: the many-to-one family without the
    /// multivariate t, which suits families too large for <see cref="WithControl"/>.
    /// </summary>
    public static IReadOnlyList<AdjustedMeanComparison> Pairwise(AdjustedMeansFamily family, AdjustedMeansComparison method, double alpha, string? control = null)
    {
        ArgumentNullException.ThrowIfNull(family);
        var k = family.Count;
        var mse = family.ErrorMeanSquare;
        var df = family.ErrorDf;
        var name = family.Factor;
        var levels = family.Levels;
        var pairs = new List<(int A, int B, double Diff, double Se)>();
        if (control is not null)
        {
            if (method == AdjustedMeansComparison.TukeyKramer)
            {
                throw new ArgumentException("comparisons with a control use Holm or Bonferroni here; Dunnett's method is WithControl", nameof(method));
            }

            var c0 = family.IndexOf(control);
            if (c0 < 0)
            {
                throw new ArgumentException("no level " + control, nameof(control));
            }

            for (var a = 0; a < k; a++)
            {
                if (a != c0)
                {
                    pairs.Add((a, c0, family.Difference(a, c0), Math.Sqrt(mse * family.DifferenceUnitVariance(a, c0))));
                }
            }
        }
        else
        {
            for (var a = 0; a < k; a++)
            {
                for (var b = a + 1; b < k; b++)
                {
                    pairs.Add((a, b, family.Difference(a, b), Math.Sqrt(mse * family.DifferenceUnitVariance(a, b))));
                }
            }
        }

        var list = new List<AdjustedMeanComparison>(pairs.Count);
        if (!(mse > 0))
        {
            var u = Quantity.Undefined("the residual mean square is zero, so the standard errors are zero");
            foreach (var (a, b, diff, _) in pairs)
            {
                list.Add(new AdjustedMeanComparison(name, levels[a], levels[b], diff, u, u, u, u, u, u, df));
            }

            return list;
        }

        var t = pairs.Select(x => x.Diff / x.Se).ToArray();
        var raw = t.Select(v => Probability.TTwoSided(v, df)).ToArray();
        double[] adjusted;
        double multiplier;
        switch (method)
        {
            case AdjustedMeansComparison.Holm:
                adjusted = PValueAdjustment.Holm(raw);
                multiplier = Probability.TCritical(alpha / pairs.Count, df);
                break;
            case AdjustedMeansComparison.Bonferroni:
                adjusted = [.. raw.Select(p => Math.Min(1.0, p * pairs.Count))];
                multiplier = Probability.TCritical(alpha / pairs.Count, df);
                break;
            case AdjustedMeansComparison.TukeyKramer:
                adjusted = [.. t.Select(v => StudentizedRange.Upper(Math.Sqrt(2.0) * Math.Abs(v), k, df))];
                multiplier = StudentizedRange.UpperQuantile(alpha, k, df) / Math.Sqrt(2.0);
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(method));
        }

        for (var i = 0; i < pairs.Count; i++)
        {
            var (a, b, diff, se) = pairs[i];
            list.Add(new AdjustedMeanComparison(
                name,
                levels[a],
                levels[b],
                diff,
                Quantity.Of(se),
                Quantity.Of(t[i]),
                Quantity.Of(raw[i]),
                Quantity.Of(Math.Min(1.0, adjusted[i])),
                Quantity.Of(diff - (multiplier * se)),
                Quantity.Of(diff + (multiplier * se)),
                df));
        }

        return list;
    }

    /// <summary>
    /// The correlation matrix of the differences (level i − control) over the other levels in level
    /// order: ρ_ij = v(i,j)/sqrt(v(i,i) v(j,j)).
    /// </summary>
    public static double[,] ControlCorrelation(AdjustedMeansFamily family, int control)
    {
        ArgumentNullException.ThrowIfNull(family);
        var others = Enumerable.Range(0, family.Count).Where(i => i != control).ToArray();
        var m = others.Length;
        var v = others.Select(i => family.DifferenceUnitVariance(i, control)).ToArray();
        var r = new double[m, m];
        for (var i = 0; i < m; i++)
        {
            r[i, i] = 1.0;
            for (var j = 0; j < i; j++)
            {
                r[i, j] = r[j, i] = family.DifferenceUnitCovariance(others[i], control, others[j], control) / Math.Sqrt(v[i] * v[j]);
            }
        }

        return r;
    }

    /// <summary>Every other level against <paramref name="control"/> (see the class summary).</summary>
    public static AdjustedControlComparisons WithControl(AdjustedMeansFamily family, string control, DunnettAlternative direction, double alpha)
    {
        ArgumentNullException.ThrowIfNull(family);
        ArgumentNullException.ThrowIfNull(control);
        var c0 = family.IndexOf(control);
        if (c0 < 0)
        {
            throw new ArgumentException("'" + control + "' is not a level of " + family.Factor, nameof(control));
        }

        if (family.Count < 2)
        {
            throw new ArgumentException("at least two levels are needed", nameof(family));
        }

        var twoSided = direction == DunnettAlternative.TwoSided;
        if (!(alpha > 0 && alpha < (twoSided ? 1.0 : 0.5)))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), twoSided ? "alpha must lie in (0, 1)" : "a one-sided alpha must lie in (0, 1/2)");
        }

        var others = Enumerable.Range(0, family.Count).Where(i => i != c0).ToArray();
        var m = others.Length;
        var df = family.ErrorDf;
        var mse = family.ErrorMeanSquare;
        var method = "Dunnett-type comparisons of adjusted means with control " + control
            + (direction switch { DunnettAlternative.Greater => " (one-sided: greater)", DunnettAlternative.Less => " (one-sided: less)", _ => string.Empty })
            + (m == 1 ? "; one comparison: the t test" : "; multivariate t with the adjusted means' correlation, Genz–Bretz quasi-Monte Carlo (fixed seed)");
        var diffs = others.Select(i => family.Difference(i, c0)).ToArray();
        if (!(mse > 0))
        {
            var u = Quantity.Undefined("the residual mean square is zero, so the standard errors are zero");
            var none = others.Select((i, q) => new AdjustedMeanComparison(family.Factor, family.Levels[i], control, diffs[q], u, u, u, u, u, u, df)).ToList();
            return new AdjustedControlComparisons(none, u, 0.0, direction, method);
        }

        var se = others.Select(i => Math.Sqrt(mse * family.DifferenceUnitVariance(i, c0))).ToArray();
        var t = diffs.Select((d, q) => d / se[q]).ToArray();
        var raw = t.Select(v => twoSided ? Probability.TTwoSided(v, df) : OneSidedUpper(direction == DunnettAlternative.Greater ? v : -v, df)).ToArray();
        var probabilities = ManyToOne(m > 1 ? ControlCorrelation(family, c0) : null, df, t, direction, alpha);
        if (!probabilities.Accurate)
        {
            return new([], Quantity.Undefined("the multivariate t probabilities did not reach the required accuracy within the work limit"), probabilities.Error, direction, method) { Accurate = false };
        }

        var critical = Quantity.Of(probabilities.Critical);
        var adjusted = probabilities.Adjusted;
        var error = probabilities.Error;
        var open = Quantity.Undefined(direction == DunnettAlternative.Greater ? "a one-sided (greater) interval has no upper limit" : "a one-sided (less) interval has no lower limit");
        var list = new List<AdjustedMeanComparison>(m);
        for (var q = 0; q < m; q++)
        {
            var half = critical.Value * se[q];
            var low = direction == DunnettAlternative.Less ? open : Quantity.Of(diffs[q] - half);
            var high = direction == DunnettAlternative.Greater ? open : Quantity.Of(diffs[q] + half);
            list.Add(new AdjustedMeanComparison(family.Factor, family.Levels[others[q]], control, diffs[q], Quantity.Of(se[q]), Quantity.Of(t[q]), Quantity.Of(raw[q]), Quantity.Of(adjusted[q]), low, high, df));
        }

        return new AdjustedControlComparisons(list, critical, error, direction, method);
    }

    /// <summary>
    /// The many-to-one probabilities of m comparisons with a control whose t statistics have the
    /// correlation <paramref name="correlation"/> (null for one comparison) on <paramref name="df"/>
    /// degrees of freedom: each adjusted p-value P(max|Tⱼ| ≥ |tᵢ|) (one-sided P(max Tⱼ ≥ ±tᵢ)), kept
    /// between the unadjusted p-value and its Bonferroni bound, and the critical value c with
    /// P(max ≥ c) = α, found by Brent's method between the single and the Bonferroni quantiles on one
    /// fixed point set (so that P is one smooth function of c). The rectangle at the Bonferroni
    /// quantile is integrated first (it sets that point set), then the search, then the p-values;
    /// the first whose error estimate exceeds <see cref="RequiredAccuracy"/> within
    /// <see cref="MultivariateT.WorkLimit"/> stops the computation (<c>Accurate</c> false).
    /// Shared by the comparisons of adjusted means and of a mixed model's marginal means.
    /// </summary>
    public static ManyToOneProbabilities ManyToOne(double[,]? correlation, double df, IReadOnlyList<double> t, DunnettAlternative direction, double alpha)
    {
        ArgumentNullException.ThrowIfNull(t);
        var m = t.Count;
        var twoSided = direction == DunnettAlternative.TwoSided;
        var mvt = m > 1 ? new MultivariateT(correlation ?? throw new ArgumentNullException(nameof(correlation)), df) : null;
        var error = 0.0;
        var single = twoSided ? Probability.TCritical(alpha, df) : Probability.TCritical(2.0 * alpha, df);
        var bonferroni = twoSided ? Probability.TCritical(alpha / m, df) : Probability.TCritical(2.0 * alpha / m, df);
        var points = 0;
        ManyToOneProbabilities Inaccurate(double reached) => new([], double.NaN, reached, false);
        if (mvt is not null)
        {
            // The rectangle at the Bonferroni quantile first: it sets the root search's point set, and
            // when it cannot reach the accuracy within the work limit nothing else is integrated.
            var first = mvt.Rectangle(Enumerable.Repeat(twoSided ? -bonferroni : double.NegativeInfinity, m).ToArray(), Enumerable.Repeat(bonferroni, m).ToArray());
            if (!(first.Error <= RequiredAccuracy))
            {
                return Inaccurate(first.Error);
            }

            // The points the schedule needs at the Bonferroni quantile, at most SearchPoints per shift.
            points = Math.Min(SearchPoints, first.Points);
        }

        // Upper tail of the maximum at threshold h (two-sided: of the largest |T|), within Bonferroni bounds.
        double Tail(double h, int? points)
        {
            var single = twoSided ? Probability.TTwoSided(h, df) : OneSidedUpper(h, df);
            if (mvt is null)
            {
                return single;
            }

            var lower = Enumerable.Repeat(twoSided ? -Math.Abs(h) : double.NegativeInfinity, m).ToArray();
            var upper = Enumerable.Repeat(twoSided ? Math.Abs(h) : h, m).ToArray();
            var inside = mvt.Rectangle(lower, upper, points);
            error = Math.Max(error, inside.Error);
            return Math.Clamp(1.0 - inside.Value, single, Math.Min(1.0, m * single));
        }

        double critical;
        if (m == 1)
        {
            critical = single;
        }
        else
        {
            var lnAlpha = Math.Log(alpha);
            double G(double u) => lnAlpha - Math.Log(Tail(Math.Exp(u), points));
            double lo = Math.Log(single), hi = Math.Log(bonferroni);
            double glo = G(lo), ghi = G(hi);
            if (!(error <= RequiredAccuracy))
            {
                // The search's point set is too small for this dimension; its steps would all miss too.
                return Inaccurate(error);
            }

            critical = glo >= 0 ? single : ghi <= 0 ? bonferroni : Math.Exp(RootFinding.Brent(G, lo, hi, glo, ghi, 1e-7));
            if (!(error <= RequiredAccuracy))
            {
                return Inaccurate(error);
            }
        }

        var adjusted = new double[m];
        for (var q = 0; q < m; q++)
        {
            adjusted[q] = Tail(twoSided ? Math.Abs(t[q]) : direction == DunnettAlternative.Greater ? t[q] : -t[q], null);
            if (!(error <= RequiredAccuracy))
            {
                return Inaccurate(error);
            }
        }

        return new ManyToOneProbabilities(adjusted, critical, error, true);
    }

    /// <summary>P(T ≥ h) for the t on <paramref name="df"/> degrees of freedom, any real h.</summary>
    private static double OneSidedUpper(double h, double df) =>
        h >= 0 ? 0.5 * Probability.TTwoSided(h, df) : 1.0 - (0.5 * Probability.TTwoSided(-h, df));
}
