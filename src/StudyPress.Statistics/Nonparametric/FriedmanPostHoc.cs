using System.Globalization;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Nonparametric;

/// <summary>One pairwise comparison of two treatments after a Friedman test.</summary>
/// <param name="TreatmentA">First treatment of the pair.</param>
/// <param name="TreatmentB">Second treatment of the pair.</param>
/// <param name="MeanRankDiff">R̄_A − R̄_B, the difference of the mean within-block ranks.</param>
/// <param name="Se">Standard error of <paramref name="MeanRankDiff"/> used by the procedure.</param>
/// <param name="Statistic">The test statistic (Nemenyi: studentized range q ≥ 0; Conover: signed t).</param>
/// <param name="P">The unadjusted two-sided p-value of this one comparison.</param>
/// <param name="PAdjusted">The p-value adjusted for the family of k (k − 1)/2 comparisons.</param>
public sealed record FriedmanPairwiseComparison(
    string TreatmentA,
    string TreatmentB,
    double MeanRankDiff,
    Quantity Se,
    Quantity Statistic,
    Quantity P,
    Quantity PAdjusted);

/// <summary>Result of the Nemenyi comparisons after a Friedman test.</summary>
/// <param name="Alpha">The family-wise level of <paramref name="CriticalDifference"/>.</param>
/// <param name="QCritical">q_{α, k, ∞}, the upper-α quantile of the studentized range with k means and infinite df.</param>
/// <param name="CriticalDifference">CD = q_{α, k, ∞}/√2 · √(k (k + 1)/(6 n)): mean ranks further apart than CD differ at level α.</param>
/// <param name="Comparisons">All pairs (i, j), i &lt; j, in treatment order.</param>
public sealed record FriedmanNemenyiResult(
    double Alpha,
    double QCritical,
    double CriticalDifference,
    IReadOnlyList<FriedmanPairwiseComparison> Comparisons);

/// <summary>Result of Conover's pairwise comparisons after a Friedman test.</summary>
/// <param name="Adjustment">How <see cref="FriedmanPairwiseComparison.PAdjusted"/> was adjusted.</param>
/// <param name="Df">(n − 1)(k − 1), the degrees of freedom of the t statistics.</param>
/// <param name="ErrorMeanSquare">SS_error / ((n − 1)(k − 1)) of the within-block ranks (the rank-scale error term).</param>
/// <param name="Comparisons">All pairs (i, j), i &lt; j, in treatment order.</param>
public sealed record FriedmanConoverResult(
    PValueAdjustmentMethod Adjustment,
    int Df,
    Quantity ErrorMeanSquare,
    IReadOnlyList<FriedmanPairwiseComparison> Comparisons);

