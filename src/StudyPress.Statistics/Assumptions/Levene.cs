namespace StudyPress.Statistics.Assumptions;

/// <summary>
/// Result of a Levene-type test of equal variances, a one-way ANOVA F on absolute deviations
/// (shared by <see cref="Levene"/> and <see cref="BrownForsythe"/>).
/// </summary>
/// <param name="F">The statistic (the ANOVA F on the absolute deviations).</param>
/// <param name="Df1">Numerator degrees of freedom, k - 1.</param>
/// <param name="Df2">Denominator degrees of freedom, N - k.</param>
/// <param name="P">Upper-tail probability P(F(Df1, Df2) &gt;= F).</param>
public sealed record LeveneResult(Quantity F, int Df1, int Df2, Quantity P);

/// <summary>
/// Shared computation of Levene-type tests: the one-way ANOVA F statistic on
/// z_ij = |y_ij - c_i|, where c_i is a centre of group i (its mean or its median).
/// </summary>
internal static class DeviationFTest
{
    public static LeveneResult Compute(IReadOnlyList<double[]> groups, Func<double[], double> centre)
    {
        Groups.RequireGroups(groups);
        var k = groups.Count;
        var n = Groups.Count(groups);
        var df1 = k - 1;
        var df2 = n - k;
        if (df2 < 1)
        {
            var u = Quantity.Undefined("every group has a single observation, so there is no within-group variability to compare");
            return new LeveneResult(u, df1, df2, u);
        }

        // F = 0/0 exactly when the absolute deviations are constant within every group. |y - c|
        // takes one value only on at most two points c ± d, so (with c the mean or the median) a
        // group has constant deviations exactly when it holds one distinct value, or two distinct
        // values equally often (always so for a group of at most two). That is decided on the
        // values themselves, never on a rounded sum of squares, whose noise would otherwise give an
        // arbitrary F.
        if (groups.All(ConstantDeviations))
        {
            var u = Quantity.Undefined(NotDefined);
            return new LeveneResult(u, df1, df2, u);
        }

        // z_ij = |y_ij − c_i| is formed again wherever it is needed (the same value each time)
        // instead of being stored: no second copy of a large sample.
        var centres = new double[k];
        for (var g = 0; g < k; g++)
        {
            centres[g] = centre(groups[g]);
        }

        var (grand, means) = Means(groups, centres);
        double between = 0, within = 0;
        for (var g = 0; g < k; g++)
        {
            var m = means[g];
            within += DeviationSumOfSquares(groups[g], centres[g], m);
            var d = m - grand;
            between += groups[g].Length * d * d;
        }

        if (!(within > 0))
        {
            var u = Quantity.Undefined(NotDefined);
            return new LeveneResult(u, df1, df2, u);
        }

        var f = between / df1 / (within / df2);
        return new LeveneResult(Quantity.Of(f), df1, df2, Quantity.Of(Probability.FUpper(f, df1, df2)));
    }

    /// <summary>Why F is not defined when the deviations are constant within every group.</summary>
    public const string NotDefined = "the absolute deviations from the group centres do not vary within any group (each group holds one value, or two values equally often, as every group of at most two does), so F = 0/0 is not defined";

    /// <summary>
    /// True when |y − c| is the same for every value of the group, c its mean or its median: one
    /// distinct value, or exactly two distinct values with equal counts.
    /// </summary>
    public static bool ConstantDeviations(double[] group)
    {
        var a = group[0];
        double? b = null;
        int na = 0, nb = 0;
        foreach (var v in group)
        {
            if (v == a)
            {
                na++;
            }
            else if (b is null || v == b.Value)
            {
                b = v;
                nb++;
            }
            else
            {
                return false;
            }
        }

        return nb == 0 || na == nb;
    }

    /// <summary>
    /// Sample median (average of the two middle values for an even count): the middle order
    /// statistics by selection on a copy (expected linear time), the same values a full sort gives.
    /// A large group without NaN and −0 has its middle order statistics selected by buckets instead
    /// (<see cref="FastSort.TryOrderStatistics"/>: no copy of the group, the same values, since
    /// without NaN and −0 the value of each rank is unique).
    /// </summary>
    public static double Median(double[] x)
    {
        var h = x.Length / 2;
        if (x.Length % 2 == 1)
        {
            if (FastSort.TryOrderStatistics(x, [h]) is [var middle])
            {
                return middle;
            }
        }
        else if (FastSort.TryOrderStatistics(x, [h - 1, h]) is [var lower, var upper])
        {
            // The same operation as below on the same two order statistics.
            return 0.5 * (lower + upper);
        }

        return MedianBySelection(x);
    }

    /// <summary><see cref="Median"/> by a quickselect on a copy of the group.</summary>
    internal static double MedianBySelection(double[] x)
    {
        var s = (double[])x.Clone();
        var h = s.Length / 2;
        var upper = Select(s, h);
        if (s.Length % 2 == 1)
        {
            return upper;
        }

        // After selection s[0..h) holds the h smallest values: the lower middle one is their maximum.
        var lower = s[0];
        for (var i = 1; i < h; i++)
        {
            lower = Math.Max(lower, s[i]);
        }

        return 0.5 * (lower + upper);
    }

