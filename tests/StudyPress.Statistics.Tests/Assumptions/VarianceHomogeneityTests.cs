using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Assumptions;

public class VarianceHomogeneityTests
{
    private const string Folder = "nist-ehandbook";
    private const string LeveneFile = "eda35a-levene-gear.expected.json";
    private const string BartlettFile = "eda357-bartlett-gear.expected.json";

    // Source: NIST/SEMATECH e-Handbook 1.3.5.10 (GEAR data), median-centred Levene W = 1.705910,
    // df 9 and 90; relative 1e-5 (reference README), i.e. LRE >= 5.
    [Fact]
    public void BrownForsythe_NistGear_MatchesPublishedW()
    {
        var published = AssumptionsData.JsonNumber(Folder, LeveneFile, "published", "W");
        var r = BrownForsythe.Test(AssumptionsData.Gear());
        Accuracy.AssertLre(r.F.Value, published, 5, "Brown-Forsythe W");
        Assert.Equal(9, r.Df1);
        Assert.Equal(90, r.Df2);

        // Published conclusion: W below the 5 % critical value 1.9855, so H0 is not rejected.
        Assert.True(r.P.Value > 0.05);
    }

    // Exact recomputation for the reference collection (not published): W = 1.705917693, p = 0.099083.
    [Fact]
    public void BrownForsythe_NistGear_MatchesExactRecomputation()
    {
        var w = AssumptionsData.JsonNumber(Folder, LeveneFile, "exact_recomputation", "W_median_centred");
        var p = AssumptionsData.JsonNumber(Folder, LeveneFile, "exact_recomputation", "p_value");
        var r = BrownForsythe.Test(AssumptionsData.Gear());
        Accuracy.AssertLre(r.F.Value, w, 9, "Brown-Forsythe W");
        Accuracy.AssertLre(r.P.Value, p, 4.5, "Brown-Forsythe p (6 digits printed)");
    }

    // Exact recomputation for the reference collection (not published by NIST): mean-centred W = 2.15945985647.
    [Fact]
    public void Levene_NistGear_MatchesExactRecomputationOfMeanCentredW()
    {
        var w = AssumptionsData.JsonNumber(Folder, LeveneFile, "exact_recomputation", "W_mean_centred_not_published_by_NIST");
        var r = Levene.Test(AssumptionsData.Gear());
        Accuracy.AssertLre(r.F.Value, w, 10, "Levene W (mean-centred)");
        Assert.Equal(9, r.Df1);
        Assert.Equal(90, r.Df2);
        Assert.Equal(Probability.FUpper(r.F.Value, 9, 90), r.P.Value, 15);
    }

    // Source: NIST/SEMATECH e-Handbook 1.3.5.7 (GEAR data), T = 20.78580, df 9; relative 1e-5.
    [Fact]
    public void Bartlett_NistGear_MatchesPublishedT()
    {
        var published = AssumptionsData.JsonNumber(Folder, BartlettFile, "published", "T");
        var critical = AssumptionsData.JsonNumber(Folder, BartlettFile, "published", "critical_value_chi2_0.95_9");
        var r = Bartlett.Test(AssumptionsData.Gear());
        Accuracy.AssertLre(r.Statistic.Value, published, 5, "Bartlett T");
        Assert.Equal(9, r.Df);
        Assert.True(r.Statistic.Value > critical, "published conclusion: reject at 5 %");
    }

    // Exact recomputation for the reference collection (not published): T = 20.7858734281, p = 0.0136359.
    [Fact]
    public void Bartlett_NistGear_MatchesExactRecomputation()
    {
        var t = AssumptionsData.JsonNumber(Folder, BartlettFile, "exact_recomputation", "T");
        var p = AssumptionsData.JsonNumber(Folder, BartlettFile, "exact_recomputation", "p_value");
        var r = Bartlett.Test(AssumptionsData.Gear());
        Accuracy.AssertLre(r.Statistic.Value, t, 10, "Bartlett T");
        Accuracy.AssertLre(r.P.Value, p, 5, "Bartlett p (6 digits printed)");
    }

