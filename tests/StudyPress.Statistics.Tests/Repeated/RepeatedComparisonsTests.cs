using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Repeated;
using static StudyPress.Statistics.Tests.Repeated.RepeatedReference;

namespace StudyPress.Statistics.Tests.Repeated;

// Paired comparisons and simple effects.
public class RepeatedComparisonsTests
{
    // Rutherford one-way: paired t tests of a, b, c. Estimates and SE by exact hand computation
    // (a − b differences 0, −8, −3, −5, −5, −2, −5, −4: mean −4, s² = 40/7, SE = √(5/7)); t and p
    // against the numpy/scipy recomputation (scipy.stats.ttest_rel, recompute-sphericity.out.json);
    // the Holm and Bonferroni adjustments by hand from those raw p-values.
    [Fact]
    public void RutherfordOneWay_PairedTests_HolmAndBonferroni()
    {
        var fit = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.OneWay, RepeatedMeasuresAnovaTests.OneWayData());
        var holm = RepeatedComparisons.Pairwise(fit, "condition", PValueAdjustmentMethod.Holm);
        var bonf = RepeatedComparisons.Pairwise(fit, "condition", PValueAdjustmentMethod.Bonferroni);
        Assert.Equal(3, holm.Comparisons.Count);
        Assert.Equal(8, holm.Subjects);
        var ab = holm.Comparisons[0];
        Assert.Equal(("a", "b"), (ab.LevelA, ab.LevelB));
        AssertRelative(ab.Estimate, -4, 1e-13, "estimate a − b");
        AssertRelative(V(ab.Se, "se"), Math.Sqrt(5.0 / 7), 1e-13, "SE a − b");
        Assert.Equal(7, ab.Df);

        var e = Json("recompute-sphericity.out.json").GetProperty("rutherford_oneway_paired");
        string[] keys = ["a-b", "a-c", "b-c"];
        var raw = keys.Select(k => Number(e, k, "p")).ToArray();
        for (var i = 0; i < 3; i++)
        {
            var c = holm.Comparisons[i];
            AssertRelative(c.Estimate, Number(e, keys[i], "estimate"), 1e-12, "scipy estimate " + keys[i]);
            AssertRelative(V(c.T, "t"), Number(e, keys[i], "t"), 1e-9, "scipy t " + keys[i]);
            AssertRelative(V(c.P, "p"), raw[i], 1e-9, "scipy p " + keys[i]);
            AssertRelative(V(bonf.Comparisons[i].PAdjusted, "bonferroni"), Math.Min(1, 3 * raw[i]), 1e-9, "Bonferroni " + keys[i]);

            // The intervals: half-widths are t quantiles times SE, at α and at α/3.
            var half = (V(c.CiHigh, "hi") - V(c.CiLow, "lo")) / 2 / V(c.Se, "se");
            AssertRelative(Probability.TTwoSided(half, 7), 0.05, 1e-9, "interval level");
            var sim = (V(c.SimultaneousCiHigh, "shi") - V(c.SimultaneousCiLow, "slo")) / 2 / V(c.Se, "se");
            AssertRelative(Probability.TTwoSided(sim, 7), 0.05 / 3, 1e-9, "simultaneous interval level");
        }

        // Holm by hand: sorted raw p are a−b < a−c < b−c: 3p₁, max(3p₁, 2p₂), max(·, p₃).
        var h1 = 3 * raw[0];
        var h2 = Math.Max(h1, 2 * raw[1]);
        var h3 = Math.Max(h2, raw[2]);
        AssertRelative(V(holm.Comparisons[0].PAdjusted, "holm"), h1, 1e-9, "Holm a−b");
        AssertRelative(V(holm.Comparisons[1].PAdjusted, "holm"), h2, 1e-9, "Holm a−c");
        AssertRelative(V(holm.Comparisons[2].PAdjusted, "holm"), h3, 1e-9, "Holm b−c");
    }

    // Doncaster and Davey 6.3: simple effects of B at each level of A, each with its own error
    // term (B x subjects of that group, df 3). Exact identities: with two levels F equals the
    // square of the group's paired t; Σ over groups of the simple-effect SS = SS(B) + SS(A:B);
    // Σ of the groups' error SS = SS(B:subject(A)).
    [Fact]
    public void DoncasterDavey63_SimpleEffectsOfBWithinEachGroup()
    {
        var fit = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.Model63, RepeatedMeasuresAnovaTests.Model63Data());
        var simple = RepeatedComparisons.SimpleEffects(fit, "B", "A");
        Assert.Equal(["1", "2", "3"], simple.Select(s => s.Level));
        double ss = 0, err = 0;
        foreach (var s in simple)
        {
            Assert.Null(s.Issue);
            Assert.Equal(4, s.Subjects);
            var row = s.Row!;
            Assert.Equal("B", row.Term);
            var error = s.Anova!.Row(row.ErrorTerm!);
            Assert.Equal(3, error.Df);
            ss += row.SumOfSquares;
            err += error.SumOfSquares;

            // Paired t of the group by hand: B1 − B2 differences.
            var diffs = Enumerable.Range(0, fit.Subjects.Count)
                .Where(i => fit.BetweenLevels[0][fit.SubjectBetween[i][0]] == s.Level)
                .Select(i => fit.CellMeans[i][0] - fit.CellMeans[i][1]).ToArray();
            var m = diffs.Average();
            var se = Math.Sqrt(diffs.Sum(d => (d - m) * (d - m)) / 3 / 4);
            AssertRelative(V(row.F, "F"), m / se * (m / se), 1e-10, "F = t² in group " + s.Level);
        }

        AssertRelative(ss, fit.Row("B").SumOfSquares + fit.Row("A:B").SumOfSquares, 1e-10, "simple-effect SS add up");
        AssertRelative(err, fit.Row("B:subject(A)").SumOfSquares, 1e-10, "own error terms add up");
    }

    // A group with one complete subject cannot be analysed on its own: an issue for that level only.
    [Fact]
    public void SimpleEffects_GroupOfOne_ReportsIssue()
    {
        double[][] y = [[1, 2, 4], [2, 2.5, 3], [4, 6, 9], [3, 3.5, 5], [7, 8, 8]];
        var data = SphericityTests.FromMatrix(y, [0, 0, 0, 0, 1]);
        var fit = RepeatedMeasuresAnova.Fit(SphericityTests.Design(true), data);
        var simple = RepeatedComparisons.SimpleEffects(fit, "t", "g");
        Assert.NotNull(simple[0].Anova);
        Assert.Null(simple[1].Anova);
        Assert.Equal(1, simple[1].Subjects);
        Assert.Equal(StudyPress.Statistics.Designs.DesignIssueKind.TooFewObservations, simple[1].Issue!.Kind);
    }
}
