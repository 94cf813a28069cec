using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

public class ContrastsTests
{
    private static (double[] Values, double[] Means, long[] Counts, double Mse, int Df, double SsBetween) Kuehl()
    {
        var (_, rows) = ReferenceCsv.Read("contrasts", "kuehl-plant-density.csv");
        var (levels, groups) = ReferenceCsv.GroupBy(rows, 0, 1);
        var anova = FactorialAnova.Fit(new AnovaInput([.. groups.SelectMany(g => g)], [Factor(groups)], false, SumOfSquaresType.Sequential, 0.05));
        return (
            [.. levels.Select(ReferenceCsv.Number)],
            [.. groups.Select(g => Groups.Mean(g))],
            [.. groups.Select(g => (long)g.Length)],
            anova.ResidualMeanSquare.Value,
            anova.ResidualDf,
            anova.Terms[0].SumOfSquares);
    }

    private static FactorColumn Factor(double[][] groups)
    {
        var codes = groups.SelectMany((g, i) => Enumerable.Repeat(i, g.Length)).ToArray();
        return new FactorColumn("f", codes, [.. Enumerable.Range(0, groups.Length).Select(i => "L" + i.ToString(System.Globalization.CultureInfo.InvariantCulture))]);
    }

    // Kuehl (2000) plant density: means published (12, 16, 19, 18, 17); the classical coefficients
    // and the trend SS, F, p are an exact recomputation (kuehl-plant-density.expected.json,
    // exact fractions, 12 digits; p from mpmath).
    [Fact]
    public void Trends_KuehlPlantDensity_MatchExactRecomputation()
    {
        var k = Kuehl();
        Assert.Equal([12.0, 16, 19, 18, 17], k.Means.Select(m => Math.Round(m, 10)));
        var family = Contrasts.Trends(k.Values, k.Means, k.Counts, k.Mse, k.Df, 4, ContrastAdjustment.None, 0.05);
        double[][] classical = [[-2, -1, 0, 1, 2], [2, -1, -2, -1, 2], [-1, 2, 0, -2, 1], [1, -4, 6, -4, 1]];
        double[] ss = [43.2, 42, 0.3, 2.1];
        double[] f = [57.7540106952, 56.1497326203, 0.401069518717, 2.80748663102];
        double[] p = [1.840830354e-5, 2.078706368e-5, 0.5407496916, 0.1247621672];
        double[] value = [12, -14, 1, 7];
        for (var d = 0; d < 4; d++)
        {
            var c = family.Contrasts[d];
            Assert.Equal(Contrasts.TrendName(d + 1), c.Name);
            for (var i = 0; i < 5; i++)
            {
                Assert.True(Math.Abs(c.Coefficients[i] - classical[d][i]) <= 1e-12, $"{c.Name} coefficient {i}: {c.Coefficients[i]:R}");
            }

            Accuracy.AssertLre(c.SumOfSquares.Value, ss[d], 10, c.Name + " SS");
            Accuracy.AssertLre(c.F.Value, f[d], 10, c.Name + " F");
            Accuracy.AssertLre(c.P.Value, p[d], 8, c.Name + " p");
            Accuracy.AssertLre(c.Estimate, value[d], 10, c.Name + " contrast value");
        }

        // Exact recomputation: 43.2 + 42 + 0.3 + 2.1 = 87.6, the treatment SS.
        Accuracy.AssertLre(family.Contrasts.Sum(c => c.SumOfSquares.Value), 87.6, 10, "sum of trend SS");
        Assert.All(family.Orthogonality, o => Assert.True(o.OrthogonalUnweighted && o.OrthogonalWeighted));
    }

