using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Tests.Support;
using static StudyPress.Statistics.Tests.Designs.DesignReference;

namespace StudyPress.Statistics.Tests.Designs;

// Strata ANOVA of balanced designs against Reference/rcbd, split-plot, nested and icc (SOURCE.md in
// each gives every value's status): published values at their printed digits, the collection's
// exact recomputations (exact fractions, 12 significant digits) at relative 1e-9.
public class StrataAnovaTests
{
    // ---- Clewer and Scarisbrick (2001), Example 10.1: RCBD, 4 varieties in 3 blocks -------------

    private static StrataAnovaResult Clewer() =>
        StrataAnova.Fit(
            [DesignFactor.Block("block"), DesignFactor.Treatment("variety")],
            Load("rcbd", "clewer-wheat.csv", "yield", "block", "variety"));

    // Published: Table 10.1 (block, variety, error, total rows; F printed 12.22 and 5.52).
    [Fact]
    public void Rcbd_Clewer_PublishedTable()
    {
        var r = Clewer();
        var e = Expected("rcbd", "clewer-wheat-rcbd.expected.json").GetProperty("published").GetProperty("anova");
        AssertPublishedRow(r.Row("block"), e.GetProperty("block"), "block (published)");
        AssertPublishedRow(r.Row("variety"), e.GetProperty("variety"), "variety (published)");
        AssertPublishedRow(r.Row(StrataAnova.ResidualName), e.GetProperty("error"), "error (published)");
        Accuracy.AssertRoundsTo(r.TotalSumOfSquares, "18.81", "total SS (published)");
        Assert.Equal(11, r.TotalDf);
    }

    // Exact recomputation (collection file): F and p of blocks and varieties against the 6-df error.
    [Fact]
    public void Rcbd_Clewer_ExactRecomputation_DenominatorsDerived()
    {
        var r = Clewer();
        var e = Expected("rcbd", "clewer-wheat-rcbd.expected.json").GetProperty("exact_recomputation");
        AssertExactRow(r.Row("block"), e.GetProperty("block"), "block");
        AssertExactRow(r.Row("variety"), e.GetProperty("variety"), "variety");
        AssertExactRow(r.Row(StrataAnova.ResidualName), e.GetProperty("error"), "error");
        AssertRelative(r.TotalSumOfSquares, Number(e, "total", "ss"), 1e-9, "total SS");
        var v = r.Row("variety");
        Assert.Equal(StrataAnova.ResidualName, v.Stratum);
        Assert.False(v.IsQuasiF);
        Assert.Equal(TermKind.Treatment, v.Kind);
        Assert.Equal(TermKind.Block, r.Row("block").Kind);

        // Expected mean squares (exact hand derivation): variety σ² + 3 θ(variety), block σ² + 4 σ²(block).
        Assert.Equal("σ² + 3 θ(variety)", StrataAnova.DescribeEms(v.ExpectedMeanSquare));
        Assert.Equal("σ² + 4 σ²(block)", StrataAnova.DescribeEms(r.Row("block").ExpectedMeanSquare));
        AssertRelative(r.GrandMean, 7.25, 1e-12, "grand mean");
    }

    // ---- Doncaster and Davey (2007) model 5.2: split plot in 2 blocks, A x B on whole plots, C on sub-plots ----

    private static StrataAnovaResult Model52() =>
        StrataAnova.Fit(
            [
                DesignFactor.Block("S"),
                DesignFactor.Treatment("A", PlotLevel.WholePlot),
                DesignFactor.Treatment("B", PlotLevel.WholePlot),
                DesignFactor.Treatment("C", PlotLevel.SubPlot),
            ],
            Load("split-plot", "doncaster-davey-model-5-2.csv", "y", "S", "A", "B", "C"));

    // Published (companion file of model 5.2): F and p of the whole-plot terms against the pooled
    // 5-df whole-plot error, of the sub-plot terms against the pooled 6-df sub-plot error.
    [Fact]
    public void SplitPlot_Model52_PublishedTable()
    {
        var r = Model52();
        var e = Expected("split-plot", "doncaster-davey-model-5-2.expected.json").GetProperty("published").GetProperty("rows");
        AssertPublishedRow(r.Row("S"), e.GetProperty("S"), "S");
        // A: printed F 29.48 is 29.4851 truncated (the exact value rounds to 29.49): one unit allowed.
        AssertPublishedRow(r.Row("A"), e.GetProperty("A"), "A", oneUnit: true);
        AssertPublishedRow(r.Row("B"), e.GetProperty("B"), "B");
        AssertPublishedRow(r.Row("A:B"), e.GetProperty("B*A"), "A:B");
        AssertPublishedRow(r.Row("C"), e.GetProperty("C"), "C");
        AssertPublishedRow(r.Row("A:C"), e.GetProperty("C*A"), "A:C");
        AssertPublishedRow(r.Row("B:C"), e.GetProperty("C*B"), "B:C");
        AssertPublishedRow(r.Row("A:B:C"), e.GetProperty("C*B*A"), "A:B:C");
        Accuracy.AssertRoundsTo(r.TotalSumOfSquares, "1297.13", "total SS");

        // The pooled errors are the sums of the printed pieces (S*A + S*B + S*B*A; the four C*S rows).
        Accuracy.AssertRoundsTo(r.Row("whole-plot error").SumOfSquares, "76.76", "whole-plot error = 28.49 + 12.90 + 35.37");
        Assert.Equal(5, r.Row("whole-plot error").Df);
        Assert.Equal(6, r.Row("sub-plot error").Df);
    }

