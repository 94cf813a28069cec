using StudyPress.Statistics.Assumptions;

namespace StudyPress.Statistics.Tests.Assumptions;

public class StudentizedResidualsTests
{
    /// <summary>One-way fit by group means: residuals, leverages 1/n_g, residual df N - k.</summary>
    private static (double[] E, double[] H, int Df) Fit(List<double[]> groups)
    {
        var e = new List<double>();
        var h = new List<double>();
        foreach (var g in groups)
        {
            var m = g.Average();
            e.AddRange(g.Select(v => v - m));
            h.AddRange(g.Select(_ => 1.0 / g.Length));
        }

        return (e.ToArray(), h.ToArray(), e.Count - groups.Count);
    }

    /// <summary>
    /// Definition by refitting (Cook and Weisberg 1982, section 2.2): drop observation i, refit the
    /// one-way model, and divide the deleted residual y_i - ŷ_(i) by its standard error
    /// sqrt(s²_(i) (1 + 1/(n_g - 1))), s²_(i) = SSE_(i) / (N - 1 - k).
    /// </summary>
    private static double[] ByRefit(List<double[]> groups)
    {
        var n = groups.Sum(g => g.Length);
        var k = groups.Count;
        var t = new List<double>();
        for (var gi = 0; gi < k; gi++)
        {
            for (var j = 0; j < groups[gi].Length; j++)
            {
                double sse = 0;
                double ownMean = 0;
                for (var g2 = 0; g2 < k; g2++)
                {
                    var kept = groups[g2].Where((_, idx) => g2 != gi || idx != j).ToArray();
                    var m = kept.Average();
                    sse += kept.Sum(v => (v - m) * (v - m));
                    if (g2 == gi)
                    {
                        ownMean = m;
                    }
                }

                var s2 = sse / (n - 1 - k);
                var deleted = groups[gi][j] - ownMean;
                t.Add(deleted / Math.Sqrt(s2 * (1 + (1.0 / (groups[gi].Length - 1)))));
            }
        }

        return t.ToArray();
    }

    public static TheoryData<string> Datasets() => ["prc433 balanced", "prc433 unbalanced", "gear"];

    private static List<double[]> Data(string name) => name switch
    {
        "prc433 balanced" => AssumptionsData.Grouped("nist-ehandbook", "prc433-resistor-3levels.csv"),

        // Real data, subset to make the leverages differ: level 1 keeps its first 3 values, level 3 its first 4.
        "prc433 unbalanced" => AssumptionsData.Grouped("nist-ehandbook", "prc433-resistor-3levels.csv")
            .Select((g, i) => i == 0 ? g.Take(3).ToArray() : i == 2 ? g.Take(4).ToArray() : g).ToList(),
        _ => AssumptionsData.Gear(),
    };

    // Definitional check against leave-one-out refits (Cook and Weisberg 1982) on NIST e-Handbook data.
    [Theory]
    [MemberData(nameof(Datasets))]
    public void StudentizedResiduals_OneWayFit_MatchLeaveOneOutRefit(string dataset)
    {
        var groups = Data(dataset);
        var (e, h, df) = Fit(groups);
        var expected = ByRefit(groups);
        var r = StudentizedResiduals.Compute(e, h, df, 0.05);
        Assert.Equal(df - 1, r.Df);
        Assert.Null(r.Reason);
        for (var i = 0; i < e.Length; i++)
        {
            var ri = r.Residuals[i];
            Assert.Equal(i, ri.Index);
            // Relative 1e-10, absolute near zero (a residual that is exactly 0 here is ~1e-14 in the refit).
            Assert.True(
                Math.Abs(ri.T.Value - expected[i]) <= 1e-10 * Math.Max(1, Math.Abs(expected[i])),
                $"t[{i}]: got {ri.T}, refit {expected[i]}");
            Assert.Equal(Probability.TTwoSided(expected[i], df - 1), ri.P.Value, 10);
            Assert.Equal(Math.Min(1, e.Length * ri.P.Value), ri.BonferroniP.Value, 15);
        }
    }

    // Constructed check (not a reference): one value of the GEAR data moved far away is flagged alone.
    [Fact]
    public void StudentizedResiduals_GrossOutlier_FlaggedAlone()
    {
        var groups = AssumptionsData.Gear();
        groups[3] = (double[])groups[3].Clone();
        groups[3][4] += 0.1; // about 15 residual standard deviations
        var (e, h, df) = Fit(groups);
        var r = StudentizedResiduals.Compute(e, h, df, 0.05);
        Assert.Equal([34], r.Flagged);
        Assert.True(r.Residuals[34].BonferroniP.Value < 1e-6);
    }