    // Unequally spaced levels and unequal n (invented data): the trend SS add up to the factor's
    // SS from the one-way ANOVA to 1e-10 relative (exact identity of the orthogonal decomposition),
    // the contrasts are orthogonal in the 1/n metric and, with unequal n, not all in the plain one.
    [Fact]
    public void Trends_UnequalSpacingAndN_AddUpToFactorSs()
    {
        double[] values = [1, 2, 4, 8, 9, 15];
        double[][] groups =
        [
            [3.1, 2.7],
            [4.0, 4.4, 3.9, 5.2, 4.8],
            [6.3, 5.9, 7.0],
            [7.7, 8.4, 8.1, 7.2],
            [7.9, 8.8, 8.3],
            [6.1, 6.6, 5.7, 6.9, 6.4, 6.0, 5.8],
        ];
        var anova = FactorialAnova.Fit(new AnovaInput([.. groups.SelectMany(g => g)], [Factor(groups)], false, SumOfSquaresType.Sequential, 0.05));
        var family = Contrasts.Trends(values, [.. groups.Select(g => Groups.Mean(g))], [.. groups.Select(g => (long)g.Length)], anova.ResidualMeanSquare.Value, anova.ResidualDf, 5, ContrastAdjustment.None, 0.05);
        var sum = family.Contrasts.Sum(c => c.SumOfSquares.Value);
        Assert.True(Math.Abs(sum - anova.Terms[0].SumOfSquares) <= 1e-10 * anova.Terms[0].SumOfSquares, $"{sum:R} vs {anova.Terms[0].SumOfSquares:R}");
        Assert.All(family.Orthogonality, o => Assert.True(o.OrthogonalWeighted, o.First + " x " + o.Second));
        Assert.Contains(family.Orthogonality, o => !o.OrthogonalUnweighted);
        Assert.All(family.Contrasts, c => Assert.True(Contrasts.SumsToZero(c.Coefficients)));

        // F = SS/MSE and t² = F for each (exact identities).
        foreach (var c in family.Contrasts)
        {
            Accuracy.AssertLre(c.F.Value, c.SumOfSquares.Value / anova.ResidualMeanSquare.Value, 12, c.Name);
            Accuracy.AssertLre(c.T.Value * c.T.Value, c.F.Value, 11, c.Name);
        }
    }

    // A linear trend on levels that lie exactly on a line: only the linear SS is non-zero
    // (exact hand computation: means 2x + 1 have no curvature).
    [Fact]
    public void Trends_MeansOnALine_OnlyLinear()
    {
        double[] values = [0, 1, 3, 7];
        double[] means = [.. values.Select(x => (2 * x) + 1)];
        var family = Contrasts.Trends(values, means, [2, 3, 4, 1], 1.0, 6, 3, ContrastAdjustment.None, 0.05);
        var total = family.Contrasts.Sum(c => c.SumOfSquares.Value);
        Assert.True(family.Contrasts[0].SumOfSquares.Value >= total * (1 - 1e-12));
        Assert.True(family.Contrasts[1].SumOfSquares.Value <= 1e-20 * total);
    }

    // Exact hand computation: means 12, 16, 19 with n = 3 each, MSE 0.748 on 10 df.
    // c = (1, -1/2, -1/2): L = 12 - 17.5 = -5.5, c'Mc = (1 + 1/4 + 1/4)/3 = 0.5,
    // SE = sqrt(0.374), SS = 30.25/0.5 = 60.5, F = 60.5/0.748.
    [Fact]
    public void OnGroupMeans_HandComputed()
    {
        var family = Contrasts.OnGroupMeans([12, 16, 19], [3, 3, 3], 0.748, 10, [new ContrastSpec("first vs rest", [1, -0.5, -0.5])], ContrastAdjustment.None, 0.05);
        var c = family.Contrasts[0];
        Accuracy.AssertLre(c.Estimate, -5.5, 14, "L");
        Accuracy.AssertLre(c.Se.Value, Math.Sqrt(0.374), 14, "SE");
        Accuracy.AssertLre(c.SumOfSquares.Value, 60.5, 13, "SS");
        Accuracy.AssertLre(c.F.Value, 60.5 / 0.748, 13, "F");
        Accuracy.AssertLre(c.CiLow.Value, -5.5 - (Probability.TCritical(0.05, 10) * Math.Sqrt(0.374)), 13, "low");
        Assert.Equal(c.P, c.PAdjusted);
    }

