using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using static StudyPress.Statistics.Tests.Designs.DesignReference;

namespace StudyPress.Statistics.Tests.Designs;

// Designs without a published table: Latin square cross-checked against the project's QR route
// (FactorialAnova, additive model, a different algorithm), quasi-F by exact hand derivation, and
// the design mistakes the strata refuse.
public class StrataDesignTests
{
    // Invented 4 x 4 Latin square (rows, columns, treatments A-D); responses are arbitrary.
    private static readonly string[] Square = ["ABCD", "BCDA", "CDAB", "DABC"];
    private static readonly double[] SquareY = [10.2, 11.9, 9.4, 12.8, 13.1, 8.7, 11.5, 10.0, 9.9, 12.2, 13.6, 8.8, 11.4, 10.6, 9.1, 14.3];

    private static DesignData LatinSquare()
    {
        var rows = new List<string>();
        var cols = new List<string>();
        var trts = new List<string>();
        for (var i = 0; i < 4; i++)
        {
            for (var j = 0; j < 4; j++)
            {
                rows.Add("r" + i);
                cols.Add("c" + j);
                trts.Add(Square[i][j].ToString());
            }
        }

        return new DesignData(SquareY, [rows, cols, trts]);
    }

    [Fact]
    public void LatinSquare_TwoCrossedBlocks_MatchQrRouteAndAreAdditive()
    {
        var data = LatinSquare();
        var r = StrataAnova.Fit([DesignFactor.Block("row"), DesignFactor.Block("column"), DesignFactor.Treatment("treatment")], data);
        Assert.Equal(["row", "column", "treatment", StrataAnova.ResidualName], r.Rows.Select(x => x.Term).ToArray());
        Assert.Equal([3, 3, 3, 6], r.Rows.Select(x => x.Df).ToArray());

        // Cross-check: the additive fixed-effects model fitted by Householder QR (type 1 SS are
        // order-free here because the square is orthogonal).
        static FactorColumn Col(string name, IReadOnlyList<string> labels)
        {
            var levels = labels.Distinct().ToList();
            return new FactorColumn(name, [.. labels.Select(l => levels.IndexOf(l))], levels);
        }

        var qr = FactorialAnova.Fit(new AnovaInput(
            SquareY, [Col("row", data.Labels[0]), Col("column", data.Labels[1]), Col("treatment", data.Labels[2])], false, SumOfSquaresType.Sequential, 0.05));
        for (var t = 0; t < 3; t++)
        {
            AssertRelative(r.Rows[t].SumOfSquares, qr.Terms[t].SumOfSquares, 1e-12, "SS " + qr.Terms[t].Name);
            AssertRelative(r.Rows[t].F.Value, qr.Terms[t].F.Value, 1e-12, "F " + qr.Terms[t].Name);
            AssertRelative(r.Rows[t].P.Value, qr.Terms[t].P.Value, 1e-12, "p " + qr.Terms[t].Name);
        }

        AssertRelative(r.Row(StrataAnova.ResidualName).SumOfSquares, qr.ResidualSumOfSquares, 1e-12, "residual SS");
        Assert.Equal(StrataAnova.ResidualName, r.Row("treatment").Stratum);
    }

    // Latin square rows (exact hand derivation of the general formula for t = 4): the other
    // blocking factor stays, so RE(rows) = (MS_rows + (t − 1) MS_E) / (t MS_E), f1 = 6, f2 = 9.
    [Fact]
    public void LatinSquare_RelativeEfficiencyOfRows()
    {
        var r = StrataAnova.Fit([DesignFactor.Block("row"), DesignFactor.Block("column"), DesignFactor.Treatment("treatment")], LatinSquare());
        var re = RelativeEfficiency.OfBlocking(r, "row");
        var msR = r.Row("row").MeanSquare.Value;
        var msE = r.Row(StrataAnova.ResidualName).MeanSquare.Value;
        AssertRelative(re.Efficiency.Value, (msR + (3 * msE)) / (4 * msE), 1e-12, "RE rows");
        Assert.Equal(9, re.DfWithoutBlocking);
        AssertRelative(re.EfficiencyDfCorrected.Value, re.Efficiency.Value * 7 * 12 / (9.0 * 10), 1e-12, "corrected");
        Assert.Equal(4, re.Replicates);
    }