/// <summary>
/// Nemenyi's (1963) all-pairs comparisons of mean ranks after a Friedman test (Nemenyi, P. (1963),
/// Distribution-free multiple comparisons, PhD thesis, Princeton; in the form given by Demšar, J.
/// (2006), "Statistical comparisons of classifiers over multiple data sets", JMLR 7, 1-30).
/// <para>
/// Under the null hypothesis (no ties) the mean ranks have covariance matrix (k + 1)/(12 n) (k I − J)
/// (variance (k² − 1)/(12 n), covariance −(k + 1)/(12 n)); a multiple of J does not affect
/// differences, so for large n the differences of the k mean ranks are distributed like those of
/// k independent normal means with variance k (k + 1)/(12 n). For treatments i &lt; j: d = R̄_i − R̄_j, Se = √(k (k + 1)/(6 n)) (the standard error
/// of d), q = √2 |d| / Se = |d| / √(k (k + 1)/(12 n)), and the family-adjusted p-value is
/// P(Q_{k, ∞} &gt; q) from the studentized range with k means and infinite degrees of freedom
/// (<see cref="StudentizedRange.Upper"/> with df = +∞, which integrates the range of k normals
/// directly). The unadjusted p is the two-sided normal p of z = d / Se. The critical difference
/// is CD = q_{α, k, ∞}/√2 · √(k (k + 1)/(6 n)) (<see cref="StudentizedRange.UpperQuantile"/> with
/// df = +∞, which brackets with normal quantiles), and |d| &gt; CD exactly when the adjusted p &lt; α (up to rounding at the boundary).
/// </para>
/// <para>
/// Ties: the variance used is the untied one (as in the usual statement of the test); ties make
/// the true rank variance smaller, so with ties the test is conservative. The statistics are
/// defined for any data, also when every block is tied (then every d = 0 and every p = 1).
/// </para>
/// </summary>
public static class FriedmanNemenyi
{
    /// <summary>
    /// All pairwise comparisons. <paramref name="blocks"/>[i][j] is the observation of treatment j
    /// in block i; <paramref name="treatments"/> names the k treatments in that order.
    /// </summary>
    public static FriedmanNemenyiResult Compare(IReadOnlyList<string> treatments, IReadOnlyList<double[]> blocks, double alpha)
    {
        var r = FriedmanRanks.Of(blocks, nameof(blocks));
        FriedmanPostHocInput.Validate(treatments, r.Treatments);
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        int n = r.Blocks, k = r.Treatments;

        var variance = k * (k + 1.0) / (6.0 * n);
        var se = Math.Sqrt(variance);
        var qCritical = StudentizedRange.UpperQuantile(alpha, k, double.PositiveInfinity);
        var cd = qCritical * Math.Sqrt(variance / 2.0);

        var list = new List<FriedmanPairwiseComparison>(k * (k - 1) / 2);
        for (var a = 0; a < k; a++)
        {
            for (var b = a + 1; b < k; b++)
            {
                var d = r.MeanRankDiff(a, b);

                // q = |d| / √(k (k + 1)/(12 n)) = |C_a − C_b| √(3 / (n k (k + 1))).
                var q = Math.Abs(r.CentredSums[a] - r.CentredSums[b]) * Math.Sqrt(3.0 / ((double)n * k * (k + 1.0)));
                var z = d / se;
                list.Add(new FriedmanPairwiseComparison(
                    treatments[a],
                    treatments[b],
                    d,
                    Quantity.Of(se),
                    Quantity.Of(q),
                    Quantity.Of(Probability.NormalTwoSided(z)),
                    Quantity.Of(StudentizedRange.Upper(q, k, double.PositiveInfinity))));
            }
        }

        return new FriedmanNemenyiResult(alpha, qCritical, cd, list);
    }
}

/// <summary>
/// Conover's pairwise comparisons after a Friedman test (Conover, W. J. (1999), Practical
/// Nonparametric Statistics, 3rd ed., Wiley, section 5.8: the multiple-comparison rule that
/// follows the Friedman test), with Holm's (1979) adjustment by default.
/// <para>
/// With within-block mid-ranks r_ij, A₂ = Σ_ij r_ij² and B₂ = Σ_j R_j² / n, the rank-scale error
/// sum of squares is SS_error = A₂ − B₂ (ties are handled because A₂ uses the actual mid-ranks)
/// on df = (n − 1)(k − 1), MSE = SS_error/df. For treatments i &lt; j: d = R̄_i − R̄_j,
/// Se = √(2 MSE / n), t = d / Se, unadjusted p = P(|T_df| ≥ |t|); this is Conover's rule
/// |R_i − R_j| &gt; t_{1−α/2, df} √(2 (n A₂ − Σ R_j²)/df) written per comparison. The p-values
/// are then adjusted by <see cref="PValueAdjustment"/> (Holm by default, or Bonferroni).
/// Numerics: t = (C_i − C_j) / √(2 (n Σ c² − Σ C²)/df) from the exact integer sums of
/// <see cref="FriedmanRanks"/>; p by the positive series of <see cref="Probability"/> for integer
/// df up to 1000 (accurate in the far tail), by the incomplete beta function beyond.
/// </para>
/// <para>
/// Edge cases. Every block tied throughout: nothing is estimable, every t and p is undefined.
/// Perfect concordance (SS_error = 0 but not all tied): Se = 0; a pair with d ≠ 0 has t infinite,
/// reported as not defined with that reason, and p = 0; a pair with d = 0 (the two treatments
/// tie with each other in every block) has t = 0/0, not defined, and p = 1. Both p-values are the
/// limits as the error term goes to zero with d held fixed, the same convention as the infinite
/// Iman–Davenport F of <see cref="Friedman"/>.
/// </para>
/// </summary>
public static class FriedmanConover
{
    private const int MaxSeriesDf = 1000;

