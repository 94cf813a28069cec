using MathNet.Numerics;
using MathNet.Numerics.Integration;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.PostHoc;

public class DunnettTests
{
    private static readonly double Half = Math.Sqrt(0.5);

    private static double[] Equal(int m) => Enumerable.Repeat(Half, m).ToArray();

    // Dunnett (1955), JASA 50, Tables 2a and 2b (two-sided, equal n, rho = 1/2), pp. 1119-1120,
    // 2 decimals; values read from a stored third-party transcription citing those pages (the
    // paper itself was not read). For p = 1 and 2 treatments the 1955 two-sided values are exact
    // and must round to the printed value.
    [Theory]
    [InlineData(1, 10, 0.05, "2.23")]
    [InlineData(2, 30, 0.05, "2.32")]
    [InlineData(2, 60, 0.01, "2.90")]
    public void CriticalValue_Dunnett1955TwoSided_OneOrTwoTreatments_RoundsToTable(int m, int df, double alpha, string table)
    {
        Accuracy.AssertRoundsTo(Dunnett.CriticalValue(alpha, Equal(m), df), table, $"m {m}, df {df}, alpha {alpha}");
    }

    // Dunnett (1955) Tables 2a/2b as above, for p >= 3 treatments. Those two-sided entries were
    // obtained by an approximation that Dunnett (1964, Biometrics 20) replaced by exact values
    // (from memory: the 1955 entries for p >= 3 are slightly too large). So the exact value must lie
    // below the printed one, by less than 0.13; e.g. p = 3, df = 10 gives 2.76 (the 1964 table
    // value from memory, unverified) against 2.81 in 1955.
    [Theory]
    [InlineData(3, 10, 0.05, 2.81)]
    [InlineData(3, 20, 0.05, 2.57)]
    [InlineData(4, 12, 0.01, 3.76)]
    [InlineData(7, 12, 0.01, 4.08)]
    [InlineData(4, 60, 0.01, 3.14)]
    [InlineData(4, 60, 0.05, 2.55)]
    public void CriticalValue_Dunnett1955TwoSided_ThreeOrMoreTreatments_JustBelowApproximateTable(int m, int df, double alpha, double table)
    {
        var c = Dunnett.CriticalValue(alpha, Equal(m), df);
        Assert.InRange(c, table - 0.13, table + 0.005);
    }

    // Exact identity: with one comparison the statistic is a single t, so P(|T| >= c) is the
    // two-sided t p-value, whatever lambda.
    [Theory]
    [InlineData(2.5, 0.6, 7)]
    [InlineData(8.0, 0.3, 1)]
    [InlineData(3.0, 0.99, 2)]
    [InlineData(12.0, 0.6, 1000)]
    [InlineData(1.0, 0.0, 30)]
    public void UpperProbability_OneComparison_EqualsTwoSidedT(double c, double lambda, int df)
    {
        Accuracy.AssertLre(Dunnett.UpperProbability(c, [lambda], df), Probability.TTwoSided(c, df), 12, "m = 1");
    }

    [Fact]
    public void CriticalValue_OneComparison_EqualsTQuantile()
    {
        Accuracy.AssertLre(Dunnett.CriticalValue(0.05, [0.7], 9), Probability.TCritical(0.05, 9), 12, "t(0.975, 9)");
    }

    // Exact identity: with lambda -> 0 the comparisons are independent normals (df infinite), so
    // P(max |Z_i| >= c) = 1 - (1 - 2 Phi(-c))^m. lambda = 1e-4 gives correlations 1e-8, whose effect
    // on a two-sided probability is of second order.
    [Fact]
    public void UpperProbability_NearlyIndependentNormal_MatchesSidak()
    {
        var lam = Enumerable.Repeat(1e-4, 5).ToArray();
        foreach (var c in new[] { 1.5, 2.5, 4.0 })
        {
            var expected = PValueAdjustment.FamilyWiseErrorRate(5, Probability.NormalTwoSided(c));
            Accuracy.AssertLre(Dunnett.UpperProbability(c, lam, double.PositiveInfinity), expected, 10, $"c = {c}");
        }
    }

    // Independent computation: two comparisons with rho = 1/2 (equal n), df infinite and df 10,
    // against direct two-dimensional Gauss-Legendre integration of the bivariate normal and the
    // bivariate t density over the square [-c, c]^2 (no use of the one-factor reduction).
    [Theory]
    [InlineData(2.0, 0)]
    [InlineData(2.5, 10)]
    [InlineData(3.2, 10)]
    public void UpperProbability_TwoComparisons_MatchesDirectBivariateIntegration(double c, int df)
    {
        const double rho = 0.5;
        var det = 1 - (rho * rho);
        Func<double, double, double> density = df == 0
            ? (x, y) => Math.Exp(-((x * x) - (2 * rho * x * y) + (y * y)) / (2 * det)) / (2 * Math.PI * Math.Sqrt(det))
            : (x, y) =>
            {
                var q = ((x * x) - (2 * rho * x * y) + (y * y)) / det;
                var logc = SpecialFunctions.GammaLn((df + 2) / 2.0) - SpecialFunctions.GammaLn(df / 2.0) - Math.Log(df * Math.PI * Math.Sqrt(det));
                return Math.Exp(logc - ((df + 2) / 2.0 * Math.Log(1 + (q / df))));
            };

        // Composite rule: 8 x 8 panels of order 32.
        double inside = 0;
        const int panels = 8;
        var h = 2 * c / panels;
        for (var i = 0; i < panels; i++)
        {
            for (var j = 0; j < panels; j++)
            {
                inside += GaussLegendreRule.Integrate(density, -c + (i * h), -c + ((i + 1) * h), -c + (j * h), -c + ((j + 1) * h), 32);
            }
        }

        var p = Dunnett.UpperProbability(c, [Half, Half], df == 0 ? double.PositiveInfinity : df);
        Accuracy.AssertLre(p, 1 - inside, 9, $"c {c}, df {df}");
    }

