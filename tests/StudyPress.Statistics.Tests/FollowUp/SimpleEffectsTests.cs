using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

public class SimpleEffectsTests
{
    // Invented unbalanced 2 x 3 data (the same cells as EstimatedMarginalMeansTests); cell sizes 2, 3, 1 / 4, 2, 3.
    private static readonly (int A, int B, double[] Y)[] Cells =
    [
        (0, 0, [10.1, 11.3]),
        (0, 1, [12.0, 13.4, 12.9]),
        (0, 2, [15.2]),
        (1, 0, [9.0, 8.4, 9.9, 10.2]),
        (1, 1, [14.8, 15.5]),
        (1, 2, [13.1, 12.2, 12.7]),
    ];

    private static AnovaInput Input()
    {
        var y = Cells.SelectMany(c => c.Y).ToArray();
        var a = Cells.SelectMany(c => Enumerable.Repeat(c.A, c.Y.Length)).ToArray();
        var b = Cells.SelectMany(c => Enumerable.Repeat(c.B, c.Y.Length)).ToArray();
        return new AnovaInput(y, [new FactorColumn("A", a, ["a1", "a2"]), new FactorColumn("B", b, ["b1", "b2", "b3"])], true, SumOfSquaresType.Hierarchical, 0.05);
    }

    // Exact hand computation: with the interaction fitted, the cell means' covariance is σ² diag(1/n),
    // so the general linear hypothesis of equal B means at level a is the one-way test among that
    // level's cells on the pooled error: SS = Σ n_j (ȳ_j − ȳ_a)², ȳ_a the mean of the observations
    // at a (weighted by n), F = SS / ((k − 1) MSE) on (k − 1, residual df).
    [Fact]
    public void Unbalanced_FTestIsTheWeightedOneWaySumOfSquaresWithinTheLevel()
    {
        var input = Input();
        var fit = FactorialAnova.Fit(input);
        var mse = fit.ResidualMeanSquare.Value;
        var df = fit.ResidualDf;
        var cells = EstimatedMarginalMeans.Compute(input, terms: [["A", "B"]]).Terms[0];
        var result = SimpleEffects.Compute(cells, "B", "A", mse, df, ContrastAdjustment.Holm, 0.05);
        Assert.Equal(["a1", "a2"], result.Select(r => r.AtLevel));

        for (var a = 0; a < 2; a++)
        {
            var groups = Cells.Where(c => c.A == a).Select(c => c.Y).ToArray();
            var all = groups.SelectMany(g => g).Average();
            var ss = groups.Sum(g => g.Length * Math.Pow(g.Average() - all, 2));
            var se = result[a];
            Assert.Equal(2, se.Df1);
            Assert.Equal(df, se.Df2);
            Accuracy.AssertLre(se.SumOfSquares.Value, ss, 11, "SS of B at " + se.AtLevel);
            Accuracy.AssertLre(se.F.Value, ss / (2 * mse), 11, "F of B at " + se.AtLevel);
            Accuracy.AssertLre(se.P.Value, Probability.FUpper(ss / (2 * mse), 2, df), 10, "p of B at " + se.AtLevel);

            // Pairs: difference of the cell means, SE = sqrt(MSE (1/n_i + 1/n_j)), Holm within the
            // level (3 pairs: the smallest p times 3), Bonferroni intervals (t at α/3).
            Assert.Equal(3, se.Pairs.Contrasts.Count);
            var tb = Probability.TCritical(0.05 / 3, df);
            var k = 0;
            var ps = new List<double>();
            for (var i = 0; i < 3; i++)
            {
                for (var j = i + 1; j < 3; j++)
                {
                    var e = se.Pairs.Contrasts[k++];
                    var diff = groups[i].Average() - groups[j].Average();
                    var sd = Math.Sqrt(mse * ((1.0 / groups[i].Length) + (1.0 / groups[j].Length)));
                    Accuracy.AssertLre(e.Estimate, diff, 12, "difference");
                    Accuracy.AssertLre(e.Se.Value, sd, 11, "SE of the difference");
                    Accuracy.AssertLre(e.P.Value, Probability.TTwoSided(diff / sd, df), 10, "unadjusted p");
                    Accuracy.AssertLre(e.CiLow.Value, diff - (tb * sd), 10, "Bonferroni interval low");
                    ps.Add(e.P.Value);
                }
            }

            var smallest = ps.Min();
            var adjusted = se.Pairs.Contrasts.Single(c => c.P.Value == smallest).PAdjusted.Value;
            Accuracy.AssertLre(adjusted, Math.Min(1, 3 * smallest), 12, "Holm: smallest p times 3");
        }
    }

    // Exact hand computation, balanced 2 x 2 (n = 2): with two levels the simple-effect F is the
    // square of the pair's t, and the sum of squares is n Σ (ȳ_j − ȳ)² = n d² / 2.
    [Fact]
    public void TwoLevels_FIsTheSquareOfThePairsT()
    {
        double[] y = [4, 6, 9, 11, 5, 5, 6, 8];
        int[] a = [0, 0, 0, 0, 1, 1, 1, 1];
        int[] b = [0, 0, 1, 1, 0, 0, 1, 1];
        var input = new AnovaInput(y, [new FactorColumn("A", a, ["a1", "a2"]), new FactorColumn("B", b, ["b1", "b2"])], true, SumOfSquaresType.Hierarchical, 0.05);
        var fit = FactorialAnova.Fit(input);

        // Residual SS = (1 + 1) + (1 + 1) + 0 + (1 + 1) = 6 on 4 df: MSE = 1.5.
        Accuracy.AssertLre(fit.ResidualMeanSquare.Value, 1.5, 13, "MSE");
        var cells = EstimatedMarginalMeans.Compute(input, terms: [["A", "B"]]).Terms[0];
        var result = SimpleEffects.Compute(cells, "B", "A", 1.5, 4, ContrastAdjustment.Holm, 0.05);

        // At a1: means 5 and 10, SS = 2 × 25 / 2 = 25, F = 25 / 1.5; at a2: means 5 and 7, SS = 4, F = 4 / 1.5.
        Accuracy.AssertLre(result[0].SumOfSquares.Value, 25, 12, "SS at a1");
        Accuracy.AssertLre(result[0].F.Value, 25 / 1.5, 12, "F at a1");
        Accuracy.AssertLre(result[1].F.Value, 4 / 1.5, 12, "F at a2");
        foreach (var s in result)
        {
            var pair = Assert.Single(s.Pairs.Contrasts);
            Accuracy.AssertLre(pair.T.Value * pair.T.Value, s.F.Value, 12, "t squared");
            Accuracy.AssertLre(pair.PAdjusted.Value, s.P.Value, 10, "one pair: Holm leaves p unchanged and equals the F test's p");
        }
    }

    [Fact]
    public void NoErrorDegreesOfFreedom_IsUndefinedWithAReason()
    {
        var input = Input();
        var cells = EstimatedMarginalMeans.Compute(input, terms: [["A", "B"]]).Terms[0];
        var result = SimpleEffects.Compute(cells, "B", "A", 1.0, 0, ContrastAdjustment.Holm, 0.05);
        Assert.All(result, r => Assert.False(r.F.IsDefined));
        Assert.All(result, r => Assert.False(r.P.IsDefined));
    }
}
