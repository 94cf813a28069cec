using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;
using static StudyPress.Statistics.Tests.Designs.DesignReference;

namespace StudyPress.Statistics.Tests.Designs;

// Views over a REML fit (estimated marginal means, differences, Wald tests): on balanced data they
// equal the classical strata; on unbalanced data the means and SEs are compared with a library
// recomputation (Reference/mixed-model/oats-missing-plots-emm.*, statsmodels 0.13.5 + numpy).
public class RemlFixedEffectsTests
{
    private static readonly DesignFactor[] OatsDesign =
    [
        DesignFactor.Block("block"),
        DesignFactor.Treatment("variety", PlotLevel.WholePlot),
        DesignFactor.Treatment("nitrogen", PlotLevel.SubPlot),
    ];

    private static readonly int[] Removed = [3, 17, 40, 58];

    private static DesignData Oats() => Load("split-plot", "yates-oats.csv", "yield", "block", "variety", "nitrogen");

    private static double[][] Rows(RemlFixedEffects fe, string factor) =>
        [.. fe.Levels(factor).Select(l => fe.MeanRow([factor], [l]))];

    // Exact recomputation (split-plot/yates-oats): on balanced data the REML marginal means are the
    // level means, and each difference has the SE √(2 MS_error / n) and the df of the error the
    // strata test the factor against (whole-plot error, 10 df, for variety; residual, 45 df, for
    // nitrogen), to 1e-9.
    [Fact]
    public void BalancedSplitPlot_DifferencesEqualClassicalStrata()
    {
        var data = Oats();
        var fe = MixedModel.FitReml(OatsDesign, data).FixedEffects!;
        var strata = StrataAnova.Fit(OatsDesign, data);
        foreach (var (factor, column, perLevel) in new[] { ("variety", 1, 24), ("nitrogen", 2, 18) })
        {
            var part = strata.Row(factor).Denominator[0];
            var rows = Rows(fe, factor);
            var levels = fe.Levels(factor);
            for (var a = 0; a < levels.Count; a++)
            {
                // The level mean of the data (exact hand computation of the balanced mean).
                var raw = Enumerable.Range(0, data.Response.Length).Where(i => data.Labels[column][i] == levels[a]).Average(i => data.Response[i]);
                var (mean, _, _) = fe.Mean(rows[a], 0.05);
                AssertRelative(mean.Estimate, raw, 1e-9, factor + " mean " + levels[a]);
                for (var b = a + 1; b < levels.Count; b++)
                {
                    var d = fe.Combination(RemlComparisons.Difference(rows[a], rows[b]));
                    AssertRelative(d.Se.Value, Math.Sqrt(2 * part.MeanSquare / perLevel), 1e-9, factor + " SE");
                    AssertRelative(d.Df.Value, part.Df, 1e-9, factor + " df");
                }
            }
        }
    }

    // Exact hand computation on the REML components of the balanced oats (r = 6 blocks, 3
    // varieties, 4 nitrogen levels): Var(variety mean) = σ²_b/6 + σ²_w/6 + σ²/24 (blocks and whole
    // plots random), Var(nitrogen mean) = σ²_b/6 + σ²_w/18 + σ²/18.
    [Fact]
    public void BalancedSplitPlot_MeanStandardErrorsFromComponents()
    {
        var reml = MixedModel.FitReml(OatsDesign, Oats());
        var fe = reml.FixedEffects!;
        double sb = reml.Component("block").Variance, sw = reml.Component("whole-plot error").Variance, se = reml.Component(StrataAnova.ResidualName).Variance;
        var v = fe.Combination(fe.MeanRow(["variety"], ["Victory"]));
        AssertRelative(v.Se.Value * v.Se.Value, (sb / 6) + (sw / 6) + (se / 24), 1e-9, "variety mean variance");
        var n = fe.Combination(fe.MeanRow(["nitrogen"], ["0.0cwt"]));
        AssertRelative(n.Se.Value * n.Se.Value, (sb / 6) + (sw / 18) + (se / 18), 1e-9, "nitrogen mean variance");
        Assert.True(v.Df.Value > 5 && n.Df.Value > 5);
    }