    // Exact recomputation (collection file): every row at 1e-9, errors derived from the plot levels.
    [Fact]
    public void SplitPlot_Model52_ExactRecomputation()
    {
        var r = Model52();
        var e = Expected("split-plot", "doncaster-davey-model-5-2.expected.json").GetProperty("exact_recomputation");
        foreach (var (term, key) in new[] { ("A", "A"), ("B", "B"), ("A:B", "A:B"), ("C", "C"), ("A:C", "A:C"), ("B:C", "B:C"), ("A:B:C", "A:B:C") })
        {
            AssertExactRow(r.Row(term), e.GetProperty(key), term);
        }

        AssertExactRow(r.Row("S"), e.GetProperty("S"), "S");
        AssertExactRow(r.Row("whole-plot error"), e.GetProperty("whole_plot_error_pooled"), "whole-plot error");
        AssertExactRow(r.Row("sub-plot error"), e.GetProperty("sub_plot_error_pooled"), "sub-plot error");
        AssertRelative(r.TotalSumOfSquares, Number(e, "total", "ss"), 1e-9, "total");

        Assert.Equal("whole-plot error", r.Row("A").Stratum);
        Assert.Equal("whole-plot error", r.Row("A:B").Stratum);
        Assert.Equal("sub-plot error", r.Row("A:C").Stratum);
        Assert.DoesNotContain(r.Rows, x => x.Kind == TermKind.Residual); // one observation per sub-plot
        Assert.Equal(
            ["S", "whole-plot error", "sub-plot error"],
            r.Strata.Select(s => s.Name).ToArray());
        Assert.Equal(["A", "B", "A:B", "whole-plot error"], r.Strata[1].Terms.ToArray());

        // Expected mean squares (exact hand derivation, unrestricted model; n = 24, whole plots 12).
        Assert.Equal("σ²(sub-plot error) + 2 σ²(whole-plot error) + 8 θ(A)", StrataAnova.DescribeEms(r.Row("A").ExpectedMeanSquare));
        Assert.Equal("σ²(sub-plot error) + 12 θ(C)", StrataAnova.DescribeEms(r.Row("C").ExpectedMeanSquare));

        // Blocks tested against the whole-plot error (exact hand computation: 2.13797642667 / 15.3512610217).
        AssertRelative(r.Row("S").F.Value, 2.13797642667 / 15.3512610217, 1e-9, "F(S)");
        Assert.Equal(5, r.Row("S").DfDenominator.Value);
    }

    // ---- Yates (1935) oats: split plot, 6 blocks, variety on whole plots, nitrogen on sub-plots ----

    // Exact recomputation only (the collection's printed table is from memory, unverified, and not used).
    [Fact]
    public void SplitPlot_Oats_ExactRecomputationStrata()
    {
        var r = StrataAnova.Fit(
            [DesignFactor.Block("block"), DesignFactor.Treatment("variety", PlotLevel.WholePlot), DesignFactor.Treatment("nitrogen", PlotLevel.SubPlot)],
            Load("split-plot", "yates-oats.csv", "yield", "block", "variety", "nitrogen"));
        var e = Expected("split-plot", "yates-oats-split-plot.expected.json").GetProperty("exact_recomputation");
        AssertExactRow(r.Row("block"), e.GetProperty("blocks"), "blocks");
        AssertExactRow(r.Row("variety"), e.GetProperty("varieties"), "varieties");
        AssertExactRow(r.Row("whole-plot error"), e.GetProperty("whole_plot_error_B:V"), "whole-plot error");
        AssertExactRow(r.Row("nitrogen"), e.GetProperty("nitrogen"), "nitrogen");
        AssertExactRow(r.Row("variety:nitrogen"), e.GetProperty("varieties:nitrogen"), "V:N");
        AssertExactRow(r.Row("sub-plot error"), e.GetProperty("sub_plot_error"), "sub-plot error");
        AssertRelative(r.TotalSumOfSquares, Number(e, "total", "ss"), 1e-9, "total");
        Assert.Equal(71, r.TotalDf);

        // Whole-plot stratum residuals: one effect per whole plot (18), 4 sub-plots each; their
        // count-weighted SS is the whole-plot error SS (exact recomputation) and they sum to zero.
        var wp = r.StratumEffects["whole-plot error"];
        Assert.Equal(18, wp.Length);
        AssertRelative(wp.Sum(v => 4 * v * v), Number(e, "whole_plot_error_B:V", "ss"), 1e-9, "whole-plot residual SS");
        Assert.True(Math.Abs(wp.Sum()) < 1e-9);
        Assert.Equal(72, r.StratumCellOf["whole-plot error"].Length);
        AssertRelative(r.Residuals.Sum(v => v * v), Number(e, "sub_plot_error", "ss"), 1e-9, "sub-plot residual SS");
        AssertRelative(r.GrandMean, (104.5 + 109.791666666666667 + 97.625) / 3, 1e-12, "grand mean (mean of the exact variety means)");
    }

