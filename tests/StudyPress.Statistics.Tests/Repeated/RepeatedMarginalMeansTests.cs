using StudyPress.Statistics.Repeated;
using static StudyPress.Statistics.Tests.Repeated.RepeatedReference;

namespace StudyPress.Statistics.Tests.Repeated;

/// <summary>
/// Marginal means of repeated-measures designs on the strata (classical) and REML routes. The
/// published tables (Rutherford 2001 one-way; Doncaster and Davey 2007, model 6.3) give the mean
/// squares; the means' SEs and Satterthwaite df are then exact hand computations from them (each
/// test writes its arithmetic out). The REML route must equal the strata route on complete
/// balanced data whose variance estimates are all inside the parameter space.
/// </summary>
public class RepeatedMarginalMeansTests
{
    private static RepeatedMeasuresData OneWay() => Load("rutherford-2001-oneway.csv", "subject", ["condition"], []);

    private static RepeatedMeasuresData TwoWay() => Load("rutherford-2001-twoway.csv", "subject", ["A", "B"], []);

    private static RepeatedMeasuresData Mixed() => Load("doncaster-davey-model-6-3.csv", "subject", ["B"], ["A"]);

    private static readonly RepeatedMeasuresDesign OneWayDesign = new("subject", ["condition"], []);
    private static readonly RepeatedMeasuresDesign TwoWayDesign = new("subject", ["A", "B"], []);
    private static readonly RepeatedMeasuresDesign MixedDesign = new("subject", ["B"], ["A"], SubjectLabels.NumberedWithinGroups);

    private static double Satterthwaite(params (double C, double Ms, double Df)[] parts) =>
        Math.Pow(parts.Sum(p => p.C * p.Ms), 2) / parts.Sum(p => Math.Pow(p.C * p.Ms, 2) / p.Df);

    [Fact]
    public void OneWay_MeansAndPairs_ByHand()
    {
        // Rutherford (2001) p. 72, published: SS(subject) 14 on 7 df, SS(A × subject) 38 on 14 df.
        // Condition means (exact hand computation from the data): a 6, b 10, c 11.
        var cm = RepeatedCellMeans.FromStrata(RepeatedMeasuresAnova.Fit(OneWayDesign, OneWay()));
        var means = cm.Means(["condition"], 0.05);
        Assert.Equal([6.0, 10.0, 11.0], means.Select(m => Math.Round(m.Estimate.Value, 12)));

        // Exact hand computation: Var(mean) = (MS_S + (a − 1) MS_AS) / (a n) = (2 + 2 × 38/14) / 24;
        // Satterthwaite df = (c₁MS_S + c₂MS_AS)² / ((c₁MS_S)²/7 + (c₂MS_AS)²/14), c₁ = 1/24, c₂ = 2/24.
        double msS = 2, msAs = 38.0 / 14;
        var v = (msS + (2 * msAs)) / 24;
        var df = Satterthwaite((1.0 / 24, msS, 7), (2.0 / 24, msAs, 14));
        foreach (var m in means)
        {
            AssertRelative(V(m.Estimate.Se, "se"), Math.Sqrt(v), 1e-12, "se");
            AssertRelative(V(m.Estimate.Df, "df"), df, 1e-12, "df");
            var t = Probability.TCritical(0.05, df);
            AssertRelative(V(m.Estimate.CiLow, "lo"), m.Estimate.Value - (t * Math.Sqrt(v)), 1e-12, "ci_low");
            Assert.Equal(["subject", "condition:subject"], m.Estimate.Errors);
        }

        // A difference of two conditions rests on the A × subject stratum only: Var = 2 MS_AS / n on 14 df.
        var pairs = cm.Pairs(["condition"], RepeatedPairAdjustment.Holm, 0.05);
        Assert.Equal(3, pairs.Count);
        var ab = pairs[0];
        Assert.Equal(-4.0, ab.Difference.Value, 12);
        AssertRelative(V(ab.Difference.Se, "se"), Math.Sqrt(2 * msAs / 8), 1e-12, "pair se");
        AssertRelative(V(ab.Difference.Df, "df"), 14, 1e-12, "pair df");
        Assert.Equal(["condition:subject"], ab.Difference.Errors);
        var t0 = -4.0 / Math.Sqrt(2 * msAs / 8);
        AssertRelative(V(ab.T, "t"), t0, 1e-12, "t");
        AssertRelative(V(ab.P, "p"), Probability.TTwoSided(t0, 14), 1e-10, "p");
        Assert.True(cm.SingleError(["condition"]));
    }

