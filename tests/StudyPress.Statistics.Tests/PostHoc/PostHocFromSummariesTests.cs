using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Descriptive;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Assumptions;

namespace StudyPress.Statistics.Tests.PostHoc;

/// <summary>
/// The summary-based post-hoc procedures against the procedures on the values, on the NIST/SEMATECH
/// e-Handbook data of section 7.4.7.1 (prc471, 4 levels, Tukey example) and of section 1.3.5.7
/// (GEAR, 10 batches of 10). Each group's summary is pooled from its two halves by the
/// parallel-axis formula, as a database's cells are pooled into a block's groups, so the pooling
/// is exercised too. Agreement to 1e-12 relative in every value.
/// </summary>
public class PostHocFromSummariesTests
{
    public static TheoryData<string> Datasets => new() { "prc471", "gear" };

    private static (string[] Levels, List<double[]> Groups) Data(string name)
    {
        var groups = name == "gear" ? AssumptionsData.Gear() : AssumptionsData.Grouped("nist-ehandbook", "prc471-tukey-4levels.csv");
        var levels = Enumerable.Range(1, groups.Count).Select(i => "L" + i.ToString(System.Globalization.CultureInfo.InvariantCulture)).ToArray();
        return (levels, groups);
    }

    private static GroupStatistics Stat(double[] v)
    {
        var m = Groups.Mean(v);
        return new GroupStatistics(v.Length, m, Groups.SumOfSquares(v, m));
    }

    /// <summary>Each group summarised from its two halves, then pooled.</summary>
    private static List<GroupStatistics> Summaries(List<double[]> groups) =>
        groups.Select(g => DescriptivesFromSummaries.Pool([Stat(g[..(g.Length / 2)]), Stat(g[(g.Length / 2)..])])).ToList();

    private static (double Ms, int Df) Residual(List<double[]> groups)
    {
        var ss = groups.Sum(g => Groups.SumOfSquares(g, Groups.Mean(g)));
        var df = groups.Sum(g => g.Length) - groups.Count;
        return (ss / df, df);
    }

    private static void Near(double expected, double actual, string what)
    {
        var tol = 1e-12 * Math.Max(1.0, Math.Abs(expected));
        Assert.True(Math.Abs(expected - actual) <= tol, $"{what}: {actual:R} vs {expected:R}");
    }

    private static void Same(Quantity expected, Quantity actual, string what)
    {
        Assert.Equal(expected.IsDefined, actual.IsDefined);
        if (expected.IsDefined)
        {
            Near(expected.Value, actual.Value, what);
        }
        else
        {
            Assert.Equal(expected.Reason, actual.Reason);
        }
    }

