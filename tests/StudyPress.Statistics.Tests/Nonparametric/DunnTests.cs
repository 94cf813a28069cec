using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Nonparametric;

public class DunnTests
{
    private static readonly string[] Levels = ["A", "B", "C"];

    // Same tied data as the Kruskal-Wallis hand computation: mean ranks 7/3, 5, 33/4, N = 10,
    // sum (t^3 - t) = 48.
    private static readonly double[][] Data = [[1, 2, 2], [2, 3, 5], [5, 5, 6, 7]];

    // Hand computation (Dunn 1964 with the tie-corrected variance):
    // V = N (N + 1)/12 - 48 / (12 (N - 1)) = 110/12 - 48/108 = 157/18.
    // A-B: diff = -8/3, se = sqrt(V (1/3 + 1/3)) = sqrt(157/27).
    // A-C: diff = -71/12, se = sqrt(V (1/3 + 1/4)) = sqrt(1099/216). B-C: diff = -13/4, same se.
    [Fact]
    public void Compare_HandComputationWithTies_DiffSeZ()
    {
        var r = Dunn.Compare(Levels, Data, 0.05);
        var (ab, ac, bc) = (r.Comparisons[0], r.Comparisons[1], r.Comparisons[2]);
        Assert.Equal(("A", "B"), (ab.LevelA, ab.LevelB));
        Assert.Equal(("A", "C"), (ac.LevelA, ac.LevelB));
        Accuracy.AssertLre(ab.Diff, -8.0 / 3, 15, "diff AB");
        Accuracy.AssertLre(ac.Diff, -71.0 / 12, 15, "diff AC");
        Accuracy.AssertLre(bc.Diff, -13.0 / 4, 15, "diff BC");
        Accuracy.AssertLre(ab.Se.Value, Math.Sqrt(157.0 / 27), 14, "se AB");
        Accuracy.AssertLre(ac.Se.Value, Math.Sqrt(1099.0 / 216), 14, "se AC");
        Accuracy.AssertLre(bc.Se.Value, Math.Sqrt(1099.0 / 216), 14, "se BC");
        Accuracy.AssertLre(ac.Statistic.Value, -71.0 / 12 / Math.Sqrt(1099.0 / 216), 14, "z AC");
        Assert.False(ab.CiLow.IsDefined);
        Assert.False(ab.CiHigh.IsDefined);
        Assert.Contains("no interval", ab.CiLow.Reason, StringComparison.Ordinal);
        Assert.False(ab.Df.IsDefined);
    }

    // Hand computation of Holm: |z| order AC (2.62) > BC (1.44) > AB (1.11), so
    // p~AC = 3 p_AC, p~BC = max(p~AC, 2 p_BC), p~AB = max(p~BC, p_AB); here p_AB < 2 p_BC, so the
    // running maximum gives AB the same adjusted value as BC.
    [Fact]
    public void Compare_Holm_RunningMaximum()
    {
        var r = Dunn.Compare(Levels, Data, 0.05);
        var raw = r.Comparisons.Select(c => Probability.NormalTwoSided(c.Statistic.Value)).ToArray();
        Assert.True(raw[0] < 2 * raw[2]);
        var pac = 3 * raw[1];
        var pbc = Math.Max(pac, 2 * raw[2]);
        Accuracy.AssertLre(r.Comparisons[1].PAdjusted.Value, pac, 14, "AC");
        Accuracy.AssertLre(r.Comparisons[2].PAdjusted.Value, pbc, 14, "BC");
        Assert.Equal(r.Comparisons[2].PAdjusted, r.Comparisons[0].PAdjusted);
        Assert.Contains("Holm", r.Method, StringComparison.Ordinal);
    }

    [Fact]
    public void Compare_Bonferroni_TimesThree()
    {
        var r = Dunn.Compare(Levels, Data, 0.05, PValueAdjustmentMethod.Bonferroni);
        foreach (var c in r.Comparisons)
        {
            Accuracy.AssertLre(c.PAdjusted.Value, Math.Min(1, 3 * Probability.NormalTwoSided(c.Statistic.Value)), 14, c.LevelA + c.LevelB);
        }

        // z(1 - 0.05/6): its two-sided tail is 0.05/3.
        Accuracy.AssertLre(Probability.NormalTwoSided(r.CriticalValue.Value), 0.05 / 3, 12, "critical z");
    }

    // Identity: Dunn's mean ranks are the Kruskal-Wallis mean ranks, and with k = 2 and no ties
    // z^2 equals H (both are the standardised rank-sum difference).
    [Fact]
    public void Compare_TwoGroupsNoTies_ZSquaredEqualsKruskalWallisH()
    {
        double[][] g = [[1.5, 3.1, 0.2, 8.8], [2.7, 9.4, 5.5]];
        var d = Dunn.Compare(["x", "y"], g, 0.05);
        var kw = KruskalWallis.Test(g);
        var z = d.Comparisons[0].Statistic.Value;
        Accuracy.AssertLre(z * z, kw.H.Value, 13, "z^2 = H");
        Accuracy.AssertLre(d.Comparisons[0].Diff, kw.MeanRanks[0] - kw.MeanRanks[1], 15, "diff");
    }

    [Fact]
    public void Compare_AllTied_Undefined()
    {
        var r = Dunn.Compare(Levels, [[3, 3], [3], [3, 3]], 0.05);
        Assert.All(r.Comparisons, c =>
        {
            Assert.False(c.Se.IsDefined);
            Assert.False(c.Statistic.IsDefined);
            Assert.False(c.PAdjusted.IsDefined);
            Assert.Equal(0.0, c.Diff);
        });
    }
}