    [Theory]
    [InlineData(-1.0, 1.0)]
    [InlineData(1e4, 1.0)]
    [InlineData(0.0, 1e3)]
    [InlineData(5.0, -0.01)]
    public void VarianceTests_NistGearShiftedAndScaled_StatisticsUnchanged(double shift, double scale)
    {
        var gear = AssumptionsData.Gear();
        var moved = gear.Select(g => g.Select(v => shift + (scale * v)).ToArray()).ToList();
        Assert.Equal(1.0, Levene.Test(moved).F.Value / Levene.Test(gear).F.Value, 9);
        Assert.Equal(1.0, BrownForsythe.Test(moved).F.Value / BrownForsythe.Test(gear).F.Value, 9);
        Assert.Equal(1.0, Bartlett.Test(moved).Statistic.Value / Bartlett.Test(gear).Statistic.Value, 9);
    }

    [Fact]
    public void VarianceTests_GroupsRelabelled_StatisticsUnchanged()
    {
        var gear = AssumptionsData.Gear();
        var reversed = Enumerable.Reverse(gear).Select(g => g.Reverse().ToArray()).ToList();
        Assert.Equal(Levene.Test(gear).F.Value, Levene.Test(reversed).F.Value, 10);
        Assert.Equal(BrownForsythe.Test(gear).F.Value, BrownForsythe.Test(reversed).F.Value, 10);
        Assert.Equal(Bartlett.Test(gear).Statistic.Value, Bartlett.Test(reversed).Statistic.Value, 10);
    }