    private static void Same(PostHocResult expected, PostHocResult actual)
    {
        Assert.Equal(expected.Method, actual.Method);
        Same(expected.CriticalValue, actual.CriticalValue, "critical value");
        Assert.Equal(expected.Comparisons.Count, actual.Comparisons.Count);
        for (var i = 0; i < expected.Comparisons.Count; i++)
        {
            var e = expected.Comparisons[i];
            var a = actual.Comparisons[i];
            var pair = e.LevelA + "-" + e.LevelB;
            Assert.Equal((e.LevelA, e.LevelB), (a.LevelA, a.LevelB));
            Near(e.Diff, a.Diff, pair + " diff");
            Same(e.Se, a.Se, pair + " se");
            Same(e.Statistic, a.Statistic, pair + " statistic");
            Same(e.CiLow, a.CiLow, pair + " ci_low");
            Same(e.CiHigh, a.CiHigh, pair + " ci_high");
            Same(e.PAdjusted, a.PAdjusted, pair + " p");
            Same(e.Df, a.Df, pair + " df");
        }
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void Tukey_EqualsTheProcedureOnValues(string name)
    {
        var (levels, groups) = Data(name);
        var (ms, df) = Residual(groups);
        Same(TukeyHsd.Compare(levels, groups, ms, df, 0.05), PostHocFromSummaries.CompareTukey(levels, Summaries(groups), ms, df, 0.05));
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void TukeyKramer_UnequalSizes_EqualsTheProcedureOnValues(string name)
    {
        var (levels, groups) = Data(name);
        groups[0] = groups[0][..^1];
        var (ms, df) = Residual(groups);
        var raw = TukeyHsd.Compare(levels, groups, ms, df, 0.05);
        Assert.Equal("Tukey–Kramer", raw.Method);
        Same(raw, PostHocFromSummaries.CompareTukey(levels, Summaries(groups), ms, df, 0.05));
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void GamesHowell_EqualsTheProcedureOnValues(string name)
    {
        var (levels, groups) = Data(name);
        groups[1] = groups[1][..^2];
        Same(GamesHowell.Compare(levels, groups, 0.05), PostHocFromSummaries.CompareGamesHowell(levels, Summaries(groups), 0.05));
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void HolmAndBonferroni_EqualTheProcedureOnValues(string name)
    {
        var (levels, groups) = Data(name);
        var (ms, df) = Residual(groups);
        foreach (var method in new[] { PValueAdjustmentMethod.Holm, PValueAdjustmentMethod.Bonferroni })
        {
            Same(PooledTTests.Compare(levels, groups, ms, df, 0.05, method), PostHocFromSummaries.ComparePooledT(levels, Summaries(groups), ms, df, 0.05, method));
            Same(PooledTTests.Compare(levels, groups, ms, df, 0.05, method, "L2"), PostHocFromSummaries.ComparePooledT(levels, Summaries(groups), ms, df, 0.05, method, "L2"));
        }
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void Dunnett_EqualsTheProcedureOnValues(string name)
    {
        var (levels, groups) = Data(name);
        groups[2] = groups[2][..^1];
        var (ms, df) = Residual(groups);
        Same(Dunnett.Compare(levels, groups, ms, df, 0.05, "L1"), PostHocFromSummaries.CompareDunnett(levels, Summaries(groups), ms, df, 0.05, "L1"));
    }

    [Fact]
    public void EdgeCases_SameReasonsAsTheProcedureOnValues()
    {
        // A group of one (Games–Howell undefined for its pairs) and zero residual variance.
        string[] levels = ["a", "b", "c"];
        List<double[]> groups = [[1.0], [2.0, 2.0], [3.0, 3.0, 3.0]];
        var s = groups.Select(Stat).ToList();
        Same(GamesHowell.Compare(levels, groups, 0.05), PostHocFromSummaries.CompareGamesHowell(levels, s, 0.05));
        Same(TukeyHsd.Compare(levels, groups, 0.0, 3, 0.05), PostHocFromSummaries.CompareTukey(levels, s, 0.0, 3, 0.05));
        Same(Dunnett.Compare(levels, groups, 0.0, 3, 0.05, "a"), PostHocFromSummaries.CompareDunnett(levels, s, 0.0, 3, 0.05, "a"));
        Same(PooledTTests.Compare(levels, groups, 0.0, 0, 0.05, PValueAdjustmentMethod.Holm), PostHocFromSummaries.ComparePooledT(levels, s, 0.0, 0, 0.05, PValueAdjustmentMethod.Holm));
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void Descriptives_MomentsEqualTheValuesVersion(string name)
    {
        var (_, groups) = Data(name);
        var pooled = Summaries(groups);
        for (var i = 0; i < groups.Count; i++)
        {
            var raw = Descriptives.Compute(groups[i], groups[i], 0.0, 0.05);
            var fromSummary = DescriptivesFromSummaries.Compute(pooled[i], 0.0, 0.05);
            Assert.Equal(raw.N, fromSummary.N);
            Near(raw.Mean, fromSummary.Mean, "mean");
            Same(raw.Sd, fromSummary.Sd, "sd");
            Same(raw.Se, fromSummary.Se, "se");
            Same(raw.CiLow, fromSummary.CiLow, "ci_low");
            Same(raw.CiHigh, fromSummary.CiHigh, "ci_high");
        }
    }

    [Fact]
    public void Pool_ParallelAxis_ByHand()
    {
        // {1, 2} and {4, 6, 8}: n 5, mean 21/5 = 4.2, SS = Σ(y − 4.2)² = 10.24 + 4.84 + 0.04 + 3.24 + 14.44 = 32.8.
        var p = DescriptivesFromSummaries.Pool([Stat([1, 2]), Stat([4, 6, 8])]);
        Assert.Equal(5, p.Count);
        Assert.Equal(4.2, p.Mean, 14);
        Assert.Equal(32.8, p.SumOfSquares, 12);
    }
}
