using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Tests.Support;
using static StudyPress.Statistics.Tests.Designs.DesignReference;

namespace StudyPress.Statistics.Tests.Designs;

// Variance components, ICC and the efficiency of blocking. Estimates against the collection's
// exact recomputations (relative 1e-9); intervals by exact hand derivation from their definitions.
public class VarianceComponentTests
{
    private const double Rel = 1e-9;

    // Exact recomputation (nested/doncaster-davey-we1-cortisol): σ²(pen) = (MS pen − MS error)/3.
    [Fact]
    public void Nested_WorkedExample1_ComponentsAndSatterthwaiteInterval()
    {
        var anova = StrataAnova.Fit(
            [DesignFactor.Treatment("food"), DesignFactor.Random("pen", "food")],
            Load("nested", "doncaster-davey-we1-cortisol.csv", "cortisol", "food", "pen"));
        var vc = VarianceComponents.Estimate(anova);
        var e = Expected("nested", "doncaster-davey-we1-cortisol.expected.json").GetProperty("exact_recomputation").GetProperty("variance_components_anova_method");
        var pen = vc.Of("pen(food)");
        var res = vc.Of(StrataAnova.ResidualName);
        AssertRelative(pen.Variance, Number(e, "pen_within_food"), Rel, "σ²(pen)");
        AssertRelative(res.Variance, Number(e, "residual"), Rel, "σ²");
        Assert.Equal(["pen(food)", StrataAnova.ResidualName], vc.Components.Select(c => c.Term).ToArray());
        AssertRelative(pen.Proportion.Value, pen.Variance / (pen.Variance + res.Variance), 1e-14, "proportion");
        AssertRelative(pen.Sd.Value, Math.Sqrt(pen.Variance), 1e-14, "sd");

        // Satterthwaite (exact hand derivation): L = MS_pen/3 − MS_err/3, ν = L² / ((MS_pen/3)²/6 + (MS_err/3)²/16),
        // interval ν L / χ²(upper 0.025, ν) .. ν L / χ²(upper 0.975, ν).
        var msPen = 20.4975;
        var msErr = 86.7866666666666667 / 16;
        var l = (msPen - msErr) / 3;
        var nu = l * l / ((msPen / 3 * (msPen / 3) / 6) + (msErr / 3 * (msErr / 3) / 16));
        AssertRelative(pen.Df.Value, nu, 1e-9, "ν");
        AssertRelative(pen.CiLow.Value, nu * l / Probability.ChiSquareCritical(0.025, nu), 1e-9, "low");
        AssertRelative(pen.CiHigh.Value, nu * l / Probability.ChiSquareCritical(0.975, nu), 1e-9, "high");

        // The residual's interval is the exact chi-square one (16 df): P(χ² ≥ 16 s²/low) = 0.025.
        Assert.Equal(16, res.Df.Value, 12);
        AssertRelative(Probability.ChiSquareUpper(16 * res.Variance / res.CiLow.Value, 16), 0.025, 1e-9, "residual low");
        AssertRelative(Probability.ChiSquareUpper(16 * res.Variance / res.CiHigh.Value, 16), 0.975, 1e-9, "residual high");
        Assert.Null(pen.Note);
        Assert.Contains("Satterthwaite", vc.IntervalMethod, StringComparison.Ordinal);
    }

    // Exact recomputation (nested/doncaster-davey-model-2-2): B(A) and C(B) by the stated formulas.
    [Fact]
    public void Nested_Model22_Components()
    {
        var anova = StrataAnova.Fit(
            [DesignFactor.Treatment("A"), DesignFactor.Random("B", "A"), DesignFactor.Random("C", "B")],
            Load("nested", "doncaster-davey-model-2-2.csv", "y", "A", "B", "C"));
        var vc = VarianceComponents.Estimate(anova);
        var e = Expected("nested", "doncaster-davey-model-2-2.expected.json").GetProperty("exact_recomputation").GetProperty("variance_components_anova_method");
        AssertRelative(vc.Of("B(A)").Variance, Number(e, "B_within_A"), Rel, "σ²(B)");
        AssertRelative(vc.Of("C(B(A))").Variance, Number(e, "C_within_B"), Rel, "σ²(C)");
        AssertRelative(vc.Of(StrataAnova.ResidualName).Variance, Number(e, "residual"), Rel, "σ²");
        var sum = vc.Components.Sum(c => c.Proportion.Value);
        Assert.Equal(1.0, sum, 12);
    }