    [Fact]
    public void Bartlett_GroupWithZeroVariance_Undefined()
    {
        var r = Bartlett.Test([[1.0, 2.0, 3.0], [5.0, 5.0, 5.0]]);
        Assert.False(r.Statistic.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Contains("zero variance", r.Statistic.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Bartlett_GroupOfOne_Undefined()
    {
        var r = Bartlett.Test([[1.0, 2.0, 3.0], [5.0]]);
        Assert.False(r.Statistic.IsDefined);
        Assert.Contains("two observations", r.Statistic.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Levene_AllGroupsOfOne_Undefined()
    {
        var r = Levene.Test([[1.0], [2.0], [4.0]]);
        Assert.False(r.F.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Equal(0, r.Df2);
    }

    // Hand computation: {1, 3, 4} has mean 8/3 and deviations 5/3, 1/3, 4/3 (mean 10/9); the single
    // value contributes z = 0. SS_between = 3 (10/9 - 5/6)² + (0 - 5/6)² = 0.9259..., SS_within = 26/27,
    // F = SS_between / (SS_within / 2).
    [Fact]
    public void Levene_GroupOfOneBesideLargerGroup_DefinedHandComputed()
    {
        var r = Levene.Test([[1.0, 3.0, 4.0], [5.0]]);
        var between = (3 * Math.Pow((10.0 / 9) - (5.0 / 6), 2)) + Math.Pow(5.0 / 6, 2);
        var within = 26.0 / 27;
        Assert.Equal(1, r.Df1);
        Assert.Equal(2, r.Df2);
        Assert.Equal(between / (within / 2), r.F.Value, 12);
    }

    [Fact]
    public void BrownForsythe_DeviationsConstantWithinGroups_Undefined()
    {
        var r = BrownForsythe.Test([[-1.0, 1.0], [-2.0, 2.0]]);
        Assert.False(r.F.IsDefined);
        Assert.Contains("do not vary", r.F.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Levene_OneGroup_Throws()
    {
        Assert.Throws<ArgumentException>(() => Levene.Test([[1.0, 2.0]]));
    }

    // Brown-Forsythe by definition (Brown and Forsythe 1974: Levene's F on |y - median|), medians from
    // a full sort, against the test's selection-based medians: odd and even group sizes, many ties.
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void BrownForsythe_SelectedMedians_SameAsSortedMedians(int seed)
    {
        var rng = new Random(seed);
        var groups = Enumerable.Range(0, 4)
            .Select(g => Enumerable.Range(0, 200 + g + (seed * 7)).Select(_ => Math.Round(rng.NextDouble() * 20) / 4).ToArray())
            .ToList();
        static double SortedMedian(double[] x)
        {
            var s = x.OrderBy(v => v).ToArray();
            var h = s.Length / 2;
            return s.Length % 2 == 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
        }

        var shifted = groups.Select(g => { var m = SortedMedian(g); return g.Select(v => Math.Abs(v - m)).ToArray(); }).ToList();
        var bf = BrownForsythe.Test(groups);

        // Levene's test of z centres z at its means, which is the same F as the one-way ANOVA of z.
        var k = groups.Count;
        var n = groups.Sum(g => g.Length);
        var all = shifted.SelectMany(z => z).ToArray();
        var grand = all.Average();
        var between = shifted.Sum(z => z.Length * Math.Pow(z.Average() - grand, 2));
        var within = shifted.Sum(z => z.Sum(v => Math.Pow(v - z.Average(), 2)));
        var f = between / (k - 1) / (within / (n - k));
        Assert.Equal(f, bf.F.Value, 10);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void DeviationsFormedOnTheFly_SameBitsAsStoredDeviations(int seed)
    {
        // The statistic as computed before the deviations stopped being stored: z arrays, then
        // Groups.Mean / Groups.SumOfSquares and the concatenated mean (exact equality expected).
        var rng = new Random(seed);
        var groups = Enumerable.Range(0, 5)
            .Select(g => Enumerable.Range(0, 3000 + (g * 17)).Select(_ => Math.Round((rng.NextDouble() * (g + 1) * 10) - 5, 2)).ToArray())
            .ToList();
        groups.Add([1.5, 1.5, 2.5, 2.5]); // a group with constant deviations
        static double StoredF(IReadOnlyList<double[]> groups, Func<double[], double> centre)
        {
            var z = groups.Select(g => { var c = centre(g); return g.Select(v => Math.Abs(v - c)).ToArray(); }).ToArray();
            double sum = 0;
            var n = 0;
            foreach (var g in z)
            {
                foreach (var v in g)
                {
                    sum += v;
                }

                n += g.Length;
            }

            var m0 = sum / n;
            double corr = 0;
            foreach (var g in z)
            {
                foreach (var v in g)
                {
                    corr += v - m0;
                }
            }

            var grand = m0 + (corr / n);
            double between = 0, within = 0;
            foreach (var g in z)
            {
                var m = Groups.Mean(g);
                within += Groups.SumOfSquares(g, m);
                between += g.Length * (m - grand) * (m - grand);
            }

            return between / (z.Length - 1) / (within / (n - z.Length));
        }

        static double Median(double[] x)
        {
            var s = x.OrderBy(v => v).ToArray();
            var h = s.Length / 2;
            return s.Length % 2 == 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
        }

        Assert.Equal(StoredF(groups, g => Groups.Mean(g)), Levene.Test(groups).F.Value);
        Assert.Equal(StoredF(groups, Median), BrownForsythe.Test(groups).F.Value);
    }
    [Theory]
    [InlineData(1, 40_001)]
    [InlineData(2, 40_000)]
    [InlineData(3, 9_000)]
    public void Median_BucketSelection_SameAsQuickselectOnACopy(int seed, int n)
    {
        // Large groups take their middle order statistics by bucket selection (no copy); the
        // reference is the quickselect on a copy that ran before, and a full sort.
        var rng = new Random(seed);
        var normal = Enumerable.Range(0, n).Select(_ => 100 + (Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble()))).ToArray();
        var ties = Enumerable.Range(0, n).Select(_ => Math.Round(rng.NextDouble() * 40) / 8).ToArray();
        var outlier = normal.Select((v, i) => i == n / 3 ? 1e9 : v).ToArray();
        foreach (var x in new[] { normal, ties, outlier })
        {
            var sorted = (double[])x.Clone();
            Array.Sort(sorted);
            var h = n / 2;
            var expected = n % 2 == 1 ? sorted[h] : 0.5 * (sorted[h - 1] + sorted[h]);
            Assert.Equal(BitConverter.DoubleToInt64Bits(DeviationFTest.MedianBySelection(x)), BitConverter.DoubleToInt64Bits(DeviationFTest.Median(x)));
            Assert.Equal(BitConverter.DoubleToInt64Bits(expected), BitConverter.DoubleToInt64Bits(DeviationFTest.Median(x)));
        }
    }

    [Fact]
    public void BrownForsythe_LargeGroups_SameBitsAsQuickselectMedians()
    {
        // The whole statistic with the bucket-selected medians against the same computation with
        // the quickselect medians of before (exact equality expected: the same centres).
        var rng = new Random(29);
        var groups = Enumerable.Range(0, 4)
            .Select(g => Enumerable.Range(0, 6_000 + (g * 1_001)).Select(_ => Math.Round(((rng.NextDouble() - 0.5) * (g + 1) * 30) + 50, 3)).ToArray())
            .ToList();
        var fast = BrownForsythe.Test(groups);
        var before = DeviationFTest.Compute(groups, DeviationFTest.MedianBySelection);
        Assert.Equal(BitConverter.DoubleToInt64Bits(before.F.Value), BitConverter.DoubleToInt64Bits(fast.F.Value));
        Assert.Equal(BitConverter.DoubleToInt64Bits(before.P.Value), BitConverter.DoubleToInt64Bits(fast.P.Value));
    }
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    public void FusedMeans_SameBitsAsSeparatePasses(int seed)
    {
        // The grand and group means of the deviations from two fused passes against the separate
        // passes that computed them before (exact equality expected: the same terms in the same order).
        var rng = new Random(seed);
        var groups = Enumerable.Range(0, 5)
            .Select(g => Enumerable.Range(0, 5_000 + (g * 313)).Select(_ => Math.Round((rng.NextDouble() * (g + 1) * 10) - 5, 3)).ToArray())
            .ToList();
        groups.Add([1.5, 1.5, 2.5, 2.5]); // constant deviations about the mean
        groups.Add([7.25]); // one value
        var centres = groups.Select(g => g.Average()).ToArray();
        centres[3] = DeviationFTest.Median(groups[3]);
        var (grand, means) = DeviationFTest.Means(groups, centres);
        Assert.Equal(BitConverter.DoubleToInt64Bits(ConcatenatedMean(groups, centres)), BitConverter.DoubleToInt64Bits(grand));
        for (var g = 0; g < groups.Count; g++)
        {
            var c = centres[g];
            Assert.Equal(BitConverter.DoubleToInt64Bits(Groups.Mean([.. groups[g].Select(v => Math.Abs(v - c))])), BitConverter.DoubleToInt64Bits(means[g]));
        }
    }

    /// <summary>
    /// The separate passes the fused ones replaced: the sum of every z = |y − c| one group after
    /// another, then the correction pass of <see cref="Groups.Mean"/> (without its constant-sample
    /// shortcut).
    /// </summary>
    private static double ConcatenatedMean(List<double[]> groups, double[] centres)
    {
        double sum = 0;
        var n = 0;
        for (var g = 0; g < groups.Count; g++)
        {
            foreach (var y in groups[g])
            {
                sum += Math.Abs(y - centres[g]);
            }

            n += groups[g].Length;
        }

        var m = sum / n;
        double corr = 0;
        for (var g = 0; g < groups.Count; g++)
        {
            foreach (var y in groups[g])
            {
                corr += Math.Abs(y - centres[g]) - m;
            }
        }

        return m + (corr / n);
    }
}
