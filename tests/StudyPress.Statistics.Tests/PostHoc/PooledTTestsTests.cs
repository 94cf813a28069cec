using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.PostHoc;

public class PooledTTestsTests
{
    private static readonly string[] Levels = ["a", "b", "c"];

    // Hand computation data: means 2, 5, 9; SS within 2 + 2 + 14 = 18 on 6 df, MS = 3.
    private static readonly double[][] Data = [[1, 2, 3], [4, 6], [7, 8, 9, 12]];

    // Hand computation: se_ab = sqrt(3 (1/3 + 1/2)) = sqrt(2.5), se_ac = sqrt(1.75), se_bc = 1.5.
    [Fact]
    public void Compare_HandExample_DiffSeAndStatistic()
    {
        var r = PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Holm);
        Assert.Equal(3, r.Comparisons.Count);
        var (ab, ac, bc) = (r.Comparisons[0], r.Comparisons[1], r.Comparisons[2]);
        Assert.Equal(("a", "b"), (ab.LevelA, ab.LevelB));
        Assert.Equal(("b", "c"), (bc.LevelA, bc.LevelB));
        Accuracy.AssertLre(ab.Diff, -3, 15, "diff ab");
        Accuracy.AssertLre(ac.Diff, -7, 15, "diff ac");
        Accuracy.AssertLre(bc.Diff, -4, 15, "diff bc");
        Accuracy.AssertLre(ab.Se.Value, Math.Sqrt(2.5), 14, "se ab");
        Accuracy.AssertLre(ac.Se.Value, Math.Sqrt(1.75), 14, "se ac");
        Accuracy.AssertLre(bc.Se.Value, 1.5, 14, "se bc");
        Accuracy.AssertLre(ac.Statistic.Value, -Math.Sqrt(28), 14, "t ac = -7 / sqrt(1.75) = -sqrt(28)");
        Accuracy.AssertLre(bc.Statistic.Value, -4.0 / 1.5, 14, "t bc");
        Assert.All(r.Comparisons, c => Assert.Equal(6.0, c.Df.Value));
    }

    // Definition: Holm over the three raw two-sided t(6) p-values.
    [Fact]
    public void Compare_Holm_AdjustsRawTwoSidedP()
    {
        var r = PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Holm);
        var raw = r.Comparisons.Select(c => Probability.TTwoSided(c.Statistic.Value, 6)).ToArray();

        // Order of raw p by hand: ac (|t| 5.29) < bc (2.67) < ab (1.90).
        var pac = 3 * raw[1];
        var pbc = Math.Max(pac, 2 * raw[2]);
        var pab = Math.Max(pbc, raw[0]);
        Accuracy.AssertLre(r.Comparisons[1].PAdjusted.Value, pac, 14, "Holm ac");
        Accuracy.AssertLre(r.Comparisons[2].PAdjusted.Value, pbc, 14, "Holm bc");
        Accuracy.AssertLre(r.Comparisons[0].PAdjusted.Value, pab, 14, "Holm ab");
    }

    // Definition: Bonferroni interval diff ± t(1 - alpha/(2m); df) se, and P(|T_6| >= t) = alpha/m there.
    [Fact]
    public void Compare_Bonferroni_IntervalUsesBonferroniQuantile()
    {
        var r = PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Bonferroni);
        var crit = r.CriticalValue.Value;
        Accuracy.AssertLre(Probability.TTwoSided(crit, 6), 0.05 / 3, 10, "two-sided tail at the critical value");
        foreach (var c in r.Comparisons)
        {
            Accuracy.AssertLre(c.CiLow.Value, c.Diff - (crit * c.Se.Value), 14, "low");
            Accuracy.AssertLre(c.CiHigh.Value, c.Diff + (crit * c.Se.Value), 14, "high");
            var raw = Probability.TTwoSided(c.Statistic.Value, 6);
            Accuracy.AssertLre(c.PAdjusted.Value, Math.Min(1, 3 * raw), 14, "Bonferroni p");
        }
    }

    // Definition: Holm gets the same (Bonferroni) intervals; its p-values are never larger.
    [Fact]
    public void Compare_Holm_SameIntervalsAsBonferroniAndSmallerP()
    {
        var h = PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Holm);
        var b = PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Bonferroni);
        Assert.Equal(b.CriticalValue, h.CriticalValue);
        for (var i = 0; i < 3; i++)
        {
            Assert.Equal(b.Comparisons[i].CiLow, h.Comparisons[i].CiLow);
            Assert.True(h.Comparisons[i].PAdjusted.Value <= b.Comparisons[i].PAdjusted.Value);
        }
    }

    // Hand computation: control b, m = 2; Diff = level - control: a - b = -3, c - b = 4.
    [Fact]
    public void Compare_WithControl_ManyToOne()
    {
        var r = PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Bonferroni, control: "b");
        Assert.Equal(2, r.Comparisons.Count);
        Assert.Equal(("a", "b"), (r.Comparisons[0].LevelA, r.Comparisons[0].LevelB));
        Assert.Equal(("c", "b"), (r.Comparisons[1].LevelA, r.Comparisons[1].LevelB));
        Accuracy.AssertLre(r.Comparisons[1].Diff, 4, 15, "c - b");
        Accuracy.AssertLre(r.Comparisons[1].Se.Value, Math.Sqrt(3 * 0.75), 14, "se c - b");
        Accuracy.AssertLre(Probability.TTwoSided(r.CriticalValue.Value, 6), 0.05 / 2, 10, "m = 2");
    }

    [Fact]
    public void Compare_UnknownControl_Throws()
    {
        Assert.Throws<ArgumentException>(() => PooledTTests.Compare(Levels, Data, 3.0, 6, 0.05, PValueAdjustmentMethod.Holm, control: "z"));
    }

    [Fact]
    public void Compare_ZeroResidualMeanSquare_Undefined()
    {
        var r = PooledTTests.Compare(Levels, [[1, 1], [2, 2], [3]], 0.0, 2, 0.05, PValueAdjustmentMethod.Holm);
        Assert.False(r.CriticalValue.IsDefined);
        Assert.All(r.Comparisons, c =>
        {
            Assert.False(c.Se.IsDefined);
            Assert.False(c.PAdjusted.IsDefined);
            Assert.False(c.CiLow.IsDefined);
            Assert.Contains("zero", c.PAdjusted.Reason, StringComparison.Ordinal);
        });
        Assert.Equal(-1.0, r.Comparisons[0].Diff);
    }

    [Fact]
    public void Compare_NoResidualDf_Undefined()
    {
        var r = PooledTTests.Compare(["a", "b"], [[1.0], [2.0]], 1.0, 0, 0.05, PValueAdjustmentMethod.Holm);
        Assert.False(r.Comparisons[0].PAdjusted.IsDefined);
        Assert.False(r.Comparisons[0].Df.IsDefined);
    }

    // NIST/SEMATECH e-Handbook 7.4.7.1 (data and published Tukey 95 % intervals, 2 decimals).
    // The Bonferroni all-pairs intervals have the same centres (the mean differences) and, for
    // k = 4 and 16 df, are wider than Tukey's exact simultaneous intervals (common practice:
    // Bonferroni is conservative for all pairwise comparisons).
    [Fact]
    public void Compare_NistPrc471_CentresMatchPublishedAndWiderThanTukey()
    {
        var rows = File.ReadAllLines(ReferenceFiles.PathOf("nist-ehandbook", "prc471-tukey-4levels.csv")).Skip(1)
            .Select(l => l.Split(','))
            .Select(p => (Level: p[0], Value: double.Parse(p[1], CultureInfo.InvariantCulture)))
            .ToArray();
        string[] levels = ["1", "2", "3", "4"];
        var groups = levels.Select(l => rows.Where(r => r.Level == l).Select(r => r.Value).ToArray()).ToArray();
        var codes = rows.Select(r => Array.IndexOf(levels, r.Level)).ToArray();
        var anova = FactorialAnova.Fit(new AnovaInput(rows.Select(r => r.Value).ToArray(), [new FactorColumn("level", codes, levels)], false, SumOfSquaresType.Sequential, 0.05));
        var result = PooledTTests.Compare(levels, groups, anova.ResidualMeanSquare.Value, anova.ResidualDf, 0.05, PValueAdjustmentMethod.Bonferroni);

        using var json = JsonDocument.Parse(ReferenceFiles.ReadAllText("nist-ehandbook", "prc471-tukey.expected.json"));
        var intervals = json.RootElement.GetProperty("published").GetProperty("intervals");
        Assert.Equal(6, intervals.EnumerateObject().Count());
        foreach (var pair in intervals.EnumerateObject())
        {
            // Names look like "mu2-mu1": difference of level 2 minus level 1.
            var parts = pair.Name.Replace("mu", string.Empty, StringComparison.Ordinal).Split('-');
            var lo = double.Parse(pair.Value.GetProperty("lower").GetString()!, CultureInfo.InvariantCulture);
            var hi = double.Parse(pair.Value.GetProperty("upper").GetString()!, CultureInfo.InvariantCulture);
            var c = result.Comparisons.Single(x => (x.LevelA == parts[0] && x.LevelB == parts[1]) || (x.LevelA == parts[1] && x.LevelB == parts[0]));
            var sign = c.LevelA == parts[0] ? 1.0 : -1.0;
            Assert.InRange((sign * c.Diff) - ((lo + hi) / 2), -0.006, 0.006);
            var half = (c.CiHigh.Value - c.CiLow.Value) / 2;
            Assert.True(half > ((hi - lo) / 2) + 0.01, $"{pair.Name}: Bonferroni half-width {half} not wider than Tukey {(hi - lo) / 2}");
        }
    }
}
