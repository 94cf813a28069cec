using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

public class EstimatedMarginalMeansTests
{
    // Invented unbalanced 2 x 3 data with interaction; cell sizes 2, 3, 1 / 4, 2, 3.
    private static AnovaInput Unbalanced(bool interactions = true)
    {
        (int A, int B, double[] Y)[] cells =
        [
            (0, 0, [10.1, 11.3]),
            (0, 1, [12.0, 13.4, 12.9]),
            (0, 2, [15.2]),
            (1, 0, [9.0, 8.4, 9.9, 10.2]),
            (1, 1, [14.8, 15.5]),
            (1, 2, [13.1, 12.2, 12.7]),
        ];
        var y = cells.SelectMany(c => c.Y).ToArray();
        var a = cells.SelectMany(c => Enumerable.Repeat(c.A, c.Y.Length)).ToArray();
        var b = cells.SelectMany(c => Enumerable.Repeat(c.B, c.Y.Length)).ToArray();
        return new AnovaInput(y, [new FactorColumn("A", a, ["a1", "a2"]), new FactorColumn("B", b, ["b1", "b2", "b3"])], interactions, SumOfSquaresType.Hierarchical, 0.05);
    }

    private static double Mean(params double[] v) => v.Average();

    // Exact hand computation: with all interactions the predicted cell means are the raw cell
    // means, so the marginal mean of a1 is the equal-weight average of its three cell means and
    // Var = σ²/9 (1/2 + 1/3 + 1/1); a cell's mean has Var = σ²/n_cell.
    [Fact]
    public void FullInteraction_MeansAreEqualWeightAveragesOfCellMeans()
    {
        var input = Unbalanced();
        var fit = FactorialAnova.Fit(input);
        var mse = fit.ResidualMeanSquare.Value;
        var r = EstimatedMarginalMeans.Compute(input);
        Assert.Equal(["A", "B", "A:B"], r.Terms.Select(t => t.Term));
        var a1 = r.Terms[0].Means[0];
        var expected = (Mean(10.1, 11.3) + Mean(12.0, 13.4, 12.9) + 15.2) / 3;
        Accuracy.AssertLre(a1.Mean.Value, expected, 13, "a1");
        Accuracy.AssertLre(a1.Se.Value, Math.Sqrt(mse / 9 * (0.5 + (1.0 / 3) + 1)), 12, "se a1");
        Assert.Equal(fit.ResidualDf, a1.Df.Value);
        var t = Probability.TCritical(0.05, fit.ResidualDf);
        Accuracy.AssertLre(a1.CiHigh.Value, a1.Mean.Value + (t * a1.Se.Value), 13, "high");

        var b2 = r.Terms[1].Means[1];
        Accuracy.AssertLre(b2.Mean.Value, (Mean(12.0, 13.4, 12.9) + Mean(14.8, 15.5)) / 2, 13, "b2");
        Accuracy.AssertLre(b2.Se.Value, Math.Sqrt(mse / 4 * ((1.0 / 3) + 0.5)), 12, "se b2");

        var cell = r.Terms[2].Means.Single(m => m.Levels[0] == "a2" && m.Levels[1] == "b3");
        Accuracy.AssertLre(cell.Mean.Value, Mean(13.1, 12.2, 12.7), 13, "cell");
        Accuracy.AssertLre(cell.Se.Value, Math.Sqrt(mse / 3), 12, "se cell");
    }

    // Cross-check with the existing least-squares means (AnovaMeans: mu + alpha) and model cell
    // means of a main-effects model (additive predictions for cells of an interaction not fitted).
    [Fact]
    public void MainEffectsModel_AgreesWithAnovaMeans()
    {
        var input = Unbalanced(interactions: false);
        var reference = AnovaMeans.Compute(input);
        var r = EstimatedMarginalMeans.Compute(input, terms: [["A"], ["B"], ["A", "B"]]);
        for (var f = 0; f < 2; f++)
        {
            for (var l = 0; l < reference.Factors[f].Levels.Count; l++)
            {
                Accuracy.AssertLre(r.Terms[f].Means[l].Mean.Value, reference.Factors[f].Levels[l].LeastSquaresMean.Value, 12, "LS mean");
            }
        }

        foreach (var cell in reference.Cells)
        {
            var m = r.Terms[2].Means.Single(x => x.Levels.SequenceEqual(cell.Levels));
            Accuracy.AssertLre(m.Mean.Value, cell.ModelMean.Value, 12, "cell model mean");
        }
    }

