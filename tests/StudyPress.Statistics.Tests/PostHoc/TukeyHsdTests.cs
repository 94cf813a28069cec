using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.PostHoc;

public class TukeyHsdTests
{
    private static (string[] Levels, double[][] Groups, double Ms, int Df) NistData()
    {
        var rows = File.ReadLines(ReferenceFiles.PathOf("nist-ehandbook", "prc471-tukey-4levels.csv")).Skip(1)
            .Where(l => l.Length > 0)
            .Select(l => l.Split(','))
            .Select(p => (Level: p[0], Value: double.Parse(p[1], CultureInfo.InvariantCulture)))
            .ToList();
        var levels = rows.Select(r => r.Level).Distinct().ToArray();
        var groups = levels.Select(l => rows.Where(r => r.Level == l).Select(r => r.Value).ToArray()).ToArray();
        double ss = 0;
        foreach (var g in groups)
        {
            ss += Groups.SumOfSquares(g, Groups.Mean(g));
        }

        var df = groups.Sum(g => g.Length) - groups.Length;
        return (levels, groups, ss / df, df);
    }

    [Fact]
    public void Compare_NistPrc471_IntervalsMatchPublishedToTwoDecimals()
    {
        // NIST/SEMATECH e-Handbook 7.4.7.1: six simultaneous 95 % intervals, 2 decimals (abs 0.01).
        var (levels, groups, ms, df) = NistData();
        Assert.Equal(1.33075, ms, 10);
        var result = TukeyHsd.Compare(levels, groups, ms, df, 0.05);
        Assert.Equal("Tukey HSD", result.Method);
        Assert.Equal(6, result.Comparisons.Count);
        Accuracy.AssertRoundsTo(result.CriticalValue.Value, "4.046", "q(0.05; 4, 16) (Gleason 1998)");

        using var doc = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-ehandbook", "prc471-tukey.expected.json")));
        var intervals = doc.RootElement.GetProperty("published").GetProperty("intervals");
        var checkedPairs = 0;
        foreach (var pair in intervals.EnumerateObject())
        {
            var names = pair.Name.Split('-');
            var a = names[0].Replace("mu", string.Empty, StringComparison.Ordinal);
            var b = names[1].Replace("mu", string.Empty, StringComparison.Ordinal);
            var lower = double.Parse(pair.Value.GetProperty("lower").GetString()!, CultureInfo.InvariantCulture);
            var upper = double.Parse(pair.Value.GetProperty("upper").GetString()!, CultureInfo.InvariantCulture);
            var c = result.Comparisons.Single(x => (x.LevelA == a && x.LevelB == b) || (x.LevelA == b && x.LevelB == a));
            var (lo, hi) = c.LevelA == a ? (c.CiLow.Value, c.CiHigh.Value) : (-c.CiHigh.Value, -c.CiLow.Value);
            Assert.True(Math.Abs(lo - lower) <= 0.01, $"{pair.Name} lower {lo} vs {lower}");
            Assert.True(Math.Abs(hi - upper) <= 0.01, $"{pair.Name} upper {hi} vs {upper}");
            checkedPairs++;
        }

        Assert.Equal(6, checkedPairs);
    }

    [Fact]
    public void Compare_NistPrc471_PairOrderDiffAndStatistic()
    {
        var (levels, groups, ms, df) = NistData();
        var result = TukeyHsd.Compare(levels, groups, ms, df, 0.05);
        string[] expected = ["1-2", "1-3", "1-4", "2-3", "2-4", "3-4"];
        Assert.Equal(expected, result.Comparisons.Select(c => c.LevelA + "-" + c.LevelB));

        // Level means 5.34, 7.72, 8.56, 5.5 (exact recomputation in the reference file).
        var first = result.Comparisons[0];
        Assert.Equal(5.34 - 7.72, first.Diff, 12);
        Assert.Equal(Math.Sqrt(ms * 0.4), first.Se.Value, 12);
        Assert.Equal(Math.Abs(first.Diff) / Math.Sqrt(ms / 2 * 0.4), first.Statistic.Value, 12);
        Assert.Equal(16.0, first.Df.Value);

        // Adjusted p from the studentized range; intervals exclude 0 exactly when p < alpha.
        foreach (var c in result.Comparisons)
        {
            Assert.Equal(StudentizedRange.Upper(c.Statistic.Value, 4, 16), c.PAdjusted.Value, 14);
            var excludesZero = c.CiLow.Value > 0 || c.CiHigh.Value < 0;
            Assert.Equal(excludesZero, c.PAdjusted.Value < 0.05);
        }
    }

    [Fact]
    public void Compare_UnequalSizes_UsesTukeyKramerStandardError()
    {
        double[][] groups = [[1, 2, 3], [2, 4, 6, 8, 10], [5, 5.5]];
        var r = TukeyHsd.Compare(["a", "b", "c"], groups, 2.5, 7, 0.05);
        Assert.Equal("Tukey–Kramer", r.Method);
        var ab = r.Comparisons[0];
        Assert.Equal(Math.Sqrt(2.5 * ((1 / 3.0) + (1 / 5.0))), ab.Se.Value, 14);
        Assert.Equal(r.CriticalValue.Value / Math.Sqrt(2) * ab.Se.Value, ab.CiHigh.Value - ab.Diff, 12);
    }

    [Fact]
    public void Compare_ShiftAndScale_PValuesInvariant()
    {
        var (levels, groups, ms, df) = NistData();
        var baseResult = TukeyHsd.Compare(levels, groups, ms, df, 0.05);
        var moved = groups.Select(g => g.Select(v => (3 * v) + 1000).ToArray()).ToArray();
        var movedResult = TukeyHsd.Compare(levels, moved, 9 * ms, df, 0.05);
        for (var i = 0; i < 6; i++)
        {
            Assert.Equal(baseResult.Comparisons[i].PAdjusted.Value, movedResult.Comparisons[i].PAdjusted.Value, 9);
            Assert.Equal(3 * baseResult.Comparisons[i].CiLow.Value, movedResult.Comparisons[i].CiLow.Value, 9);
        }
    }

    [Fact]
    public void Compare_ZeroResidualMeanSquare_IsUndefinedWithReason()
    {
        double[][] groups = [[1, 1], [2, 2], [3, 3]];
        var r = TukeyHsd.Compare(["a", "b", "c"], groups, 0, 3, 0.05);
        Assert.All(r.Comparisons, c =>
        {
            Assert.False(c.Statistic.IsDefined);
            Assert.False(c.PAdjusted.IsDefined);
            Assert.Contains("zero", c.Se.Reason, StringComparison.Ordinal);
        });
        Assert.Equal(-1.0, r.Comparisons[0].Diff);

        var noDf = TukeyHsd.Compare(["a", "b"], [[1.0], [2.0]], 1, 0, 0.05);
        Assert.False(noDf.CriticalValue.IsDefined);
        Assert.False(noDf.Comparisons[0].Df.IsDefined);
    }
}
