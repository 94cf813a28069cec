using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

public class DunnettOneSidedTests
{
    private static readonly double Half = Math.Sqrt(0.5);

    private static double[] Equal(int m) => Enumerable.Repeat(Half, m).ToArray();

    // Dunnett (1955), JASA 50, Tables 1a/1b (one-sided, equal n), pp. 1117-1118, 2 decimals
    // (published; Reference/dunnett/dunnett1955-critical-values.csv). The one-sided entries agree
    // with exact values within their rounding, so the exact value must round to the printed one
    // (largest known difference 0.006, so ±0.01 is allowed).
    [Theory]
    [InlineData(1, 10, 0.05, 1.81)]
    [InlineData(3, 10, 0.05, 2.34)]
    [InlineData(2, 30, 0.05, 1.99)]
    [InlineData(5, 30, 0.05, 2.33)]
    [InlineData(4, 12, 0.01, 3.32)]
    [InlineData(7, 12, 0.01, 3.56)]
    [InlineData(2, 60, 0.01, 2.64)]
    [InlineData(4, 60, 0.01, 2.87)]
    [InlineData(4, 60, 0.05, 2.21)]
    public void CriticalValueOneSided_Dunnett1955Tables1_WithinRounding(int m, int df, double alpha, double table)
    {
        Assert.InRange(Dunnett.CriticalValueOneSided(alpha, Equal(m), df), table - 0.01, table + 0.01);
    }

    // Library recomputation of the same entries (SciPy 1.10.1 double integral, about 1e-6 in
    // probability; dunnett1955.expected.json, "recomputed_c" printed to 5 decimals): within 3e-5.
    [Theory]
    [InlineData(1, 10, 0.05, 1.81246)]
    [InlineData(3, 10, 0.05, 2.33756)]
    [InlineData(2, 30, 0.05, 1.98903)]
    [InlineData(5, 30, 0.05, 2.33518)]
    [InlineData(4, 12, 0.01, 3.32189)]
    [InlineData(7, 12, 0.01, 3.56442)]
    [InlineData(2, 60, 0.01, 2.63813)]
    [InlineData(4, 60, 0.01, 2.86911)]
    [InlineData(4, 60, 0.05, 2.20660)]
    public void CriticalValueOneSided_LibraryRecomputation_FiveDecimals(int m, int df, double alpha, double recomputed)
    {
        Near(recomputed, Dunnett.CriticalValueOneSided(alpha, Equal(m), df), 3e-5);
    }

    // The 1955 two-sided entries for three or more treatments are conservative approximations;
    // the exact values are the library recomputation (dunnett1955.expected.json, "recomputed_c").
    // The existing two-sided code must meet those, not the 1955 entries.
    [Theory]
    [InlineData(3, 10, 0.05, 2.75900)]
    [InlineData(3, 20, 0.05, 2.54035)]
    [InlineData(4, 12, 0.01, 3.70949)]
    [InlineData(7, 12, 0.01, 3.96046)]
    [InlineData(4, 60, 0.05, 2.50839)]
    [InlineData(4, 60, 0.01, 3.12139)]
    public void CriticalValueTwoSided_ExactValues_NotThe1955Approximations(int m, int df, double alpha, double exact)
    {
        Near(exact, Dunnett.CriticalValue(alpha, Equal(m), df), 3e-5);
    }

    // Exact identity: one comparison is a single t, so P(T >= c) is the one-sided t tail
    // (half the two-sided p for c > 0, one minus it for c < 0), whatever lambda.
    [Theory]
    [InlineData(2.5, 0.6, 7)]
    [InlineData(8.0, 0.3, 1)]
    [InlineData(3.0, 0.9, 2)]
    [InlineData(12.0, 0.6, 1000)]
    [InlineData(1.0, 0.0, 30)]
    [InlineData(-1.5, 0.7, 12)]
    public void UpperProbabilityOneSided_OneComparison_EqualsOneSidedT(double c, double lambda, int df)
    {
        var expected = c > 0 ? 0.5 * Probability.TTwoSided(c, df) : 1 - (0.5 * Probability.TTwoSided(-c, df));
        Accuracy.AssertLre(Dunnett.UpperProbabilityOneSided(c, [lambda], df), expected, 12, "m = 1");
    }

    // Exact value: lambda = 0 in the normal limit makes the Z_i independent, so
    // P(max Z_i >= 0) = 1 - 2^-m (exact hand computation).
    [Fact]
    public void UpperProbabilityOneSided_IndependentNormals_AtZero_IsOneMinusHalfPowerM()
    {
        Accuracy.AssertLre(Dunnett.UpperProbabilityOneSided(0, [0.0, 0.0, 0.0], double.PositiveInfinity), 1 - 0.125, 12, "m = 3");
    }

    // Exact value: for equicorrelated normals with rho = 1/2 (lambda = sqrt(1/2)) and m = 2,
    // P(max Z_i >= 0) = 1 - P(both < 0) = 1 - (1/4 + asin(1/2)/(2 pi)) = 2/3 (Sheppard's orthant
    // formula, exact hand computation).
    [Fact]
    public void UpperProbabilityOneSided_TwoNormalsRhoHalf_AtZero_IsTwoThirds()
    {
        Accuracy.AssertLre(Dunnett.UpperProbabilityOneSided(0, Equal(2), double.PositiveInfinity), 2.0 / 3.0, 12, "orthant");
    }