    [Fact]
    public void Mixed_BetweenWithinAndCells_ByHand()
    {
        // Doncaster and Davey (2007), model 6.3(i), published: MS S(A) 9.40 on 9 df, MS B*S(A) 15.50 on 9 df;
        // exact recomputation (shared reference): 84.5619456825 / 9 and 139.47 SS (B*S(A)).
        var fit = RepeatedMeasuresAnova.Fit(MixedDesign, Mixed());
        var msS = fit.Row("subject(A)").MeanSquare.Value;
        var msBs = fit.Row("B:subject(A)").MeanSquare.Value;
        AssertRelative(msS, 84.5619456825 / 9, 1e-10, "MS S(A)");
        var cm = RepeatedCellMeans.FromStrata(fit);

        // A level (between): Var = MS_S(A) / (b n) = MS_S / 8 on 9 df (one stratum).
        var a = cm.Means(["A"], 0.05);
        Assert.Equal(3, a.Count);
        AssertRelative(V(a[0].Estimate.Se, "se"), Math.Sqrt(msS / 8), 1e-12, "A se");
        AssertRelative(V(a[0].Estimate.Df, "df"), 9, 1e-12, "A df");

        // B level (within), averaged over A with equal weights: a_g = 1/3 for the B level's cell in each group:
        // |P₀ a_g|² = (1/3)²/2, |P_B a_g|² = (1/3)²/2, n = 4 per group → c = 3 × (1/18)/4 = 1/24 each.
        var b = cm.Means(["B"], 0.05);
        AssertRelative(V(b[0].Estimate.Se, "se"), Math.Sqrt((msS + msBs) / 24), 1e-12, "B se");
        AssertRelative(V(b[0].Estimate.Df, "df"), Satterthwaite((1.0 / 24, msS, 9), (1.0 / 24, msBs, 9)), 1e-12, "B df");

        // Cells A × B: Var = (MS_S + MS_BS) / (2 n) = (MS_S + MS_BS) / 8.
        var cells = cm.Means(["A", "B"], 0.05);
        Assert.Equal(6, cells.Count);
        AssertRelative(V(cells[0].Estimate.Se, "se"), Math.Sqrt((msS + msBs) / 8), 1e-12, "cell se");

        // B difference within one A level: within stratum only, Var = 2 MS_BS / n on 9 df.
        var simple = cm.SimpleEffects("B", "A", RepeatedPairAdjustment.Holm, 0.05);
        Assert.Equal(3, simple.Count);
        foreach (var s in simple)
        {
            AssertRelative(V(s.DfDen, "df"), 9, 1e-12, "simple df");
            var d = s.Pairs[0].Difference;
            AssertRelative(V(d.Se, "se"), Math.Sqrt(2 * msBs / 4), 1e-12, "simple pair se");
            AssertRelative(V(s.F, "F"), Math.Pow(d.Value, 2) / (2 * msBs / 4), 1e-10, "simple F = t²");
            Assert.Equal(["B:subject(A)"], s.Errors);
        }

        // A difference within one B level crosses strata: Var = 2 (MS_S + MS_BS) / (2 n).
        var across = cm.SimpleEffects("A", "B", RepeatedPairAdjustment.Holm, 0.05);
        var pair = across[0].Pairs[0].Difference;
        AssertRelative(V(pair.Se, "se"), Math.Sqrt(2 * (msS + msBs) / 8), 1e-12, "across se");
        AssertRelative(V(pair.Df, "df"), Satterthwaite((0.25, msS, 9), (0.25, msBs, 9)), 1e-12, "across df");
        Assert.False(cm.SingleError(["A", "B"]));
        Assert.True(cm.SingleError(["A"]));
    }