    // The sum-to-zero check is relative to the size of the coefficients: 1e-12 of Σ|c|.
    [Fact]
    public void SumsToZero_RelativeTolerance()
    {
        Assert.True(Contrasts.SumsToZero([1e6, -0.5e6, -0.5e6]));
        Assert.True(Contrasts.SumsToZero([0.1, 0.2, -0.3]));
        Assert.False(Contrasts.SumsToZero([1, -1 + 1e-10, 0]));
        Assert.False(Contrasts.SumsToZero([0, 0, 0]));
        Assert.Throws<ArgumentException>(() => Contrasts.OnGroupMeans([1, 2, 3], [2, 2, 2], 1, 3, [new ContrastSpec("bad", [1, -1 + 1e-10, 0])], ContrastAdjustment.None, 0.05));
        Assert.Throws<ArgumentException>(() => Contrasts.OnGroupMeans([1, 2, 3], [2, 2, 2], 1, 3, [new ContrastSpec("short", [1, -1])], ContrastAdjustment.None, 0.05));
    }

    // Orthogonality (exact hand computation): Helmert contrasts are orthogonal for equal n in both
    // metrics; for n = (2, 4, 4) (1, -1, 0) and (1, 1, -2) have Σcd = 0 but Σcd/n = 1/2 - 1/4 = 1/4.
    [Fact]
    public void Orthogonality_EqualAndUnequalN()
    {
        ContrastSpec[] helmert = [new("a", [1, -1, 0]), new("b", [1, 1, -2])];
        var equal = Contrasts.OnGroupMeans([1, 2, 4], [3, 3, 3], 1, 6, helmert, ContrastAdjustment.None, 0.05);
        Assert.True(equal.Orthogonality[0].OrthogonalUnweighted && equal.Orthogonality[0].OrthogonalWeighted);
        var unequal = Contrasts.OnGroupMeans([1, 2, 4], [2, 4, 4], 1, 7, helmert, ContrastAdjustment.None, 0.05);
        Assert.True(unequal.Orthogonality[0].OrthogonalUnweighted);
        Assert.False(unequal.Orthogonality[0].OrthogonalWeighted);
        Accuracy.AssertLre(unequal.Orthogonality[0].Weighted, 0.25, 14, "Σcd/n");
    }

    // Adjustments by their definitions (Bonferroni min(1, m p); Holm step-down; Scheffé
    // P(F(k-1, df) >= t²/(k-1)) with critical sqrt((k-1) F(alpha))).
    [Fact]
    public void Adjustments_FollowTheirDefinitions()
    {
        double[] means = [10, 11.2, 12.1, 10.4];
        long[] n = [4, 5, 4, 6];
        ContrastSpec[] specs = [new("1v2", [1, -1, 0, 0]), new("3v4", [0, 0, 1, -1]), new("12v34", [0.5, 0.5, -0.5, -0.5])];
        var none = Contrasts.OnGroupMeans(means, n, 0.9, 15, specs, ContrastAdjustment.None, 0.05);
        var bonf = Contrasts.OnGroupMeans(means, n, 0.9, 15, specs, ContrastAdjustment.Bonferroni, 0.05);
        var holm = Contrasts.OnGroupMeans(means, n, 0.9, 15, specs, ContrastAdjustment.Holm, 0.05);
        var scheffe = Contrasts.OnGroupMeans(means, n, 0.9, 15, specs, ContrastAdjustment.Scheffe, 0.05);
        var raw = none.Contrasts.Select(c => c.P.Value).ToArray();
        var order = raw.Select((p, i) => (p, i)).OrderBy(x => x.p).ToArray();
        for (var j = 0; j < 3; j++)
        {
            Accuracy.AssertLre(bonf.Contrasts[j].PAdjusted.Value, Math.Min(1, 3 * raw[j]), 14, "Bonferroni");
            var t = none.Contrasts[j].T.Value;
            Accuracy.AssertLre(scheffe.Contrasts[j].PAdjusted.Value, Probability.FUpper(t * t / 3, 3, 15), 14, "Scheffé");
        }

        Accuracy.AssertLre(holm.Contrasts[order[0].i].PAdjusted.Value, 3 * order[0].p, 14, "Holm first");
        Accuracy.AssertLre(holm.Contrasts[order[1].i].PAdjusted.Value, Math.Max(3 * order[0].p, 2 * order[1].p), 14, "Holm second");
        Accuracy.AssertLre(scheffe.CriticalValue.Value, Math.Sqrt(3 * Probability.FCritical(0.05, 3, 15)), 14, "Scheffé critical");
        Accuracy.AssertLre(bonf.CriticalValue.Value, Probability.TCritical(0.05 / 3, 15), 14, "Bonferroni critical");
        Assert.Equal(bonf.CriticalValue, holm.CriticalValue);
    }