    /// <summary>The k-th smallest value (0-based); partitions s so that s[0..k) &lt;= s[k] &lt;= s(k..].</summary>
    private static double Select(double[] s, int k)
    {
        int lo = 0, hi = s.Length - 1;
        while (hi > lo)
        {
            // Median of three as the pivot, then a Hoare partition.
            var mid = lo + ((hi - lo) / 2);
            var a = s[lo];
            var b = s[mid];
            var c = s[hi];
            var pivot = a < b ? (b < c ? b : (a < c ? c : a)) : (a < c ? a : (b < c ? c : b));
            int i = lo, j = hi;
            while (i <= j)
            {
                while (s[i] < pivot)
                {
                    i++;
                }

                while (s[j] > pivot)
                {
                    j--;
                }

                if (i <= j)
                {
                    (s[i], s[j]) = (s[j], s[i]);
                    i++;
                    j--;
                }
            }

            if (k <= j)
            {
                hi = j;
            }
            else if (k >= i)
            {
                lo = i;
            }
            else
            {
                return s[k];
            }
        }

        return s[k];
    }

    /// <summary>
    /// The mean of every z one group after another (the sums of <see cref="Groups.Mean"/> over the
    /// concatenated deviations, without its constant-sample shortcut) and each group's
    /// <see cref="Groups.Mean"/> of its z, in two passes over the groups instead of four: the first
    /// pass adds each z to the grand sum and to its group's sum, the second adds z − (grand
    /// first-pass mean) and z − (group first-pass mean) to the two corrections. Every accumulator
    /// receives the same terms in the same order as separate passes would, so the results are the
    /// same bits (test
    /// <c>VarianceHomogeneityTests.FusedMeans_SameBitsAsSeparatePasses</c>).
    /// </summary>
    internal static (double Grand, double[] Means) Means(IReadOnlyList<double[]> groups, double[] centres)
    {
        var k = groups.Count;
        var sums = new double[k];
        var constant = new bool[k];
        var firsts = new double[k];
        double sum = 0;
        var n = 0;
        for (var g = 0; g < k; g++)
        {
            var y = groups[g];
            var c = centres[g];
            double s = 0;
            var first = Math.Abs(y[0] - c);
            var same = true;
            foreach (var v in y)
            {
                var z = Math.Abs(v - c);
                sum += z;
                s += z;
                same &= z == first;
            }

            sums[g] = s;
            constant[g] = same;
            firsts[g] = first;
            n += y.Length;
        }

        var m = sum / n;
        double corr = 0;
        var means = new double[k];
        for (var g = 0; g < k; g++)
        {
            var y = groups[g];
            var c = centres[g];
            if (constant[g])
            {
                // The group's mean is its one deviation; only the grand correction needs the terms.
                foreach (var v in y)
                {
                    corr += Math.Abs(v - c) - m;
                }

                means[g] = firsts[g];
                continue;
            }

            var mg = sums[g] / y.Length;
            double gc = 0;
            foreach (var v in y)
            {
                var z = Math.Abs(v - c);
                corr += z - m;
                gc += z - mg;
            }

            means[g] = mg + (gc / y.Length);
        }

        return (m + (corr / n), means);
    }

    /// <summary><see cref="Groups.SumOfSquares"/> of z = |y − c| about <paramref name="mean"/> over one group, operation for operation.</summary>
    private static double DeviationSumOfSquares(double[] y, double c, double mean)
    {
        var first = Math.Abs(y[0] - c);
        var constant = true;
        for (var i = 1; i < y.Length && constant; i++)
        {
            constant = Math.Abs(y[i] - c) == first;
        }

        if (constant)
        {
            return 0.0;
        }

        double ss = 0, corr = 0;
        foreach (var v in y)
        {
            var d = Math.Abs(v - c) - mean;
            ss += d * d;
            corr += d;
        }

        return ss - (corr * corr / y.Length);
    }
}

/// <summary>
/// Levene's test of equal variances with deviations from the group means:
/// z_ij = |y_ij - ȳ_i|, F = [sum n_i (z̄_i - z̄)² / (k - 1)] / [sum (z_ij - z̄_i)² / (N - k)],
/// referred to F(k - 1, N - k).
/// Source: Levene, H. (1960), Robust tests for equality of variances, in Olkin (ed.), Contributions to
/// Probability and Statistics, 278-292; NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.5.10.
/// Domain: at least two groups (fewer, or an empty group, is a programming error and throws); at least
/// one group with two or more observations (N &gt; k), and the deviations must vary within some group;
/// otherwise F and p are undefined with a reason. A group of one contributes z = 0.
/// </summary>
public static class Levene
{
    public static LeveneResult Test(IReadOnlyList<double[]> groups) =>
        DeviationFTest.Compute(groups, g => Groups.Mean(g));
}

/// <summary>
/// Brown-Forsythe test of equal variances (Levene's test with deviations from the group medians):
/// z_ij = |y_ij - median_i|, then the one-way ANOVA F on z as in <see cref="Levene"/>, referred to
/// F(k - 1, N - k). More robust than the mean-centred version for skewed data.
/// Source: Brown, M. B. and Forsythe, A. B. (1974), Robust tests for the equality of variances,
/// Journal of the American Statistical Association 69, 364-367; NIST/SEMATECH e-Handbook of
/// Statistical Methods, section 1.3.5.10 (which calls this statistic Levene's W).
/// Domain and edge cases as for <see cref="Levene"/>.
/// </summary>
public static class BrownForsythe
{
    public static LeveneResult Test(IReadOnlyList<double[]> groups) =>
        DeviationFTest.Compute(groups, DeviationFTest.Median);
}