    /// <summary>
    /// All pairwise comparisons. <paramref name="blocks"/>[i][j] is the observation of treatment j
    /// in block i; <paramref name="treatments"/> names the k treatments in that order.
    /// </summary>
    public static FriedmanConoverResult Compare(
        IReadOnlyList<string> treatments,
        IReadOnlyList<double[]> blocks,
        PValueAdjustmentMethod method = PValueAdjustmentMethod.Holm)
    {
        var r = FriedmanRanks.Of(blocks, nameof(blocks));
        FriedmanPostHocInput.Validate(treatments, r.Treatments);
        if (method is not (PValueAdjustmentMethod.Holm or PValueAdjustmentMethod.Bonferroni))
        {
            throw new ArgumentOutOfRangeException(nameof(method));
        }

        int n = r.Blocks, k = r.Treatments;
        var df = checked((n - 1) * (k - 1));
        var m = k * (k - 1) / 2;
        var d = new double[m];
        var se = new Quantity[m];
        var t = new Quantity[m];
        var raw = new Quantity[m];
        var pairs = new (int A, int B)[m];
        var c = 0;
        for (var a = 0; a < k; a++)
        {
            for (var b = a + 1; b < k; b++)
            {
                pairs[c++] = (a, b);
            }
        }

        Quantity mse;
        if (r.AllTied)
        {
            const string reason = "every block has all its values tied, so the within-block ranks carry no information";
            mse = Quantity.Of(0.0);
            for (c = 0; c < m; c++)
            {
                d[c] = 0.0;
                se[c] = Quantity.Of(0.0);
                t[c] = raw[c] = Quantity.Undefined(reason);
            }
        }
        else
        {
            var error = (double)r.ErrorNumerator;

            // MSE = SS_error / df = (n Σ c² − Σ C²) / (4 n df); Se² = 2 MSE / n = (n Σ c² − Σ C²) / (2 n² df).
            mse = Quantity.Of(error / (4.0 * n * df));
            var seValue = Math.Sqrt(error / (2.0 * df)) / n;
            var scale = Math.Sqrt(2.0 * error / df);
            for (c = 0; c < m; c++)
            {
                var (a, b) = pairs[c];
                d[c] = r.MeanRankDiff(a, b);
                se[c] = Quantity.Of(seValue);
                long diff = r.CentredSums[a] - r.CentredSums[b];
                if (error == 0)
                {
                    t[c] = Quantity.Undefined(diff == 0
                        ? "0/0: the two treatments tie with each other in every block and the rank error sum of squares is zero"
                        : "infinite: every block gives each treatment the same rank (perfect concordance), so the rank error sum of squares is zero");
                    raw[c] = Quantity.Of(diff == 0 ? 1.0 : 0.0);
                    continue;
                }

                var tv = diff / scale;
                t[c] = Quantity.Of(tv);
                raw[c] = Quantity.Of(df <= MaxSeriesDf ? Probability.TTwoSidedSeries(Math.Abs(tv), df) : Probability.TTwoSided(tv, df));
            }
        }

        var adjusted = PValueAdjustment.Adjust(raw, method);
        var list = new FriedmanPairwiseComparison[m];
        for (c = 0; c < m; c++)
        {
            var (a, b) = pairs[c];
            list[c] = new FriedmanPairwiseComparison(treatments[a], treatments[b], d[c], se[c], t[c], raw[c], adjusted[c]);
        }

        return new FriedmanConoverResult(method, df, mse, list);
    }
}

/// <summary>Checks of the treatment names shared by the Friedman post-hoc procedures.</summary>
internal static class FriedmanPostHocInput
{
    public static void Validate(IReadOnlyList<string> treatments, int k)
    {
        ArgumentNullException.ThrowIfNull(treatments);
        if (treatments.Count != k)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"{treatments.Count} treatment name(s) for blocks of {k} value(s)"),
                nameof(treatments));
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (var name in treatments)
        {
            if (name is null || !seen.Add(name))
            {
                throw new ArgumentException(
                    name is null ? "a treatment name is null" : "the treatment name '" + name + "' is given twice",
                    nameof(treatments));
            }
        }
    }
}