    // Fixed A (2) x random B (3) x random C (2), 2 replicates: no single mean square has A's null
    // expectation. Exact hand derivation (unrestricted model, n = 24, coefficient n / cells):
    // E MS(A) = σ² + 2 σ²(ABC) + 6 σ²(AC) + 4 σ²(AB) + 12 θ(A); the error is MS(A:B) + MS(A:C) − MS(A:B:C), with Satterthwaite df.
    private static DesignData ThreeWay(double abScale, double acScale)
    {
        var a = new List<string>();
        var b = new List<string>();
        var c = new List<string>();
        var y = new List<double>();
        var seed = 7;
        for (var i = 0; i < 2; i++)
        {
            for (var j = 0; j < 3; j++)
            {
                for (var k = 0; k < 2; k++)
                {
                    for (var rep = 0; rep < 2; rep++)
                    {
                        a.Add("a" + i);
                        b.Add("b" + j);
                        c.Add("c" + k);
                        seed = (seed * 1103515245 + 12345) & 0x7fffffff; // fixed LCG: deterministic invented data
                        var ab = i == 1 ? abScale * (j == 0 ? 2.5 : j == 1 ? -1.0 : 0.8) : 0;
                        var ac = i == 1 && k == 1 ? acScale : 0;
                        y.Add((i * 3.0) + (j * 1.3) - (k * 0.7) + ab + ac + (seed % 1000 / 250.0));
                    }
                }
            }
        }

        return new DesignData([.. y], [a, b, c]);
    }

    private static StrataAnovaResult FitThreeWay(DesignData data) =>
        StrataAnova.Fit([DesignFactor.Treatment("A"), DesignFactor.Random("B"), DesignFactor.Random("C")], data);

    [Fact]
    public void QuasiF_FixedByTwoRandom_SatterthwaiteDf()
    {
        var r = FitThreeWay(ThreeWay(1.0, 1.7));
        var rowA = r.Row("A");
        Assert.True(rowA.IsQuasiF);
        Assert.Equal(
            [("A:B", 1.0), ("A:C", 1.0), ("A:B:C", -1.0)],
            rowA.Denominator.Select(d => (d.Term, d.Coefficient)).ToArray());
        Assert.Equal("σ² + 2 σ²(A:B:C) + 6 σ²(A:C) + 4 σ²(A:B) + 12 θ(A)", StrataAnova.DescribeEms(rowA.ExpectedMeanSquare));
        var msAb = r.Row("A:B").MeanSquare.Value;
        var msAc = r.Row("A:C").MeanSquare.Value;
        var msAbc = r.Row("A:B:C").MeanSquare.Value;
        var den = msAb + msAc - msAbc;
        AssertRelative(rowA.DenominatorMeanSquare.Value, den, 1e-12, "quasi-F error");
        AssertRelative(rowA.F.Value, rowA.MeanSquare.Value / den, 1e-12, "quasi-F");
        var df = den * den / ((msAb * msAb / 2) + (msAc * msAc / 1) + (msAbc * msAbc / 2));
        AssertRelative(rowA.DfDenominator.Value, df, 1e-12, "Satterthwaite df");
        AssertRelative(rowA.P.Value, Probability.FUpper(rowA.F.Value, 1, df), 1e-12, "p");

        // B (random) is also a quasi-F case: MS(A:B) + MS(B:C) − MS(A:B:C).
        Assert.True(r.Row("B").IsQuasiF);
        Assert.Equal(["A:B", "B:C", "A:B:C"], r.Row("B").Denominator.Select(d => d.Term).ToArray());

        // A:B:C is tested exactly against the residual; A:B exactly against A:B:C.
        // (A random row is its own stratum; its test is named by its denominator.)
        Assert.Equal("A:B:C", r.Row("A:B").Denominator.Single().Term);
        Assert.False(r.Row("A:B").IsQuasiF);
        Assert.Equal("A:B", r.Row("A:B").Stratum);
        Assert.Equal(StrataAnova.ResidualName, r.Row("A:B:C").Denominator.Single().Term);
    }

    // Without the A:B and A:C effects these invented data give MS(A:B) + MS(A:C) < MS(A:B:C): the
    // quasi-F error is negative, and F, p and df are "not defined" with the reason, never a number.
    [Fact]
    public void QuasiF_NegativeErrorCombination_IsNotDefined()
    {
        var rowA = FitThreeWay(ThreeWay(0, 0)).Row("A");
        Assert.True(rowA.IsQuasiF);
        Assert.True(rowA.DenominatorMeanSquare.Value < 0);
        Assert.False(rowA.F.IsDefined);
        Assert.False(rowA.P.IsDefined);
        Assert.False(rowA.DfDenominator.IsDefined);
        Assert.Contains("not positive", rowA.F.Reason, StringComparison.Ordinal);
    }

    // ---- design mistakes ----------------------------------------------------------------------