    // ---- Doncaster and Davey (2007) worked example 1: pens nested in food ----------------------

    private static StrataAnovaResult Cortisol() =>
        StrataAnova.Fit(
            [DesignFactor.Treatment("food"), DesignFactor.Random("pen", "food")],
            Load("nested", "doncaster-davey-we1-cortisol.csv", "cortisol", "food", "pen"));

    [Fact]
    public void Nested_WorkedExample1_PublishedAndExact()
    {
        var r = Cortisol();
        var e = Expected("nested", "doncaster-davey-we1-cortisol.expected.json");

        // Published (companion file): food tested against pens within food, pens against the error.
        AssertPublishedRow(r.Row("food"), e.GetProperty("published").GetProperty("food"), "food");
        AssertPublishedRow(r.Row("pen(food)"), e.GetProperty("published").GetProperty("pen_within_food"), "pen(food)");
        AssertPublishedRow(r.Row(StrataAnova.ResidualName), e.GetProperty("published").GetProperty("error"), "error");

        // Exact recomputation.
        var x = e.GetProperty("exact_recomputation");
        AssertExactRow(r.Row("food"), x.GetProperty("food"), "food");
        AssertExactRow(r.Row("pen(food)"), x.GetProperty("pen_within_food"), "pen(food)");
        AssertExactRow(r.Row(StrataAnova.ResidualName), x.GetProperty("error"), "error");
        Assert.Equal("pen(food)", r.Row("food").Stratum);
        Assert.Equal("σ² + 3 σ²(pen(food)) + 12 θ(food)", StrataAnova.DescribeEms(r.Row("food").ExpectedMeanSquare));
    }

    // ---- Doncaster and Davey (2007) model 2.2: C nested in B nested in A ------------------------

    [Fact]
    public void Nested_Model22_PublishedAndExact()
    {
        var r = StrataAnova.Fit(
            [DesignFactor.Treatment("A"), DesignFactor.Random("B", "A"), DesignFactor.Random("C", "B")],
            Load("nested", "doncaster-davey-model-2-2.csv", "y", "A", "B", "C"));
        var e = Expected("nested", "doncaster-davey-model-2-2.expected.json");
        var p = e.GetProperty("published").GetProperty("model_2_2_i");
        AssertPublishedRow(r.Row("A"), p.GetProperty("A"), "A");
        AssertPublishedRow(r.Row("B(A)"), p.GetProperty("B_within_A"), "B(A)");
        AssertPublishedRow(r.Row("C(B(A))"), p.GetProperty("C_within_B_within_A"), "C(B(A))");
        // Residual: printed MS 6.18 is the printed SS 74.10 / 12 = 6.175 rounded up; the exact MS
        // 6.17467 rounds to 6.17: one unit allowed.
        AssertPublishedRow(r.Row(StrataAnova.ResidualName), p.GetProperty("residual"), "residual", oneUnit: true);

        var x = e.GetProperty("exact_recomputation");
        AssertExactRow(r.Row("A"), x.GetProperty("A"), "A");
        AssertExactRow(r.Row("B(A)"), x.GetProperty("B_within_A"), "B(A)");
        AssertExactRow(r.Row("C(B(A))"), x.GetProperty("C_within_B_within_A"), "C(B(A))");
        AssertExactRow(r.Row(StrataAnova.ResidualName), x.GetProperty("residual"), "residual");
    }

    // ---- Shrout and Fleiss (1979): targets x judges, both random, one rating per cell -----------

    [Fact]
    public void CrossedRandom_ShroutFleiss_TwoWayExact()
    {
        var r = StrataAnova.Fit(
            [DesignFactor.Random("target"), DesignFactor.Random("judge")],
            Load("icc", "shrout-fleiss-1979.csv", "rating", "target", "judge"));
        var e = Expected("icc", "shrout-fleiss-1979.expected.json").GetProperty("exact_recomputation");
        var a = e.GetProperty("anova");
        AssertRelative(r.Row("target").MeanSquare.Value, Number(a, "between_targets", "ms"), 1e-9, "BMS");
        AssertRelative(r.Row("judge").MeanSquare.Value, Number(a, "between_judges", "ms"), 1e-9, "JMS");
        AssertRelative(r.Row("target:judge").MeanSquare.Value, Number(a, "residual", "ms"), 1e-9, "EMS");
        AssertRelative(r.Row("target").F.Value, Number(e, "two_way_F_targets"), 1e-9, "F targets");
        AssertRelative(r.Row("target").P.Value, Number(e, "two_way_F_targets_p"), 1e-9, "p targets");

        // The unreplicated interaction has no error (exact: its expectation is its own variance only).
        Assert.False(r.Row("target:judge").F.IsDefined);
        Assert.Empty(r.Row("target:judge").Denominator);
    }
}