    // No error df or a zero MSE: every inferential value undefined with a reason; estimate and SS kept.
    [Fact]
    public void NoErrorVariance_Undefined()
    {
        var family = Contrasts.OnGroupMeans([1, 3], [1, 1], 0, 0, [new ContrastSpec("d", [1, -1])], ContrastAdjustment.None, 0.05);
        Assert.False(family.Contrasts[0].P.IsDefined);
        Assert.False(family.CriticalValue.IsDefined);
        Accuracy.AssertLre(family.Contrasts[0].Estimate, -2, 15, "L");
    }

    /// <summary>3 to 6 levels: means, counts 1..6, one random contrast (made to sum to zero) and a permutation.</summary>
    private static Gen<(double[] Means, long[] N, double[] C, int[] Perm)> RelabelGen =>
        Gen.Choose(3, 6).SelectMany(k =>
            Gen.Choose(-500, 500).Select(v => v / 10.0).ArrayOf(k).SelectMany(
                means => Gen.Choose(1, 6).Select(x => (long)x).ArrayOf(k).SelectMany(
                    n => Gen.Choose(-9, 9).Select(x => (double)x).ArrayOf(k).SelectMany(
                        c => Gen.Shuffle(Enumerable.Range(0, k).ToArray()),
                        (c, perm) => (means, n, Centre(c), perm)))));

    private static double[] Centre(double[] c)
    {
        var m = c.Average();
        var centred = c.Select(v => v - m).ToArray();
        if (centred.All(v => v == 0))
        {
            centred[0] = 1;
            centred[1] = -1;
        }

        return centred;
    }

    // Property (issue #16): a contrast is invariant to relabelling, i.e. to permuting the level
    // order together with its coefficients: same estimate, SE, t, p, SS.
    [Property]
    public Property Contrast_RelabellingLevels_Invariant()
    {
        return Prop.ForAll(RelabelGen.ToArbitrary(), d =>
        {
            var a = Contrasts.OnGroupMeans(d.Means, d.N, 2.5, 20, [new ContrastSpec("c", d.C)], ContrastAdjustment.None, 0.05).Contrasts[0];
            var b = Contrasts.OnGroupMeans(
                [.. d.Perm.Select(i => d.Means[i])], [.. d.Perm.Select(i => d.N[i])], 2.5, 20,
                [new ContrastSpec("c", [.. d.Perm.Select(i => d.C[i])])], ContrastAdjustment.None, 0.05).Contrasts[0];
            return Close(a.Estimate, b.Estimate) && Close(a.Se.Value, b.Se.Value) && Close(a.P.Value, b.P.Value) && Close(a.SumOfSquares.Value, b.SumOfSquares.Value);
        });
    }

