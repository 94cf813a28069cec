using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Repeated;
using static StudyPress.Statistics.Tests.Repeated.RepeatedReference;

namespace StudyPress.Statistics.Tests.Repeated;

// The mixed-model route: on complete data whose variance components are all estimated inside
// the parameter space it reproduces the classical F and df (relative 1e-9); it keeps incomplete
// subjects.
public class RepeatedMixedModelTests
{
    private static (RepeatedMeasuresDesign Design, RepeatedMeasuresData Data) Random(Random rnd, int[] groupSizes, int[] within)
    {
        var kw = within.Length;
        var cells = within.Aggregate(1, (a, k) => a * k);
        var resp = new List<double>();
        var subj = new List<string>();
        var w = Enumerable.Range(0, kw).Select(_ => new List<string>()).ToArray();
        var g = new List<string>();
        var id = 0;
        var cellSd = Enumerable.Range(0, kw).Select(_ => 1 + (rnd.NextDouble() * 3)).ToArray();
        for (var grp = 0; grp < groupSizes.Length; grp++)
        {
            for (var s = 0; s < groupSizes[grp]; s++, id++)
            {
                var subject = 12 * (rnd.NextDouble() - 0.5);
                var byFactor = Enumerable.Range(0, kw).Select(f => Enumerable.Range(0, within[f]).Select(_ => cellSd[f] * (rnd.NextDouble() - 0.5)).ToArray()).ToArray();
                for (var c = 0; c < cells; c++)
                {
                    var rest = c;
                    double v = 50 + grp + subject + (rnd.NextDouble() - 0.5);
                    for (var f = kw - 1; f >= 0; f--)
                    {
                        var level = rest % within[f];
                        rest /= within[f];
                        w[f].Add("w" + level);
                        v += (0.4 * level * (grp + 1)) + byFactor[f][level];
                    }

                    resp.Add(v);
                    subj.Add("s" + id);
                    g.Add("g" + grp);
                }
            }
        }

        var names = Enumerable.Range(0, kw).Select(f => "W" + f).ToArray();
        var design = new RepeatedMeasuresDesign("subject", names, ["G"]);
        var data = new RepeatedMeasuresData([.. resp], subj, [.. w.Select(l => (IReadOnlyList<string>)l)], [g]);
        return (design, data);
    }

    // Seeded random designs: 2-3 groups, one or two within factors; balanced (types agree) and
    // unequal group sizes (compared with the classical type 3, the hypothesis the REML Wald F tests).
    [Fact]
    public void CompleteData_InteriorEstimates_ReproduceClassicalF()
    {
        var rnd = new Random(15);
        var compared = 0;
        for (var trial = 0; trial < 16; trial++)
        {
            var groups = rnd.Next(2, 4);
            var balanced = trial % 2 == 0;
            var sizes = Enumerable.Range(0, groups).Select(_ => balanced ? 5 : rnd.Next(4, 8)).ToArray();
            if (balanced)
            {
                sizes = [.. sizes.Select(_ => 4 + (trial % 3))];
            }

            int[] within = balanced && trial % 4 == 0 ? [2, 3] : [rnd.Next(3, 5)];
            var (design, data) = Random(rnd, sizes, within);
            var classical = RepeatedMeasuresAnova.Fit(design, data, SumOfSquaresType.Marginal);
            var mixed = RepeatedMeasuresMixedModel.ToDesign(design, data, out _)!;

            // Interior: every ANOVA-method component positive (balanced: from the strata engine;
            // unequal sizes: subject stratum MS above the residual MS, single within factor).
            bool interior;
            if (balanced)
            {
                interior = VarianceComponents.Estimate(StrataAnova.Fit(mixed.Factors, mixed.Data)).Components.All(c => c.Variance > 0);
            }
            else
            {
                interior = classical.Row("subject(G)").MeanSquare.Value > classical.Rows[^1].MeanSquare.Value;
            }

            if (!interior)
            {
                continue;
            }

            var reml = RepeatedMeasuresMixedModel.Fit(design, data).Reml;
            Assert.True(reml.Converged, reml.ConvergenceNote);
            foreach (var row in classical.Rows.Where(r => r.Kind == RepeatedRowKind.Effect))
            {
                var t = reml.Test(row.Term);
                Assert.Equal(row.Df, t.NumeratorDf);
                AssertRelative(V(t.F, "REML F"), V(row.F, "F"), 1e-9, "F " + row.Term + " trial " + trial);
                var dfError = classical.Row(row.ErrorTerm!).Df;
                AssertRelative(V(t.DfDenominator, "REML df"), dfError, 1e-9, "df " + row.Term + " trial " + trial);
                AssertRelative(V(t.P, "REML p"), V(row.P, "p"), 1e-8, "p " + row.Term + " trial " + trial);
            }

            Assert.All(RepeatedMeasuresMixedModel.Compare(classical, reml, 1e-8), c => Assert.True(c.Agree, c.Term));
            compared++;
        }

        Assert.True(compared >= 8, "too few interior designs were compared: " + compared);
    }