    [Fact]
    public void BlockMissingATreatment_IsReportedWithTheCombination()
    {
        var data = Load("rcbd", "clewer-wheat.csv", "yield", "block", "variety");
        var missing = Where(data, i => !(data.Labels[0][i] == "B2" && data.Labels[1][i] == "V3"));
        var issue = StrataAnova.Check([DesignFactor.Block("block"), DesignFactor.Treatment("variety")], missing);
        Assert.NotNull(issue);
        Assert.Equal(DesignIssueKind.MissingCombination, issue.Kind);
        Assert.Contains("block B2", issue.Message, StringComparison.Ordinal);
        Assert.Contains("variety V3", issue.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentException>(() => StrataAnova.Fit([DesignFactor.Block("block"), DesignFactor.Treatment("variety")], missing));
    }

    [Fact]
    public void UnequalReplication_IsUnbalanced()
    {
        var data = Load("nested", "doncaster-davey-we1-cortisol.csv", "cortisol", "food", "pen");
        var fewer = Where(data, i => i != 0);
        var issue = StrataAnova.Check([DesignFactor.Treatment("food"), DesignFactor.Random("pen", "food")], fewer);
        Assert.NotNull(issue);
        Assert.Equal(DesignIssueKind.Unbalanced, issue.Kind);
        Assert.Contains("food 1, pen 1 has 2 observation(s)", issue.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TooManyFactors_IsADeclarationIssue()
    {
        var labels = Enumerable.Range(0, 9).Select(f => (IReadOnlyList<string>)["a", "b"]).ToList();
        var issue = StrataAnova.Check([.. Enumerable.Range(0, 9).Select(f => DesignFactor.Treatment("f" + f.ToString(System.Globalization.CultureInfo.InvariantCulture)))], new DesignData([1, 2], labels));
        Assert.NotNull(issue);
        Assert.Equal(DesignIssueKind.Declaration, issue.Kind);
        Assert.Contains("between 1 and 8 factors", issue.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void RandomFactorWithOneLevel_IsRefused()
    {
        var data = new DesignData([1, 2, 3, 4], [["a", "a", "b", "b"], ["o", "o", "o", "o"]]);
        var issue = StrataAnova.Check([DesignFactor.Treatment("T"), DesignFactor.Random("operator")], data);
        Assert.NotNull(issue);
        Assert.Equal(DesignIssueKind.SingleLevel, issue.Kind);
        Assert.Equal(["operator"], issue.Factors);
    }

    [Fact]
    public void SplitPlotWithoutBlocks_AndBadNesting_AreRefused()
    {
        var data = new DesignData([1, 2, 3, 4], [["a", "a", "b", "b"], ["x", "y", "x", "y"]]);
        Assert.Equal(
            DesignIssueKind.SplitPlotWithoutBlocks,
            StrataAnova.Check([DesignFactor.Treatment("W", PlotLevel.WholePlot), DesignFactor.Treatment("S", PlotLevel.SubPlot)], data)!.Kind);
        Assert.Equal(
            DesignIssueKind.Declaration,
            StrataAnova.Check([DesignFactor.Treatment("W"), DesignFactor.Random("S", "nowhere")], data)!.Kind);
        Assert.Equal(
            DesignIssueKind.Declaration,
            StrataAnova.Check([DesignFactor.Random("W", "S"), DesignFactor.Random("S", "W")], data)!.Kind);
        Assert.Equal(
            DesignIssueKind.Declaration,
            StrataAnova.Check([DesignFactor.Treatment("W", PlotLevel.WholePlot), DesignFactor.Treatment("S")], data)!.Kind);
    }

    // Split-split plot in blocks (invented 2 blocks x 2 x 2 x 2): three strata with errors
    // blocks x main-plot treatment, blocks x (main x sub) beyond it, and the rest; df by hand:
    // block 1, W 1, error(a) 1, S 1, W:S 1, error(b) 2, U 1, W:U 1, S:U 1, W:S:U 1, error(c) 4.
    [Fact]
    public void SplitSplitPlot_ThreeStrataAndTheirDf()
    {
        var bl = new List<string>();
        var w = new List<string>();
        var s = new List<string>();
        var u = new List<string>();
        var y = new List<double>();
        var v = 0.37;
        foreach (var b0 in new[] { "I", "II" })
        {
            foreach (var w0 in new[] { "w1", "w2" })
            {
                foreach (var s0 in new[] { "s1", "s2" })
                {
                    foreach (var u0 in new[] { "u1", "u2" })
                    {
                        bl.Add(b0);
                        w.Add(w0);
                        s.Add(s0);
                        u.Add(u0);
                        v = (v * 3.7) % 1; // deterministic invented values
                        y.Add(10 + v);
                    }
                }
            }
        }

        var r = StrataAnova.Fit(
            [DesignFactor.Block("block"), DesignFactor.Treatment("W", PlotLevel.WholePlot), DesignFactor.Treatment("S", PlotLevel.SubPlot), DesignFactor.Treatment("U", PlotLevel.SubSubPlot)],
            new DesignData([.. y], [bl, w, s, u]));
        Assert.Equal(1, r.Row("whole-plot error").Df);
        Assert.Equal(2, r.Row("sub-plot error").Df);
        Assert.Equal(4, r.Row("sub-sub-plot error").Df);
        Assert.Equal("whole-plot error", r.Row("W").Stratum);
        Assert.Equal("sub-plot error", r.Row("W:S").Stratum);
        Assert.Equal("sub-sub-plot error", r.Row("S:U").Stratum);
        Assert.Equal("sub-sub-plot error", r.Row("W:S:U").Stratum);
        var sum = r.Rows.Sum(x => x.SumOfSquares);
        AssertRelative(sum, r.TotalSumOfSquares, 1e-12, "strata add up to the total");
    }
}