    // Property: polynomial trends do not depend on the order in which the levels are listed
    // (same SS per degree after permuting values, means and counts).
    [Property]
    public Property Trends_RelabellingLevels_Invariant()
    {
        return Prop.ForAll(RelabelGen.ToArbitrary(), d =>
        {
            var k = d.Means.Length;
            double[] values = [.. Enumerable.Range(0, k).Select(i => (i * i) + (0.5 * i))];
            var a = Contrasts.Trends(values, d.Means, d.N, 2.5, 20, k - 1, ContrastAdjustment.None, 0.05);
            var b = Contrasts.Trends([.. d.Perm.Select(i => values[i])], [.. d.Perm.Select(i => d.Means[i])], [.. d.Perm.Select(i => d.N[i])], 2.5, 20, k - 1, ContrastAdjustment.None, 0.05);
            return a.Contrasts.Zip(b.Contrasts).All(x => Close(x.First.SumOfSquares.Value, x.Second.SumOfSquares.Value, 1e-9));
        });
    }

    // Group means use the diagonal covariance diag(1/n) without building a k x k matrix (a factor
    // may have 10,000 levels): the result equals Evaluate with that matrix written out (exact hand
    // construction of the same quadratic forms), estimates, SEs, p-values and orthogonality alike.
    [Fact]
    public void GroupMeans_EqualTheExplicitDiagonalCovariance()
    {
        double[] means = [3.1, 4.7, 2.2, 5.9];
        long[] n = [2, 5, 3, 4];
        var m = new double[4, 4];
        for (var i = 0; i < 4; i++)
        {
            m[i, i] = 1.0 / n[i];
        }

        ContrastSpec[] specs = [new("a", [1, -1, 0, 0]), new("b", [1, 1, -2, 0]), new("c", [1, 1, 1, -3])];
        var fast = Contrasts.OnGroupMeans(means, n, 1.7, 10, specs, ContrastAdjustment.Holm, 0.05);
        var full = Contrasts.Evaluate(means, m, 1.7, 10, specs, ContrastAdjustment.Holm, 0.05);
        foreach (var (x, y) in fast.Contrasts.Zip(full.Contrasts))
        {
            Assert.True(Close(x.Estimate, y.Estimate) && Close(x.Se.Value, y.Se.Value) && Close(x.PAdjusted.Value, y.PAdjusted.Value) && Close(x.CiLow.Value, y.CiLow.Value), x.Name);
        }

        Assert.Equal(full.Orthogonality.Select(o => o.OrthogonalWeighted), fast.Orthogonality.Select(o => o.OrthogonalWeighted));
        Assert.Contains(fast.Orthogonality, o => !o.OrthogonalWeighted && o.OrthogonalUnweighted);
    }

    [Fact]
    public void GroupMeans_TenThousandLevels_OneContrast()
    {
        // 10,000 levels (the data limit): one contrast of two levels; a dense k x k covariance would
        // take 800 MB. Estimate = 1 − 0 by exact hand computation.
        var k = 10_000;
        var means = new double[k];
        means[0] = 1;
        var n = Enumerable.Repeat(2L, k).ToArray();
        var c = new double[k];
        c[0] = 1;
        c[k - 1] = -1;
        var r = Contrasts.OnGroupMeans(means, n, 1, k, [new ContrastSpec("ends", c)], ContrastAdjustment.None, 0.05).Contrasts[0];
        Assert.Equal(1, r.Estimate);
        Assert.Equal(1, r.Se.Value, 12); // sqrt(1 × (1/2 + 1/2))
    }

    private static bool Close(double a, double b, double rel = 1e-12) =>
        Math.Abs(a - b) <= rel * Math.Max(1e-300, Math.Max(Math.Abs(a), Math.Abs(b))) || Math.Abs(a - b) <= 1e-13;
}
