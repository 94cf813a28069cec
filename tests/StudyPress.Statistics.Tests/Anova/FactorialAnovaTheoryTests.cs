using MathNet.Numerics.LinearAlgebra;
using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// Properties of the three types of sums of squares that follow from their definitions
/// (Searle 1987, Linear Models for Unbalanced Data, ch. 4 and 8), checked on JAHANMI2 data
/// (e-Handbook 1.3.5.5), whole (balanced) and with rows removed (unbalanced).
/// </summary>
public sealed class FactorialAnovaTheoryTests
{
    private static readonly string[] TwoFactors = ["table_speed_x1", "batch"];

    private static AnovaInput Balanced(bool interactions, SumOfSquaresType type) =>
        FactorialTestData.JahanmiInput(TwoFactors, interactions, type);

    private static AnovaInput Unbalanced(bool interactions, SumOfSquaresType type, string[]? factors = null) =>
        FactorialTestData.JahanmiInput(factors ?? TwoFactors, interactions, type, FactorialTestData.UnbalancedRow);

    private static double Rel(double a, double b) => Math.Abs(a - b) / Math.Max(Math.Abs(a), Math.Abs(b));

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Fit_BalancedTwoFactor_AllSsTypesCoincide(bool interactions)
    {
        var t1 = FactorialAnova.Fit(Balanced(interactions, SumOfSquaresType.Sequential));
        var t2 = FactorialAnova.Fit(Balanced(interactions, SumOfSquaresType.Hierarchical));
        var t3 = FactorialAnova.Fit(Balanced(interactions, SumOfSquaresType.Marginal));
        Assert.Equal(interactions ? 3 : 2, t1.Terms.Count);
        for (var t = 0; t < t1.Terms.Count; t++)
        {
            Assert.True(Rel(t1.Terms[t].SumOfSquares, t2.Terms[t].SumOfSquares) < 1e-10, t1.Terms[t].Name);
            Assert.True(Rel(t1.Terms[t].SumOfSquares, t3.Terms[t].SumOfSquares) < 1e-10, t1.Terms[t].Name);
        }
    }

    [Fact]
    public void Fit_BalancedFourFactorWithInteractions_AllSsTypesCoincide()
    {
        string[] four = ["table_speed_x1", "down_feed_rate_x2", "wheel_grit_x3", "batch"];
        var t1 = FactorialAnova.Fit(FactorialTestData.JahanmiInput(four, true, SumOfSquaresType.Sequential));
        var t3 = FactorialAnova.Fit(FactorialTestData.JahanmiInput(four, true, SumOfSquaresType.Marginal));
        Assert.Equal(15, t1.Terms.Count);
        Assert.Equal(480 - 16, t1.ResidualDf);
        for (var t = 0; t < 15; t++)
        {
            Assert.True(Rel(t1.Terms[t].SumOfSquares, t3.Terms[t].SumOfSquares) < 1e-10, t1.Terms[t].Name);
        }
    }

    [Fact]
    public void Fit_UnbalancedSequential_DependsOnTermOrder()
    {
        var ab = FactorialAnova.Fit(Unbalanced(false, SumOfSquaresType.Sequential));
        var ba = FactorialAnova.Fit(Unbalanced(false, SumOfSquaresType.Sequential, ["batch", "table_speed_x1"]));
        Assert.Equal("table_speed_x1", ab.Terms[0].Name);
        Assert.Equal("table_speed_x1", ba.Terms[1].Name);

        // SS(speed) unadjusted differs from SS(speed | batch) when the factors are correlated.
        Assert.True(Rel(ab.Terms[0].SumOfSquares, ba.Terms[1].SumOfSquares) > 1e-3);

        // The residual SS does not depend on the order.
        Assert.True(Rel(ab.ResidualSumOfSquares, ba.ResidualSumOfSquares) < 1e-12);
    }