    [Fact]
    public void StudentizedResiduals_NoOutlierInGear_NoneFlagged()
    {
        var (e, h, df) = Fit(AssumptionsData.Gear());
        var r = StudentizedResiduals.Compute(e, h, df, 0.05);
        Assert.Empty(r.Flagged);
        Assert.All(r.Residuals, x => Assert.InRange(x.BonferroniP.Value, 0.0, 1.0));
    }

    // A group of one has h = 1 and residual 0: that observation is undefined, the others are computed.
    [Fact]
    public void StudentizedResiduals_LeverageOne_UndefinedForThatObservation()
    {
        var groups = new List<double[]> { new[] { 6.9, 5.4, 5.8, 4.6 }, new[] { 8.3 }, new[] { 8.0, 10.5, 8.1 } };
        var (e, h, df) = Fit(groups);
        var r = StudentizedResiduals.Compute(e, h, df, 0.05);
        Assert.False(r.Residuals[4].T.IsDefined);
        Assert.Contains("leverage 1", r.Residuals[4].T.Reason, StringComparison.Ordinal);
        Assert.True(r.Residuals[0].T.IsDefined);
        Assert.DoesNotContain(4, r.Flagged);
    }

    [Fact]
    public void StudentizedResiduals_AllResidualsZero_Undefined()
    {
        var r = StudentizedResiduals.Compute(new double[5], Enumerable.Repeat(0.4, 5).ToArray(), 3, 0.05);
        Assert.NotNull(r.Reason);
        Assert.All(r.Residuals, x => Assert.False(x.T.IsDefined));
        Assert.Empty(r.Flagged);
    }

    [Fact]
    public void StudentizedResiduals_OneResidualDf_Undefined()
    {
        var r = StudentizedResiduals.Compute([0.5, -0.5], [0.5, 0.5], 1, 0.05);
        Assert.NotNull(r.Reason);
        Assert.All(r.Residuals, x => Assert.False(x.P.IsDefined));
    }

    [Fact]
    public void StudentizedResiduals_LengthMismatch_Throws()
    {
        Assert.Throws<ArgumentException>(() => StudentizedResiduals.Compute([1.0, 2.0], [0.5], 3, 0.05));
    }

    // The screen computes p only near the Bonferroni bound: flags and the largest |t| must equal a
    // direct evaluation of every entry (definition: flagged when min(1, n p_i) < alpha).
    [Fact]
    public void StudentizedResiduals_Screened_SameFlagsAndLargestAsEveryEntry()
    {
        var rng = new Random(11);
        const int n = 20_000;
        var e = new double[n];
        var h = new double[n];
        for (var i = 0; i < n; i++)
        {
            e[i] = rng.NextDouble() - 0.5;
            h[i] = 1.0 / 4000;
        }

        e[17] = 3.0; // gross
        e[9_000] = -1.2; // near the bound
        e[12_345] = 1.2;
        var df = n - 5;
        var r = StudentizedResiduals.Compute(e, h, df, 0.05);
        var all = r.Residuals.ToList();
        var expectedFlags = all.Where(x => x.T.IsDefined && x.BonferroniP.Value < 0.05).Select(x => x.Index).ToList();
        Assert.Equal(expectedFlags, r.Flagged);
        Assert.Contains(17, r.Flagged);
        var largest = all.Where(x => x.T.IsDefined).OrderByDescending(x => Math.Abs(x.T.Value)).First();
        Assert.Equal(largest, r.Largest);
    }

    [Fact]
    public void ArrayAndCodedLeverages_SameResultAsPlainLists()
    {
        // Residuals as an array and leverages per cell (read through the codes directly) against
        // the same values as plain lists (read through the interface): every entry bit for bit.
        var rng = new Random(47);
        var cells = new[] { 1.0 / 500, 1.0 / 300, 1.0 / 200 };
        var codes = Enumerable.Range(0, 1_000).Select(i => i % 3 == 0 ? 0 : i % 3 == 1 ? 1 : 2).ToArray();
        var residuals = Enumerable.Range(0, 1_000).Select(_ => Math.Round(rng.NextDouble() - 0.5, 3)).ToArray();
        residuals[417] = 9.0; // one outlier, flagged
        var coded = new CodedValues(cells, codes);
        var fast = StudentizedResiduals.Compute(residuals, coded, 997, 0.05);
        var plain = StudentizedResiduals.Compute(residuals.ToList(), coded.ToList(), 997, 0.05);
        Assert.Equal(plain.Flagged, fast.Flagged);
        Assert.Contains(417, fast.Flagged);
        Assert.Equal(plain.Largest, fast.Largest);
        Assert.Equal(plain.Residuals.Count, fast.Residuals.Count);
        for (var i = 0; i < plain.Residuals.Count; i++)
        {
            Assert.Equal(plain.Residuals[i], fast.Residuals[i]);
            Assert.Equal(BitConverter.DoubleToInt64Bits(plain.Residuals[i].T.Value), BitConverter.DoubleToInt64Bits(fast.Residuals[i].T.Value));
        }
    }
}