    // Rutherford one-way with one measurement removed: the classical route drops subject 3; the
    // mixed model keeps all 8 subjects and the 23 measurements, and tests the condition.
    [Fact]
    public void IncompleteSubject_KeptByMixedModel()
    {
        var data = RepeatedMeasuresAnovaTests.OneWayData();
        var removed = Where(data, j => !(data.Subject[j] == "3" && data.Within[0][j] == "b"));
        var classical = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.OneWay, removed);
        Assert.Equal("3", Assert.Single(classical.Dropped).Subject);

        var mixed = RepeatedMeasuresMixedModel.Fit(RepeatedMeasuresAnovaTests.OneWay, removed);
        Assert.Equal(8, mixed.Design.Subjects);
        Assert.Equal(["3"], mixed.Design.IncompleteSubjects);
        Assert.Equal(23, mixed.Reml.ConditionalResiduals.Length);
        var t = mixed.Reml.Test("condition");
        Assert.Equal(2, t.NumeratorDf);
        Assert.True(V(t.P, "p") < 0.01);
        Assert.Equal(FactorRole.Random, mixed.Design.Factors[^1].Role);
    }

    // Rutherford one-way: the ANOVA estimate of the subject variance is negative (MS subjects 2 <
    // MS error 2.714), so REML puts it on the boundary (0) and pools the subject stratum into the
    // error: the mixed F is then 112/2/((14 + 38)/21) = 22.615..., the independent-groups F of the
    // collection's exact recomputation, not the classical 20.63: the comparison says they differ.
    [Fact]
    public void BoundaryEstimate_RoutesDiffer_AndComparisonSaysSo()
    {
        var design = RepeatedMeasuresAnovaTests.OneWay;
        var data = RepeatedMeasuresAnovaTests.OneWayData();
        var classical = RepeatedMeasuresAnova.Fit(design, data);
        var mixed = RepeatedMeasuresMixedModel.Fit(design, data).Reml;
        Assert.True(mixed.Singular);
        var c = Assert.Single(RepeatedMeasuresMixedModel.Compare(classical, mixed));
        Assert.False(c.Agree);
        var independent = Number(Json("rutherford-2001-oneway.expected.json"), "exact_recomputation", "independent_groups", "A", "f");
        AssertRelative(V(c.MixedF, "mixed F"), independent, 1e-8, "pooled F");
        AssertRelative(V(c.ClassicalF, "classical F"), 20.6315789474, 1e-9, "classical F (exact recomputation)");
    }

    // Two between factors with unequal groups (subjects 1, 2 and 10 removed: groups of 3, 3, 4 and
    // 3 subjects): the classical type 3 table (unweighted means for the within term) equals
    // the REML Wald tests, since the subject variance is estimated inside the parameter space here.
    [Fact]
    public void TwoBetweenFactors_UnequalGroups_Type3EqualsReml()
    {
        var (design, all) = RepeatedMeasuresAnovaTests.TwoBetween();
        var data = Where(all, i => all.Subject[i] is not ("1" or "2" or "10"));
        var classical = RepeatedMeasuresAnova.Fit(design, data, SumOfSquaresType.Marginal);
        Assert.Equal(4, classical.Groups);
        Assert.True(classical.Row("subject(A:C)").MeanSquare.Value > classical.Row("B:subject(A:C)").MeanSquare.Value);
        var reml = RepeatedMeasuresMixedModel.Fit(design, data).Reml;
        Assert.False(reml.Singular);
        Assert.All(RepeatedMeasuresMixedModel.Compare(classical, reml, 1e-8), c => Assert.True(c.Agree, c.Term));

        // Type 2 differs from type 3 for B here (unequal groups): the comparison says so.
        var type2 = RepeatedMeasuresAnova.Fit(design, data);
        Assert.Contains(RepeatedMeasuresMixedModel.Compare(type2, reml, 1e-8), c => !c.Agree && c.Term == "B");
    }
}