    // Dunnett (1955) blood-count example (data published; Reference/dunnett/dunnett1955-blood-counts.csv).
    // Diff and t by exact hand computation (expected.json exact values, 12 digits); the one-sided
    // (greater) adjusted p-values are a library recomputation (SciPy, about 1e-6 in probability).
    [Fact]
    public void Greater_BloodCounts_MatchesRecomputedPValues()
    {
        var (_, rows) = ReferenceCsv.Read("dunnett", "dunnett1955-blood-counts.csv");
        var (levels, groups) = ReferenceCsv.GroupBy(rows, 0, 1);
        var ms = 1.38052333333;
        var r = Dunnett.CompareWithAlternative(levels, groups, MsResidual(groups), 12, 0.05, "control", DunnettAlternative.Greater);
        Accuracy.AssertLre(MsResidual(groups), ms, 11, "mse");
        var a = r.Comparisons.Single(c => c.LevelA == "A");
        var b = r.Comparisons.Single(c => c.LevelA == "B");
        Accuracy.AssertLre(a.Diff, 0.65, 12, "diff A");
        Accuracy.AssertLre(a.Statistic.Value, 0.857032125934, 10, "t A");
        Accuracy.AssertLre(b.Statistic.Value, 3.69375231124, 10, "t B");
        Near(0.324978, a.PAdjusted.Value, 2e-6);
        Near(0.002914, b.PAdjusted.Value, 2e-6);
        Assert.False(a.CiHigh.IsDefined);
        Assert.True(a.CiLow.IsDefined);
    }

    // Thomson and Short (1969) data via Dunnett's example set (Reference/dunnett/thomson-short-1969.csv):
    // one-sided greater p-values by library recomputation (SciPy, about 1e-6); T2 lies below the
    // control, so its p exceeds 1/2.
    [Fact]
    public void Greater_ThomsonShort_MatchesRecomputedPValues()
    {
        var (_, rows) = ReferenceCsv.Read("dunnett", "thomson-short-1969.csv");
        var (levels, groups) = ReferenceCsv.GroupBy(rows, 0, 1);
        Accuracy.AssertLre(MsResidual(groups), 0.398863636364, 11, "mse");
        var r = Dunnett.CompareWithAlternative(levels, groups, MsResidual(groups), 11, 0.05, "control", DunnettAlternative.Greater);
        Near(0.302248, r.Comparisons.Single(c => c.LevelA == "T1").PAdjusted.Value, 2e-6);
        Near(0.691153, r.Comparisons.Single(c => c.LevelA == "T2").PAdjusted.Value, 2e-6);
    }

    // Symmetry (exact): "less" on y is "greater" on -y; p-values equal, intervals mirrored.
    [Fact]
    public void Less_IsGreaterOnNegatedData()
    {
        var (_, rows) = ReferenceCsv.Read("dunnett", "dunnett1955-blood-counts.csv");
        var (levels, groups) = ReferenceCsv.GroupBy(rows, 0, 1);
        var negated = groups.Select(g => g.Select(v => -v).ToArray()).ToArray();
        var less = Dunnett.CompareWithAlternative(levels, negated, MsResidual(negated), 12, 0.05, "control", DunnettAlternative.Less);
        var greater = Dunnett.CompareWithAlternative(levels, groups, MsResidual(groups), 12, 0.05, "control", DunnettAlternative.Greater);
        for (var i = 0; i < less.Comparisons.Count; i++)
        {
            Accuracy.AssertLre(less.Comparisons[i].PAdjusted.Value, greater.Comparisons[i].PAdjusted.Value, 12, "p");
            Accuracy.AssertLre(less.Comparisons[i].CiHigh.Value, -greater.Comparisons[i].CiLow.Value, 12, "limit");
            Assert.False(less.Comparisons[i].CiLow.IsDefined);
        }
    }

    // The two-sided route of the new entry point is the existing procedure, bit for bit.
    [Fact]
    public void TwoSided_ThroughAlternative_IsBitIdenticalToCompare()
    {
        var (_, rows) = ReferenceCsv.Read("dunnett", "thomson-short-1969.csv");
        var (levels, groups) = ReferenceCsv.GroupBy(rows, 0, 1);
        var ms = MsResidual(groups);
        var a = Dunnett.Compare(levels, groups, ms, 11, 0.05, "control");
        var b = Dunnett.CompareWithAlternative(levels, groups, ms, 11, 0.05, "control", DunnettAlternative.TwoSided);
        Assert.Equal(a.CriticalValue, b.CriticalValue);
        Assert.Equal(a.Comparisons, b.Comparisons);
        // Library recomputation (SciPy, about 1e-6): two-sided adjusted p of T1 0.583172.
        Near(0.583172, a.Comparisons.Single(c => c.LevelA == "T1").PAdjusted.Value, 2e-6);
    }

    // Unequal n: the one-sided critical value with unequal lambdas lies between the one-sided t
    // quantile and the Bonferroni one (bounds), and its tail probability is alpha.
    [Fact]
    public void CriticalValueOneSided_UnequalN_SolvesTheTail()
    {
        double[] lambdas = [Math.Sqrt(4.0 / 10), Math.Sqrt(5.0 / 11)];
        var c = Dunnett.CriticalValueOneSided(0.05, lambdas, 12);
        Accuracy.AssertLre(Dunnett.UpperProbabilityOneSided(c, lambdas, 12), 0.05, 9, "tail at c");
        Assert.InRange(c, Probability.TCritical(0.10, 12), Probability.TCritical(0.05, 12));
    }

    // Printed digits (±half a unit) plus the recomputation's own accuracy.
    private static void Near(double expected, double actual, double tolerance) =>
        Assert.True(Math.Abs(actual - expected) <= tolerance, FormattableString.Invariant($"expected {expected} ± {tolerance}, got {actual:R}"));

    private static double MsResidual(double[][] groups)
    {
        double ss = 0;
        var n = 0;
        foreach (var g in groups)
        {
            var m = g.Average();
            ss += g.Sum(v => (v - m) * (v - m));
            n += g.Length;
        }

        return ss / (n - groups.Length);
    }
}
