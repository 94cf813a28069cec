using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Tests.PostHoc;

public class GamesHowellTests
{
    private static readonly double[][] Unequal =
    [
        [10.1, 11.3, 9.8, 10.6, 12.0, 10.9],
        [13.4, 15.9, 11.2, 16.8, 14.1],
        [9.7, 10.0, 10.2, 9.9, 10.1, 10.4, 9.8, 10.3],
        [12.5, 18.0, 8.9, 15.2],
    ];

    [Fact]
    public void Compare_TwoGroups_ReducesToWelchTTest()
    {
        // Games and Howell (1976) with k = 2 is Welch's t test: q = sqrt(2)|t| and
        // P(Q_{2,df} > q) = P(|T_df| > |t|) (common practice; MathNet-based t tail to 1e-9).
        double[] a = [10.1, 11.3, 9.8, 10.6, 12.0, 10.9];
        double[] b = [13.4, 15.9, 11.2, 16.8, 14.1];
        var r = GamesHowell.Compare(["a", "b"], [a, b], 0.05);
        var c = Assert.Single(r.Comparisons);

        var va = Variance(a) / a.Length;
        var vb = Variance(b) / b.Length;
        var se = Math.Sqrt(va + vb);
        var t = (a.Average() - b.Average()) / se;
        var df = (va + vb) * (va + vb) / ((va * va / (a.Length - 1)) + (vb * vb / (b.Length - 1)));
        Assert.Equal(df, c.Df.Value, 10);
        Assert.Equal(se, c.Se.Value, 12);
        Assert.Equal(Math.Sqrt(2) * Math.Abs(t), c.Statistic.Value, 10);
        Assert.Equal(Probability.TTwoSided(Math.Abs(t), df), c.PAdjusted.Value, 9);

        // The interval is the Welch t interval: diff +/- t(1 - alpha/2, df) se.
        var half = Probability.TCritical(0.05, df) * se;
        Assert.Equal(c.Diff + half, c.CiHigh.Value, 8);
        Assert.False(r.CriticalValue.IsDefined);
    }

    [Fact]
    public void Compare_FourGroups_IntervalExcludesZeroExactlyWhenSignificant()
    {
        var r = GamesHowell.Compare(["a", "b", "c", "d"], Unequal, 0.05);
        Assert.Equal(6, r.Comparisons.Count);
        var significant = 0;
        foreach (var c in r.Comparisons)
        {
            var excludesZero = c.CiLow.Value > 0 || c.CiHigh.Value < 0;
            Assert.Equal(excludesZero, c.PAdjusted.Value < 0.05);
            significant += excludesZero ? 1 : 0;

            // Welch-Satterthwaite df lies between min(n) - 1 and n_i + n_j - 2.
            Assert.InRange(c.Df.Value, 3, 12);
        }

        Assert.InRange(significant, 1, 5);
    }

    [Fact]
    public void Compare_RelabelAndScale_Invariant()
    {
        var r = GamesHowell.Compare(["a", "b", "c", "d"], Unequal, 0.05);
        var scaled = Unequal.Select(g => g.Select(v => (-2 * v) + 7).ToArray()).ToArray();
        var s = GamesHowell.Compare(["a", "b", "c", "d"], scaled, 0.05);
        for (var i = 0; i < r.Comparisons.Count; i++)
        {
            Assert.Equal(r.Comparisons[i].PAdjusted.Value, s.Comparisons[i].PAdjusted.Value, 9);
            Assert.Equal(-2 * r.Comparisons[i].Diff, s.Comparisons[i].Diff, 9);
        }

        // Swapping two groups swaps the sign of their difference and keeps p.
        var swapped = GamesHowell.Compare(["b", "a"], [Unequal[1], Unequal[0]], 0.05);
        var straight = GamesHowell.Compare(["a", "b"], [Unequal[0], Unequal[1]], 0.05);
        Assert.Equal(-straight.Comparisons[0].Diff, swapped.Comparisons[0].Diff, 12);
        Assert.Equal(straight.Comparisons[0].PAdjusted.Value, swapped.Comparisons[0].PAdjusted.Value, 12);
    }

    [Fact]
    public void Compare_GroupOfOneAndZeroVariance_AreUndefinedWithReasons()
    {
        double[][] groups = [[5.0], [1, 1, 1], [2, 2], [3, 4, 5]];
        var r = GamesHowell.Compare(["one", "flatA", "flatB", "ok"], groups, 0.05);
        var oneFlat = r.Comparisons[0];
        Assert.False(oneFlat.PAdjusted.IsDefined);
        Assert.Contains("'one' has one observation", oneFlat.PAdjusted.Reason, StringComparison.Ordinal);
        var flatFlat = r.Comparisons.Single(c => c.LevelA == "flatA" && c.LevelB == "flatB");
        Assert.Contains("zero variance", flatFlat.Se.Reason, StringComparison.Ordinal);
        var flatOk = r.Comparisons.Single(c => c.LevelA == "flatA" && c.LevelB == "ok");
        Assert.True(flatOk.PAdjusted.IsDefined);
        Assert.Equal(2.0, flatOk.Df.Value, 12);
    }

    private static double Variance(double[] x)
    {
        var m = x.Average();
        return x.Sum(v => (v - m) * (v - m)) / (x.Length - 1);
    }
}
