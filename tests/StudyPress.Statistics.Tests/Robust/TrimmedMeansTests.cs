using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Robust;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Robust;

// The heteroscedastic comparison of trimmed means against Reference/trimmed-means (SOURCE.md there
// gives each value's status): Welch's (1951) test at trim 0, SciPy's Yuen test for two groups, and
// exact hand computation on the e-Handbook resistor data.
public class TrimmedMeansTests
{
    private static List<double[]> Groups(string file, out List<string> levels)
    {
        var byLevel = new Dictionary<string, List<double>>(StringComparer.Ordinal);
        levels = [];
        foreach (var line in ReferenceFiles.ReadAllText("nist-ehandbook", file).Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1))
        {
            var cells = line.Trim().Split(',');
            if (!byLevel.TryGetValue(cells[0], out var list))
            {
                byLevel[cells[0]] = list = [];
                levels.Add(cells[0]);
            }

            list.Add(double.Parse(cells[1], CultureInfo.InvariantCulture));
        }

        return [.. levels.Select(l => byLevel[l].ToArray())];
    }

    private static JsonElement Out => JsonDocument.Parse(ReferenceFiles.ReadAllText("trimmed-means", "recompute.out.json")).RootElement;

    private static double D(JsonElement e, string name) => double.Parse(e.GetProperty(name).GetString()!, CultureInfo.InvariantCulture);

    private static void Rel(double expected, double actual, double tolerance, string what) =>
        Assert.True(Math.Abs(actual - expected) <= tolerance * Math.Abs(expected), string.Create(CultureInfo.InvariantCulture, $"{what}: got {actual:R}, expected {expected:R} (rel {tolerance})"));

    // Exact hand computation, e-Handbook resistor data (3 levels × 5), γ = 0.2: g = ⌊0.2·5⌋ = 1, h = 3.
    // Level 1 sorted 4.0 4.6 5.4 5.8 6.9: trimmed mean (4.6 + 5.4 + 5.8)/3 = 79/15; winsorized
    //   4.6 4.6 5.4 5.8 5.8, mean 5.24, squared deviations 2(0.64²) + 0.16² + 2(0.56²) = 1.472, /4 = 0.368.
    // Level 2 sorted 6.5 6.8 7.8 8.3 9.2: (6.8 + 7.8 + 8.3)/3 = 229/30; winsorized 6.8 6.8 7.8 8.3 8.3,
    //   mean 7.6, 2(0.8²) + 0.2² + 2(0.7²) = 2.30, /4 = 0.575.
    // Level 3 sorted 6.9 8.0 8.1 9.3 10.5: (8.0 + 8.1 + 9.3)/3 = 127/15; winsorized 8.0 8.0 8.1 9.3 9.3,
    //   mean 8.54, 2(0.54²) + 0.44² + 2(0.76²) = 1.932, /4 = 0.483.
    [Fact]
    public void Resistors_HandComputedTrimmedMeansAndWinsorizedVariances()
    {
        var r = TrimmedMeans.Test(Groups("prc433-resistor-3levels.csv", out _), 0.2);
        double[] means = [79.0 / 15, 229.0 / 30, 127.0 / 15];
        double[] variances = [0.368, 0.575, 0.483];
        for (var j = 0; j < 3; j++)
        {
            Assert.Equal(5, r.Groups[j].N);
            Assert.Equal(1, r.Groups[j].Trimmed);
            Assert.Equal(3, r.Groups[j].Effective);
            Rel(means[j], r.Groups[j].TrimmedMean.Value, 1e-15, "trimmed mean " + j);
            Rel(variances[j], r.Groups[j].WinsorizedVariance.Value, 1e-14, "winsorized variance " + j);
        }
    }

    // Exact recomputation (Python fractions, recompute.py): F = 873270242/102531309,
    // df2 = 12720968/3207963; p is scipy.stats.f.sf at those values (library value).
    [Fact]
    public void Resistors_ExactFAndDf2()
    {
        var e = Out.GetProperty("resistor_exact");
        var r = TrimmedMeans.Test(Groups("prc433-resistor-3levels.csv", out _), 0.2);
        Rel(873270242.0 / 102531309, r.F.Value, 1e-13, "F");
        Rel(D(e, "f_decimal"), r.F.Value, 1e-13, "F (printed)");
        Assert.Equal(2, r.Df1);
        Rel(12720968.0 / 3207963, r.Df2.Value, 1e-13, "df2");
        Rel(D(e, "p_scipy_f_sf"), r.P.Value, 1e-10, "p");
    }

    // Welch (1951): with γ = 0 the statistic is Welch's heteroscedastic F (WelchAnova, the anova
    // kind's Welch test) — same formulas with h = n and the ordinary variance.
    [Theory]
    [InlineData("gear.csv")]
    [InlineData("prc433-resistor-3levels.csv")]
    [InlineData("prc471-tukey-4levels.csv")]
    public void TrimZero_IsWelchsTest(string file)
    {
        var groups = Groups(file, out _);
        var t = TrimmedMeans.Test(groups, 0);
        var w = WelchAnova.Test(groups);
        Rel(w.F.Value, t.F.Value, 1e-12, "F");
        Assert.Equal(w.Df1, t.Df1);
        Rel(w.Df2.Value, t.Df2.Value, 1e-12, "df2");
        Rel(w.P.Value, t.P.Value, 1e-12, "p");
        for (var j = 0; j < groups.Count; j++)
        {
            Assert.Equal(groups[j].Length, t.Groups[j].Effective);
            Rel(groups[j].Average(), t.Groups[j].TrimmedMean.Value, 1e-14, "mean " + j);
        }
    }

    // Library value: SciPy 1.10.1, scipy.stats.ttest_ind(a, b, equal_var=False, trim=γ) (Yuen's
    // test) on two GEAR batches; for two groups F = t².
    [Fact]
    public void TwoGroups_MatchSciPysYuenTest()
    {
        var groups = Groups("gear.csv", out var levels);
        Assert.StartsWith("SciPy 1.10.1", Out.GetProperty("library").GetString(), StringComparison.Ordinal);
        var cases = Out.GetProperty("yuen_gear").EnumerateArray().ToList();
        Assert.Equal(3, cases.Count);
        foreach (var c in cases)
        {
            var a = groups[levels.IndexOf(c.GetProperty("a").GetString()!)];
            var b = groups[levels.IndexOf(c.GetProperty("b").GetString()!)];
            var r = TrimmedMeans.Test([a, b], D(c, "trim"));
            Rel(D(c, "t2"), r.F.Value, 1e-12, "t² " + c);
            Rel(D(c, "p"), r.P.Value, 1e-12, "p " + c);
            Assert.Equal(1, r.Df1);
        }
    }

    // Exact hand computation: a = 1..5 (γ = 0.4: g = 2, h = 1) has one value left after trimming.
    [Fact]
    public void OneValueLeftAfterTrimming_IsNotDefined()
    {
        var r = TrimmedMeans.Test([[1, 2, 3, 4, 5], [1, 2, 4, 8, 9, 10, 11]], 0.4);
        Assert.Equal(1, r.Groups[0].Effective);
        Assert.Equal(3, r.Groups[0].TrimmedMean.Value);
        Assert.False(r.F.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Contains("fewer than two values left", r.F.Reason, StringComparison.Ordinal);
    }

    // Exact hand computation: 1 5 5 5 9 (γ = 0.2) winsorizes to 5 5 5 5 5, variance 0; 1..5 to 2 2 3 4 4.
    [Fact]
    public void ZeroWinsorizedVariance_IsNotDefined()
    {
        var r = TrimmedMeans.Test([[1, 5, 5, 5, 9], [1, 2, 3, 4, 5]], 0.2);
        Assert.Equal(0, r.Groups[0].WinsorizedVariance.Value);
        Assert.Equal(5, r.Groups[0].TrimmedMean.Value);
        Assert.Equal(1.0, r.Groups[1].WinsorizedVariance.Value); // 2 2 3 4 4: mean 3, squared deviations 4, /4
        Assert.False(r.F.IsDefined);
        Assert.Contains("winsorized variance is zero", r.F.Reason, StringComparison.Ordinal);
    }

    // g = ⌊γn⌋ on γ as written: 0.29 × 100 = 29 exactly (a binary product gives 28.999…).
    [Theory]
    [InlineData(0.29, 100, 29)]
    [InlineData(0.2, 10, 2)]
    [InlineData(0.2, 9, 1)]
    [InlineData(0.1, 30, 3)]
    [InlineData(0.0, 7, 0)]
    [InlineData(0.49, 2, 0)]
    public void TrimCount_IsTheFloorOfTheDecimalProduct(double trim, int n, int g) =>
        Assert.Equal(g, TrimmedMeans.TrimCount(trim, n));

    [Theory]
    [InlineData(-0.1)]
    [InlineData(0.5)]
    [InlineData(double.NaN)]
    public void TrimOutsideItsRange_Throws(double trim) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => TrimmedMeans.TrimCount(trim, 10));
}