    [Fact]
    public void Fit_UnbalancedMainEffects_Type1LastEqualsType2AndType2EqualsType3()
    {
        var t1 = FactorialAnova.Fit(Unbalanced(false, SumOfSquaresType.Sequential));
        var t2 = FactorialAnova.Fit(Unbalanced(false, SumOfSquaresType.Hierarchical));
        var t3 = FactorialAnova.Fit(Unbalanced(false, SumOfSquaresType.Marginal));
        Assert.True(Rel(t1.Terms[1].SumOfSquares, t2.Terms[1].SumOfSquares) < 1e-10);
        Assert.True(Rel(t2.Terms[0].SumOfSquares, t3.Terms[0].SumOfSquares) < 1e-10);
        Assert.True(Rel(t2.Terms[1].SumOfSquares, t3.Terms[1].SumOfSquares) < 1e-10);

        // ...while type 1 for the first term is not adjusted, so it differs.
        Assert.True(Rel(t1.Terms[0].SumOfSquares, t2.Terms[0].SumOfSquares) > 1e-3);
    }

    [Fact]
    public void Fit_UnbalancedWithInteraction_Type2AndType3DifferForMainEffects()
    {
        var t1 = FactorialAnova.Fit(Unbalanced(true, SumOfSquaresType.Sequential));
        var t2 = FactorialAnova.Fit(Unbalanced(true, SumOfSquaresType.Hierarchical));
        var t3 = FactorialAnova.Fit(Unbalanced(true, SumOfSquaresType.Marginal));
        Assert.Equal("table_speed_x1:batch", t3.Terms[2].Name);
        Assert.True(Rel(t2.Terms[0].SumOfSquares, t3.Terms[0].SumOfSquares) > 1e-4);
        Assert.True(Rel(t2.Terms[1].SumOfSquares, t3.Terms[1].SumOfSquares) > 1e-4);

        // Type 2 of a main effect ignores the interaction: it equals type 2 of the main-effects model.
        var t2Main = FactorialAnova.Fit(Unbalanced(false, SumOfSquaresType.Hierarchical));
        Assert.True(Rel(t2.Terms[0].SumOfSquares, t2Main.Terms[0].SumOfSquares) < 1e-10);

        // The highest-order term is adjusted for everything under every type.
        Assert.True(Rel(t1.Terms[2].SumOfSquares, t2.Terms[2].SumOfSquares) < 1e-10);
        Assert.True(Rel(t1.Terms[2].SumOfSquares, t3.Terms[2].SumOfSquares) < 1e-10);
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Fit_UnbalancedSequential_TermsPlusResidualEqualTotal(bool interactions)
    {
        var r = FactorialAnova.Fit(Unbalanced(interactions, SumOfSquaresType.Sequential, ["table_speed_x1", "down_feed_rate_x2", "batch"]));
        var sum = r.Terms.Sum(t => t.SumOfSquares) + r.ResidualSumOfSquares;
        Assert.True(Rel(sum, r.TotalSumOfSquares) < 1e-12);
        Assert.Equal(r.TotalDf, r.Terms.Sum(t => t.Df) + r.ResidualDf);
    }

    [Fact]
    public void Fit_Unbalanced2x2Marginal_EqualsUnweightedMeansContrast()
    {
        // For a 2x2 cell-means model, the type 3 hypothesis for A is m11 + m12 - m21 - m22 = 0 and
        // its SS is L² / sum(1/n_ij) (Searle 1987, section 4.4; a contrast among cell means).
        var input = Unbalanced(true, SumOfSquaresType.Marginal);
        var r = FactorialAnova.Fit(input);
        var cells = AnovaMeans.Compute(input).Cells;
        Assert.Equal(4, cells.Count);
        var m = cells.Select(c => c.RawMean.Value).ToArray();
        var invN = cells.Sum(c => 1.0 / c.Count);
        var la = m[0] + m[1] - m[2] - m[3];
        var lb = m[0] - m[1] + m[2] - m[3];
        var lab = m[0] - m[1] - m[2] + m[3];
        Assert.True(Rel(r.Terms[0].SumOfSquares, la * la / invN) < 1e-10);
        Assert.True(Rel(r.Terms[1].SumOfSquares, lb * lb / invN) < 1e-10);
        Assert.True(Rel(r.Terms[2].SumOfSquares, lab * lab / invN) < 1e-10);
        Assert.Equal(new[] { 120, 84, 90, 40 }, cells.Select(c => c.Count).ToArray());
    }

    [Theory]
    [InlineData(SumOfSquaresType.Hierarchical)]
    [InlineData(SumOfSquaresType.Marginal)]
    public void Fit_UnbalancedThreeFactorInteractions_MatchesIndependentComputation(SumOfSquaresType type)
    {
        // Independent route with MathNet's QR on the public model matrix: type 3 by the Wald form
        // b_t' [(X'X)^-1]_tt^-1 b_t; type 2 as the difference of residual SS of two sub-models.
        string[] three = ["table_speed_x1", "wheel_grit_x3", "batch"];
        var input = Unbalanced(true, type, three);
        var r = FactorialAnova.Fit(input);
        var x = Matrix<double>.Build.DenseOfArray(AnovaDesign.ModelMatrix(input));
        var y = Vector<double>.Build.DenseOfArray(input.Response);
        var terms = AnovaDesign.Terms(input);
        Assert.Equal(["table_speed_x1", "wheel_grit_x3", "batch", "table_speed_x1:wheel_grit_x3", "table_speed_x1:batch", "wheel_grit_x3:batch", "table_speed_x1:wheel_grit_x3:batch"], terms.Select(t => t.Name).ToArray());

        // Each term has one column here (two-level factors); column j + 1 belongs to term j.
        Assert.Equal(8, x.ColumnCount);
        for (var t = 0; t < terms.Count; t++)
        {
            double expected;
            if (type == SumOfSquaresType.Marginal)
            {
                var qr = x.QR();
                var b = qr.Solve(y);
                var rinv = qr.R.SubMatrix(0, 8, 0, 8).Inverse();
                var cov = rinv * rinv.Transpose();
                expected = b[t + 1] * b[t + 1] / cov[t + 1, t + 1];
            }
            else
            {
                var others = Enumerable.Range(0, terms.Count)
                    .Where(s => s != t && !terms[t].Factors.All(terms[s].Factors.Contains))
                    .Select(s => s + 1)
                    .Prepend(0)
                    .ToList();
                expected = Rss(x, y, others) - Rss(x, y, [.. others, t + 1]);
            }

            Assert.True(Rel(r.Terms[t].SumOfSquares, expected) < 1e-8, terms[t].Name + " " + r.Terms[t].SumOfSquares + " vs " + expected);
        }
    }

    [Fact]
    public void Fit_Unbalanced_FittedResidualsLeveragesConsistent()
    {
        var input = Unbalanced(true, SumOfSquaresType.Marginal, ["table_speed_x1", "wheel_grit_x3", "batch"]);
        var r = FactorialAnova.Fit(input);
        var n = input.Response.Length;
        var x = AnovaDesign.ModelMatrix(input);
        var p = x.GetLength(1);
        Assert.Equal(n - p, r.ResidualDf);
        double ss = 0;
        for (var i = 0; i < n; i++)
        {
            Assert.True(Math.Abs(r.Fitted[i] + r.Residuals[i] - input.Response[i]) < 1e-9);
            ss += r.Residuals[i] * r.Residuals[i];
        }

        Assert.True(Rel(ss, r.ResidualSumOfSquares) < 1e-10);

        // Residuals are orthogonal to every column of X; the leverages sum to p, and with all
        // interactions each leverage is 1 / (cell count).
        for (var j = 0; j < p; j++)
        {
            double dot = 0;
            for (var i = 0; i < n; i++)
            {
                dot += x[i, j] * r.Residuals[i];
            }

            Assert.True(Math.Abs(dot) < 1e-8);
        }

        Assert.True(Math.Abs(r.Leverages.Sum() - p) < 1e-10);
        var cellCount = new Dictionary<(int, int, int), int>();
        var keys = Enumerable.Range(0, n).Select(i => (input.Factors[0].Codes[i], input.Factors[1].Codes[i], input.Factors[2].Codes[i])).ToArray();
        foreach (var k in keys)
        {
            cellCount[k] = cellCount.GetValueOrDefault(k) + 1;
        }

        for (var i = 0; i < n; i++)
        {
            Assert.True(Math.Abs(r.Leverages[i] - (1.0 / cellCount[keys[i]])) < 1e-12);
        }
    }

    [Fact]
    public void Means_Unbalanced2x2_LeastSquaresMeansAreUnweightedCellMeanAverages()
    {
        var input = Unbalanced(true, SumOfSquaresType.Marginal);
        var means = AnovaMeans.Compute(input);
        var m = means.Cells.Select(c => c.RawMean.Value).ToArray();
        var speed = means.Factors[0].Levels;
        var batch = means.Factors[1].Levels;
        Assert.True(Math.Abs(speed[0].LeastSquaresMean.Value - ((m[0] + m[1]) / 2)) < 1e-10);
        Assert.True(Math.Abs(speed[1].LeastSquaresMean.Value - ((m[2] + m[3]) / 2)) < 1e-10);
        Assert.True(Math.Abs(batch[0].LeastSquaresMean.Value - ((m[0] + m[2]) / 2)) < 1e-10);
        Assert.True(Math.Abs(batch[1].LeastSquaresMean.Value - ((m[1] + m[3]) / 2)) < 1e-10);

        // Raw level means are count-weighted and differ from the LS means here.
        Assert.Equal(204, speed[0].Count);
        var raw0 = ((120 * m[0]) + (84 * m[1])) / 204;
        Assert.True(Math.Abs(speed[0].RawMean.Value - raw0) < 1e-10);
        Assert.True(Math.Abs(speed[0].RawMean.Value - speed[0].LeastSquaresMean.Value) > 1e-3);

        // With all interactions the model's cell means are the raw cell means.
        Assert.All(means.Cells, c => Assert.True(Math.Abs(c.ModelMean.Value - c.RawMean.Value) < 1e-10));
    }

    [Fact]
    public void Fit_OneFactor_IsTheGroupMeansTable()
    {
        var input = FactorialTestData.JahanmiInput(["batch"], true, SumOfSquaresType.Marginal);
        var r = FactorialAnova.Fit(input);
        Assert.Single(r.Terms);
        Assert.Equal(SumOfSquaresType.Marginal, r.SsType);

        // The definition (exact hand formula, in decimal): SS_between = Σ n_g (mean_g − mean)².
        var f = input.Factors[0];
        var y = input.Response.Select(v => (decimal)v).ToArray();
        var grand = y.Average();
        var between = Enumerable.Range(0, f.Levels.Count)
            .Select(g => y.Where((_, i) => f.Codes[i] == g).ToArray())
            .Where(v => v.Length > 0)
            .Sum(v => v.Length * (v.Average() - grand) * (v.Average() - grand));
        Assert.True(Rel(r.Terms[0].SumOfSquares, (double)between) < 1e-13);

        // ... and the least-squares route gives the same numbers (main-effects model of batch and
        // a factor crossed with it in balance).
        var two = FactorialAnova.Fit(FactorialTestData.JahanmiInput(["batch", "table_speed_x1"], false, SumOfSquaresType.Sequential));
        Assert.True(Rel(two.Terms[0].SumOfSquares, r.Terms[0].SumOfSquares) < 1e-12);
    }

    private static double Rss(Matrix<double> x, Vector<double> y, List<int> columns)
    {
        var sub = Matrix<double>.Build.Dense(x.RowCount, columns.Count, (i, j) => x[i, columns[j]]);
        var b = sub.QR().Solve(y);
        var r = y - (sub * b);
        return r.DotProduct(r);
    }
}