    // A negative estimate is shown as estimated and explained (exact recomputation of model 5.2:
    // σ²(S) = (2.13797642667 − 15.3512610217) / 12 < 0), never set to zero; its proportion and
    // interval are not defined, and the total excludes it.
    [Fact]
    public void NegativeEstimate_IsShownAndExplained()
    {
        var anova = StrataAnova.Fit(
            [DesignFactor.Block("S"), DesignFactor.Treatment("A", PlotLevel.WholePlot), DesignFactor.Treatment("B", PlotLevel.WholePlot), DesignFactor.Treatment("C", PlotLevel.SubPlot)],
            Load("split-plot", "doncaster-davey-model-5-2.csv", "y", "S", "A", "B", "C"));
        var vc = VarianceComponents.Estimate(anova);
        var s = vc.Of("S");
        AssertRelative(s.Variance, (2.13797642667 - 15.3512610217) / 12, 1e-9, "σ²(S)");
        Assert.True(s.IsNegative);
        Assert.Contains("negative", s.Note, StringComparison.Ordinal);
        Assert.False(s.Proportion.IsDefined);
        Assert.False(s.CiLow.IsDefined);
        Assert.False(s.Sd.IsDefined);
        var wp = vc.Of("whole-plot error");
        AssertRelative(wp.Variance, (15.3512610217 - 10.5962868825) / 2, 1e-9, "σ²(whole plots)");
        AssertRelative(vc.Total, wp.Variance + vc.Of("sub-plot error").Variance, 1e-14, "total of the non-negative components");
        Assert.Contains("residual", vc.Of("sub-plot error").Note, StringComparison.Ordinal); // one observation per sub-plot
    }

    // ---- ICC, Shrout and Fleiss (1979) ---------------------------------------------------------

    private static IccResult ShroutFleiss()
    {
        var data = Load("icc", "shrout-fleiss-1979.csv", "rating", "target", "judge");
        var table = new double[6][];
        for (var t = 0; t < 6; t++)
        {
            table[t] = new double[4];
        }

        for (var i = 0; i < data.Response.Length; i++)
        {
            table[int.Parse(data.Labels[0][i], System.Globalization.CultureInfo.InvariantCulture) - 1][int.Parse(data.Labels[1][i], System.Globalization.CultureInfo.InvariantCulture) - 1] = data.Response[i];
        }

        return IntraclassCorrelation.FromRatings(table);
    }

    [Fact]
    public void Icc_ShroutFleiss_PublishedAndExactForms()
    {
        var r = ShroutFleiss();
        var e = Expected("icc", "shrout-fleiss-1979.expected.json");

        // Published: ICC(3,1) = .71 (Table 4).
        Accuracy.AssertRoundsTo(r.Form("ICC(3,1)").Icc.Value, "0.71", "ICC(3,1) published");

        // Exact fractions (collection file).
        AssertRelative(r.Form("ICC(1,1)").Icc.Value, 448.0 / 2703, 1e-12, "ICC(1,1)");
        AssertRelative(r.Form("ICC(2,1)").Icc.Value, 184.0 / 635, 1e-12, "ICC(2,1)");
        AssertRelative(r.Form("ICC(3,1)").Icc.Value, 920.0 / 1287, 1e-12, "ICC(3,1)");
        AssertRelative(r.Form("ICC(1,4)").Icc.Value, 1792.0 / 4047, 1e-12, "ICC(1,4)");
        AssertRelative(r.Form("ICC(2,4)").Icc.Value, 736.0 / 1187, 1e-12, "ICC(2,4)");
        AssertRelative(r.Form("ICC(3,4)").Icc.Value, 3680.0 / 4047, 1e-12, "ICC(3,4)");
        var x = e.GetProperty("exact_recomputation");
        AssertRelative(r.Bms, Number(x, "mean_squares", "BMS"), Rel, "BMS");
        AssertRelative(r.Wms, Number(x, "mean_squares", "WMS"), Rel, "WMS");
        AssertRelative(r.Jms, Number(x, "mean_squares", "JMS"), Rel, "JMS");
        AssertRelative(r.Ems, Number(x, "mean_squares", "EMS"), Rel, "EMS");
        AssertRelative(r.Form("ICC(1,1)").F.Value, Number(x, "one_way_F"), Rel, "one-way F");
        AssertRelative(r.Form("ICC(1,1)").P.Value, Number(x, "one_way_F_p"), Rel, "one-way p");
        AssertRelative(r.Form("ICC(3,1)").P.Value, Number(x, "two_way_F_targets_p"), Rel, "two-way p");
    }