    // Library recomputation (mixed-model/oats-missing-plots-emm.out.json: statsmodels 0.13.5 REML
    // estimates, Cov(β̂) = (X'V⁻¹X)⁻¹ by numpy): the oats with four sub-plots removed. The two fits'
    // variances agree to about 1e-10 relative (MixedModelTests), so means and SEs are compared at 1e-7.
    [Fact]
    public void UnbalancedSplitPlot_MeansAndDifferencesMatchLibrary()
    {
        var data = Where(Oats(), i => !Removed.Contains(i));
        var fe = MixedModel.FitReml(OatsDesign, data).FixedEffects!;
        var refv = JsonDocument.Parse(ReferenceFiles.ReadAllText("mixed-model", "oats-missing-plots-emm.out.json")).RootElement;
        double V(JsonElement e, string name) => double.Parse(e.GetProperty(name).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
        var checkedMeans = 0;
        foreach (var e in refv.GetProperty("emmeans").EnumerateObject())
        {
            var (factor, level) = (e.Name.Split(' ')[0], e.Name.Split(' ')[1]);
            var m = fe.Combination(fe.MeanRow([factor], [level]));
            AssertRelative(m.Estimate + fe.Shift, V(e.Value, "mean"), 1e-7, e.Name + " mean");
            AssertRelative(m.Se.Value, V(e.Value, "se"), 1e-7, e.Name + " se");
            checkedMeans++;
        }

        foreach (var e in refv.GetProperty("differences").EnumerateObject())
        {
            var parts = e.Name.Split(' ');
            var d = fe.Combination(RemlComparisons.Difference(fe.MeanRow([parts[0]], [parts[1]]), fe.MeanRow([parts[0]], [parts[3]])));
            AssertRelative(d.Estimate, V(e.Value, "diff"), 1e-7, e.Name + " diff");
            AssertRelative(d.Se.Value, V(e.Value, "se"), 1e-7, e.Name + " se");
        }

        Assert.Equal(7, checkedMeans);
    }

    // Property: the Wald F of the k − 1 differences of a factor's marginal means is the fit's own F
    // test of that factor (the same hypothesis), on unbalanced data, to 1e-9. The df use the same
    // Satterthwaite rule, but for several directions that rule (Fai and Cornelius 1996: E = Σ ν_i/(ν_i − 2)
    // over the eigen-directions of L Cov L') depends on the basis of the hypothesis (differences of
    // means here, sum-to-zero coefficients in the fit), so they agree closely, not exactly (measured:
    // 7e-7 and 5e-6 relative); they are compared at 1e-4.
    [Theory]
    [InlineData("variety")]
    [InlineData("nitrogen")]
    public void WaldTestOfMeanDifferencesIsTheFitsFTest(string factor)
    {
        var reml = MixedModel.FitReml(OatsDesign, Where(Oats(), i => !Removed.Contains(i)));
        var fe = reml.FixedEffects!;
        var rows = Rows(fe, factor);
        var wald = fe.Wald([.. rows.Skip(1).Select(r => (IReadOnlyList<double>)RemlComparisons.Difference(r, rows[0]))]);
        var t = reml.Test(factor);
        Assert.Equal(t.NumeratorDf, wald.NumeratorDf);
        AssertRelative(wald.F.Value, t.F.Value, 1e-9, "F");
        AssertRelative(wald.DfDenominator.Value, t.DfDenominator.Value, 1e-4, "df");
    }

    // Property: for a two-level factor the pairwise Wald t² equals the fit's F test and the pair's
    // Satterthwaite df equals its denominator df (two varieties, unbalanced).
    [Fact]
    public void TwoLevelFactor_PairTSquaredIsTheFTest()
    {
        var all = Oats();
        var data = Where(all, i => all.Labels[1][i] != "Victory" && !Removed.Contains(i));
        var reml = MixedModel.FitReml(OatsDesign, data);
        var fe = reml.FixedEffects!;
        var rows = Rows(fe, "variety");
        Assert.Equal(2, rows.Length);
        var d = fe.Combination(RemlComparisons.Difference(rows[0], rows[1]));
        var t = reml.Test("variety");
        AssertRelative(Math.Pow(d.Estimate / d.Se.Value, 2), t.F.Value, 1e-9, "t² = F");
        AssertRelative(d.Df.Value, t.DfDenominator.Value, 1e-9, "df");
    }

    // Property: renaming the levels (and so changing the coding order) leaves every difference of
    // marginal means, its SE and df unchanged (unbalanced data).
    [Fact]
    public void DifferencesInvariantToRelabelling()
    {
        var data = Where(Oats(), i => !Removed.Contains(i));
        var renamed = new DesignData(data.Response, [data.Labels[0], [.. data.Labels[1].Select(l => "z" + l)], [.. data.Labels[2].Select(l => l == "0.0cwt" ? "zero" : l)]]);
        // Reverse the rows so that first appearance (the coding order) changes as well.
        var order = Enumerable.Range(0, data.Response.Length).Reverse().ToArray();
        var reversed = new DesignData([.. order.Select(i => renamed.Response[i])], [.. renamed.Labels.Select(c => (IReadOnlyList<string>)[.. order.Select(i => c[i])])]);
        var a = MixedModel.FitReml(OatsDesign, data).FixedEffects!;
        var b = MixedModel.FitReml(OatsDesign, reversed).FixedEffects!;
        string Map(string factor, string level) => factor == "variety" ? "z" + level : level == "0.0cwt" ? "zero" : level;
        foreach (var factor in new[] { "variety", "nitrogen" })
        {
            var levels = a.Levels(factor);
            Assert.NotEqual(levels.Select(l => Map(factor, l)), b.Levels(factor));
            for (var i = 0; i < levels.Count; i++)
            {
                for (var j = i + 1; j < levels.Count; j++)
                {
                    var x = a.Combination(RemlComparisons.Difference(a.MeanRow([factor], [levels[i]]), a.MeanRow([factor], [levels[j]])));
                    var y = b.Combination(RemlComparisons.Difference(b.MeanRow([factor], [Map(factor, levels[i])]), b.MeanRow([factor], [Map(factor, levels[j])])));
                    AssertRelative(y.Estimate, x.Estimate, 1e-9, "diff");
                    AssertRelative(y.Se.Value, x.Se.Value, 1e-9, "se");
                    AssertRelative(y.Df.Value, x.Df.Value, 1e-7, "df");
                }
            }
        }
    }

    // The interpolated studentized range quantiles of many distinct df (Tukey–Kramer of a REML fit,
    // each pair on its own df) equal the directly computed quantiles (the project's own
    // StudentizedRange, checked against published tables in its tests) to 1e-9 relative.
    [Theory]
    [InlineData(3, 4.2, 60.0)]
    [InlineData(6, 9.5, 12.5)]
    [InlineData(12, 20.0, 400.0)]
    public void TukeyQuantiles_InterpolationEqualsDirect(int k, double low, double high)
    {
        var dfs = Enumerable.Range(0, 20).Select(i => low * Math.Pow(high / low, i / 19.0)).ToArray();
        var q = RemlComparisons.TukeyQuantiles(0.05, k, dfs);
        foreach (var df in dfs.Where((_, i) => i % 3 == 1))
        {
            AssertRelative(q(df), StudentizedRange.UpperQuantile(0.05, k, df), 1e-9, "q at " + df.ToString(CultureInfo.InvariantCulture));
        }
    }

    // Exact t test with one comparison: Dunnett with a single other level is the t test on the
    // pair's own df (the p and interval of an ordinary two-sided t).
    [Fact]
    public void ControlWithOneComparisonIsTheTTest()
    {
        var all = Oats();
        var data = Where(all, i => all.Labels[1][i] != "Victory" && !Removed.Contains(i));
        var fe = MixedModel.FitReml(OatsDesign, data).FixedEffects!;
        var rows = Rows(fe, "variety");
        var r = RemlComparisons.WithControl(fe, fe.Levels("variety"), rows, 0, DunnettAlternative.TwoSided, 0.05);
        var c = Assert.Single(r.Comparisons);
        var d = fe.Combination(RemlComparisons.Difference(rows[1], rows[0]));
        AssertRelative(c.PAdjusted.Value, Probability.TTwoSided(d.Estimate / d.Se.Value, d.Df.Value), 1e-12, "p");
        AssertRelative(c.CiHigh.Value - c.Diff, Probability.TCritical(0.05, d.Df.Value) * d.Se.Value, 1e-12, "half width");
    }
}