    /// <summary>Adds a subject-sized offset so that every REML variance estimate is inside the parameter space.</summary>
    private static RepeatedMeasuresData WithSubjectOffsets(RepeatedMeasuresData d) =>
        d with { Response = [.. d.Response.Select((v, i) => v + (7.5 * int.Parse(d.Subject[i], System.Globalization.CultureInfo.InvariantCulture) % 23) + (d.Between.Count > 0 && d.Between[0][i] == "2" ? 3.0 * int.Parse(d.Subject[i], System.Globalization.CultureInfo.InvariantCulture) : 0))] };

    [Theory]
    [InlineData("twoway")]
    [InlineData("mixed")]
    public void Reml_EqualsStrata_OnBalancedCompleteData(string which)
    {
        var (design, data) = which == "twoway" ? (TwoWayDesign, WithSubjectOffsets(TwoWay())) : (MixedDesign, WithSubjectOffsets(Mixed()));
        var strata = RepeatedCellMeans.FromStrata(RepeatedMeasuresAnova.Fit(design, data));
        var mixed = RepeatedMeasuresMixedModel.Fit(design, data);
        Assert.False(mixed.Reml.Singular, mixed.Reml.ConvergenceNote);
        var reml = RepeatedCellMeans.FromReml(design, mixed, out var issue);
        Assert.Null(issue);
        Assert.Equal(RepeatedMeansRoute.Reml, reml!.Route);
        var factors = design.Between.Concat(design.Within).ToList();
        foreach (var term in factors.Select(f => (IReadOnlyList<string>)[f]).Append(factors))
        {
            var s = strata.Means(term, 0.05);
            var r = reml.Means(term, 0.05);
            for (var i = 0; i < s.Count; i++)
            {
                AssertRelative(r[i].Estimate.Value, s[i].Estimate.Value, 1e-9, "mean");
                AssertRelative(V(r[i].Estimate.Se, "se"), V(s[i].Estimate.Se, "se"), 1e-7, "se");
                AssertRelative(V(r[i].Estimate.Df, "df"), V(s[i].Estimate.Df, "df"), 1e-6, "df");
            }

            var sp = strata.Pairs(term, RepeatedPairAdjustment.Holm, 0.05);
            var rp = reml.Pairs(term, RepeatedPairAdjustment.Holm, 0.05);
            for (var i = 0; i < sp.Count; i++)
            {
                AssertRelative(V(rp[i].Difference.Se, "se"), V(sp[i].Difference.Se, "se"), 1e-7, "pair se");
                AssertRelative(V(rp[i].Difference.Df, "df"), V(sp[i].Difference.Df, "df"), 1e-6, "pair df");
                AssertRelative(V(rp[i].PAdjusted, "p"), V(sp[i].PAdjusted, "p"), 1e-6, "p_adj");
            }
        }

        var se = strata.SimpleEffects(design.Within[0], factors[0] == design.Within[0] ? factors[1] : factors[0], RepeatedPairAdjustment.Holm, 0.05);
        var re = reml.SimpleEffects(design.Within[0], factors[0] == design.Within[0] ? factors[1] : factors[0], RepeatedPairAdjustment.Holm, 0.05);
        for (var i = 0; i < se.Count; i++)
        {
            AssertRelative(V(re[i].F, "F"), V(se[i].F, "F"), 1e-7, "simple F");
            AssertRelative(V(re[i].DfDen, "df"), V(se[i].DfDen, "df"), 1e-6, "simple df");
        }
    }

    [Fact]
    public void Reml_KeepsIncompleteSubject()
    {
        // Subject 1 of group A 3 loses its B 2 measurement: the REML route still gives every mean.
        var data = Where(Mixed(), i => !(Mixed().Subject[i] == "1" && Mixed().Between[0][i] == "3" && Mixed().Within[0][i] == "2"));
        var mixed = RepeatedMeasuresMixedModel.Fit(MixedDesign, data);
        var reml = RepeatedCellMeans.FromReml(MixedDesign, mixed, out var issue);
        Assert.Null(issue);
        var cells = reml!.Means(["A", "B"], 0.05);
        Assert.Equal(6, cells.Count);
        Assert.All(cells, c => Assert.True(c.Estimate.Se.IsDefined && c.Estimate.Df.IsDefined));
    }
}