    // Intervals, exact hand derivation from their definition: the lower limit L of ICC(1,1) is the
    // ρ0 at which the test of ρ = ρ0, F (1 − ρ0)/(1 + (k−1)ρ0) on (n−1, n(k−1)) df, has upper tail
    // α/2; the upper limit has lower tail α/2. Same for ICC(3,1) on (n−1, (n−1)(k−1)) df; the mean-
    // of-k forms are 1 − 1/F_L; ICC(2,4) limits are ICC(2,1)'s stepped up by Spearman-Brown.
    [Fact]
    public void Icc_Intervals_SatisfyTheirDefinitions()
    {
        var r = ShroutFleiss();
        const int k = 4;
        foreach (var (name, df2) in new[] { ("ICC(1,1)", 18.0), ("ICC(3,1)", 15.0) })
        {
            var form = r.Form(name);
            var f = form.F.Value;
            double At(double rho) => f * (1 - rho) / (1 + ((k - 1) * rho));
            AssertRelative(Probability.FUpper(At(form.CiLow.Value), 5, df2), 0.025, 1e-8, name + " low");
            AssertRelative(Probability.FLower(At(form.CiHigh.Value), 5, df2), 0.025, 1e-8, name + " high");
            Assert.True(form.CiLow.Value < form.Icc.Value && form.Icc.Value < form.CiHigh.Value, name + " contains the estimate");
        }

        var f1 = r.Form("ICC(1,1)");
        var fl = f1.F.Value / Probability.FCritical(0.025, 5, 18);
        AssertRelative(r.Form("ICC(1,4)").CiLow.Value, 1 - (1 / fl), 1e-12, "ICC(1,4) low");
        var l2 = r.Form("ICC(2,1)").CiLow.Value;
        var u2 = r.Form("ICC(2,1)").CiHigh.Value;
        Assert.True(l2 < 184.0 / 635 && 184.0 / 635 < u2);
        AssertRelative(r.Form("ICC(2,4)").CiLow.Value, 4 * l2 / (1 + (3 * l2)), 1e-12, "ICC(2,4) low");
        AssertRelative(r.Form("ICC(2,4)").CiHigh.Value, 4 * u2 / (1 + (3 * u2)), 1e-12, "ICC(2,4) high");
    }

    // One-way random design (targets random, judges ignored): the variance components of the
    // collection's exact recomputation, and σ²_b / (σ²_b + σ²_w) = ICC(1,1) = 448/2703.
    [Fact]
    public void OneWayRandom_ComponentsGiveIcc11()
    {
        var data = Load("icc", "shrout-fleiss-1979.csv", "rating", "target");
        var vc = VarianceComponents.Estimate(StrataAnova.Fit([DesignFactor.Random("target")], data));
        var e = Expected("icc", "shrout-fleiss-1979.expected.json").GetProperty("exact_recomputation").GetProperty("one_way_variance_components");
        AssertRelative(vc.Of("target").Variance, Number(e, "between_targets"), Rel, "σ²(target)");
        AssertRelative(vc.Of(StrataAnova.ResidualName).Variance, Number(e, "within"), Rel, "σ²");
        AssertRelative(vc.Of("target").Proportion.Value, 448.0 / 2703, 1e-12, "proportion = ICC(1,1)");
    }

    // ---- relative efficiency of blocking ---------------------------------------------------------

    // Clewer RCBD, exact hand computation from the exact MS (block 4.89, error 0.40; 3 blocks x 4
    // varieties): E = (2 x 4.89 + 9 x 0.40)/11, RE = 669/220; df correction (f1 = 6, f2 = 8):
    // x (7 x 11)/(9 x 9) = 77/81, so 51513/17820; worth 3 x that unblocked replicates.
    [Fact]
    public void Rcbd_RelativeEfficiency_WithDfCorrection()
    {
        var anova = StrataAnova.Fit(
            [DesignFactor.Block("block"), DesignFactor.Treatment("variety")],
            Load("rcbd", "clewer-wheat.csv", "yield", "block", "variety"));
        var re = RelativeEfficiency.OfBlocking(anova, "block");
        AssertRelative(re.ErrorWithoutBlocking, 13.38 / 11, 1e-12, "E without blocks");
        AssertRelative(re.Efficiency.Value, 669.0 / 220, 1e-12, "RE");
        AssertRelative(re.EfficiencyDfCorrected.Value, 51513.0 / 17820, 1e-12, "RE corrected");
        Assert.Equal(6, re.DfWithBlocking);
        Assert.Equal(8, re.DfWithoutBlocking);
        Assert.Equal(3, re.Replicates);
        AssertRelative(re.EquivalentReplicates.Value, 3 * 51513.0 / 17820, 1e-12, "replicates worth");
        Assert.Throws<ArgumentException>(() => RelativeEfficiency.OfBlocking(anova, "variety"));
    }
}