    // Balanced two-way (invented, 2 x 2 x 3 replicates): marginal means are the raw marginal
    // means and SE = sqrt(MSE/6) (exact hand computation); the error-MS overload uses the given
    // mean square and df instead (SE = sqrt(MS/6), t on the given df).
    [Fact]
    public void Balanced_RawMeans_AndGivenErrorTerm()
    {
        double[] y = [4, 5, 6, 7, 9, 8, 3, 2, 4, 6, 6, 9];
        int[] a = [0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1];
        int[] b = [0, 0, 0, 1, 1, 1, 0, 0, 0, 1, 1, 1];
        var input = new AnovaInput(y, [new FactorColumn("A", a, ["x", "y"]), new FactorColumn("B", b, ["u", "v"])], true, SumOfSquaresType.Hierarchical, 0.05);
        var mse = FactorialAnova.Fit(input).ResidualMeanSquare.Value;
        var r = EstimatedMarginalMeans.Compute(input, responseCentre: 100);
        Accuracy.AssertLre(r.Terms[0].Means[0].Mean.Value, 100 + (39.0 / 6), 14, "A=x");
        Accuracy.AssertLre(r.Terms[0].Means[0].Se.Value, Math.Sqrt(mse / 6), 13, "se");
        var given = EstimatedMarginalMeans.ComputeWithError(input, 2.5, 3, responseCentre: 100);
        var m = given.Terms[0].Means[1];
        Accuracy.AssertLre(m.Se.Value, Math.Sqrt(2.5 / 6), 13, "se on given MS");
        Assert.Equal(3, m.Df.Value);
        Accuracy.AssertLre(m.CiLow.Value, m.Mean.Value - (Probability.TCritical(0.05, 3) * m.Se.Value), 13, "low on given df");

        // The unit covariance hands the means to the contrast engine: x - y has variance
        // σ² (1/6 + 1/6) in a balanced design.
        var contrast = Contrasts.Evaluate([.. r.Terms[0].Means.Select(q => q.Mean.Value)], r.Terms[0].UnitCovariance, mse, 8, [new ContrastSpec("x-y", [1, -1])], ContrastAdjustment.None, 0.05);
        Accuracy.AssertLre(contrast.Contrasts[0].Se.Value, Math.Sqrt(mse / 3), 12, "contrast se");
    }

    // Back-transformation (exact hand computation): each of mean and limits through the inverse.
    [Fact]
    public void BackTransform_MeanAndLimitsSeparately()
    {
        double[] y = [1.0, 1.2, 0.9, 2.0, 2.2, 1.7];
        int[] g = [0, 0, 0, 1, 1, 1];
        var input = new AnovaInput(y, [new FactorColumn("g", g, ["p", "q"])], false, SumOfSquaresType.Hierarchical, 0.05);
        var log = EstimatedMarginalMeans.Compute(input, transform: TransformKind.Log).Terms[0].Means[0];
        Accuracy.AssertLre(log.BackTransformedMean.Value, Math.Exp(log.Mean.Value), 14, "exp mean");
        Accuracy.AssertLre(log.BackTransformedLow.Value, Math.Exp(log.CiLow.Value), 14, "exp low");
        Accuracy.AssertLre(log.BackTransformedHigh.Value, Math.Exp(log.CiHigh.Value), 14, "exp high");

        var rec = EstimatedMarginalMeans.Compute(input, transform: TransformKind.Reciprocal).Terms[0].Means[1];
        Accuracy.AssertLre(rec.BackTransformedLow.Value, 1 / rec.CiHigh.Value, 14, "1/high");
        Accuracy.AssertLre(rec.BackTransformedHigh.Value, 1 / rec.CiLow.Value, 14, "1/low");

        // Square root: a lower limit below zero becomes 0 (the sqrt scale has no negative values).
        double[] small = [0.1, 0.9, 0.05, 2.0, 2.1, 1.9];
        var sq = EstimatedMarginalMeans.Compute(input with { Response = small }, transform: TransformKind.Sqrt).Terms[0].Means[0];
        Assert.True(sq.CiLow.Value < 0);
        Assert.Equal(0, sq.BackTransformedLow.Value);
        Accuracy.AssertLre(sq.BackTransformedHigh.Value, sq.CiHigh.Value * sq.CiHigh.Value, 14, "squared high");
        Assert.Throws<ArgumentException>(() => EstimatedMarginalMeans.Compute(input, transform: TransformKind.BoxCox));
    }

    // A design the ANOVA rejects is rejected here with the same message.
    [Fact]
    public void EmptyCellWithInteraction_Throws()
    {
        double[] y = [1, 2, 3, 4, 5];
        int[] a = [0, 0, 1, 1, 1];
        int[] b = [0, 1, 0, 0, 0];
        var input = new AnovaInput(y, [new FactorColumn("A", a, ["x", "y"]), new FactorColumn("B", b, ["u", "v"])], true, SumOfSquaresType.Hierarchical, 0.05);
        var e = Assert.Throws<ArgumentException>(() => EstimatedMarginalMeans.Compute(input));
        Assert.Contains("no observations", e.Message, StringComparison.Ordinal);
    }
}