    // Consistency: the critical value converges to the normal (df infinite) value as df grows.
    [Fact]
    public void CriticalValue_LargeDf_ApproachesNormalCase()
    {
        var inf = Dunnett.CriticalValue(0.05, Equal(4), double.PositiveInfinity);
        var big = Dunnett.CriticalValue(0.05, Equal(4), 1_000_000);
        Assert.InRange(big - inf, 0, 1e-5);
    }

    // Inequalities (unequal n): the adjusted p lies between the raw t p-value and the Sidak value
    // 1 - (1 - p)^m (Sidak's inequality for two-sided multivariate t), and the critical value lies
    // between the unadjusted and the Bonferroni t quantiles.
    [Fact]
    public void Compare_UnequalN_BetweenRawAndSidak()
    {
        string[] levels = ["ctrl", "x", "y", "z"];
        double[][] groups = [[10, 12, 11, 13, 9, 11], [14, 15, 13], [9, 10, 12, 11, 10, 12, 13, 9], [16, 12]];
        var r = Dunnett.Compare(levels, groups, 2.0, 15, 0.05, "ctrl");
        Assert.Equal(3, r.Comparisons.Count);
        var c = r.CriticalValue.Value;
        Assert.InRange(c, Probability.TCritical(0.05, 15), Probability.TCritical(0.05 / 3, 15));
        foreach (var cmp in r.Comparisons)
        {
            Assert.Equal("ctrl", cmp.LevelB);
            var raw = Probability.TTwoSided(cmp.Statistic.Value, 15);
            Assert.InRange(cmp.PAdjusted.Value, raw, PValueAdjustment.FamilyWiseErrorRate(3, raw));
            Assert.Equal(15.0, cmp.Df.Value);
            Accuracy.AssertLre(cmp.CiHigh.Value - cmp.Diff, c * cmp.Se.Value, 13, "half-width");
        }

        // Hand computation: x - ctrl = 14 - 11 = 3, se = sqrt(2 (1/3 + 1/6)) = 1.
        Accuracy.AssertLre(r.Comparisons[0].Diff, 3, 14, "diff");
        Accuracy.AssertLre(r.Comparisons[0].Se.Value, 1, 14, "se");
        Accuracy.AssertLre(r.Comparisons[0].Statistic.Value, 3, 14, "t");
    }

    // Definition of the critical value: the adjusted p of a statistic equal to it is alpha.
    [Fact]
    public void UpperProbability_AtCriticalValue_EqualsAlpha()
    {
        double[] lam = [0.5, 0.7, 0.3];
        var c = Dunnett.CriticalValue(0.01, lam, 20);
        Accuracy.AssertLre(Dunnett.UpperProbability(c, lam, 20), 0.01, 9, "P(max |T| >= c)");
    }

    // Hand computation: with one treatment Dunnett is the two-sided pooled t test.
    [Fact]
    public void Compare_OneTreatment_EqualsPooledTTest()
    {
        double[][] groups = [[3, 4, 5], [6, 8]];
        var d = Dunnett.Compare(["c", "t"], groups, 1.5, 3, 0.05, "c");
        var t = PooledTTests.Compare(["c", "t"], groups, 1.5, 3, 0.05, PValueAdjustmentMethod.Bonferroni, control: "c");
        Accuracy.AssertLre(d.Comparisons[0].PAdjusted.Value, t.Comparisons[0].PAdjusted.Value, 11, "p");
        Accuracy.AssertLre(d.CriticalValue.Value, t.CriticalValue.Value, 11, "critical");
        Accuracy.AssertLre(d.Comparisons[0].Diff, 3, 14, "t - c");
    }

    [Fact]
    public void Compare_ZeroResidualMeanSquare_Undefined()
    {
        var r = Dunnett.Compare(["c", "t"], [[1, 1], [2, 2]], 0.0, 2, 0.05, "c");
        Assert.False(r.CriticalValue.IsDefined);
        Assert.False(r.Comparisons[0].PAdjusted.IsDefined);
        Assert.False(r.Comparisons[0].CiLow.IsDefined);
        Assert.Equal(1.0, r.Comparisons[0].Diff);
    }

    [Fact]
    public void Compare_GroupOfOne_Defined()
    {
        var r = Dunnett.Compare(["c", "t", "u"], [[1, 2, 3], [5], [2, 2]], 1.0, 3, 0.05, "c");
        Assert.All(r.Comparisons, c => Assert.True(c.PAdjusted.IsDefined));
    }
}
