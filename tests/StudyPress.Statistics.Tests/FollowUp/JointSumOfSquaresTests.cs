using StudyPress.Statistics.FollowUp;

namespace StudyPress.Statistics.Tests.FollowUp;

/// <summary>The joint (Wald) sum of squares of several contrasts, L′(CMC′)⁻¹L (exact hand computation).</summary>
public class JointSumOfSquaresTests
{
    // Group means with M = diag(1/n): the orthogonal polynomials built for these counts are
    // uncorrelated, so their joint SS is the sum of their single SS, which is the between-level SS
    // Σ nᵢ (mᵢ − m̄)² (hand computation: means 3, 5, 4, 9 with n 2, 3, 4, 1; m̄ = 4.6; SS = 2(−1.6)² + 3(0.4)² + 4(−0.6)² + 1(4.4)² = 26.4).
    [Fact]
    public void UncorrelatedTrends_JointEqualsSumAndBetweenLevelSs()
    {
        double[] means = [3, 5, 4, 9];
        long[] counts = [2, 3, 4, 1];
        var m = new double[4, 4];
        for (var i = 0; i < 4; i++)
        {
            m[i, i] = 1.0 / counts[i];
        }

        var trends = Contrasts.PolynomialTrends([1, 2, 3, 4], counts, 3);
        var joint = Contrasts.JointSumOfSquares(means, m, trends);
        var single = Contrasts.OnGroupMeans(means, counts, 1, 10, trends, ContrastAdjustment.None, 0.05).Contrasts.Sum(c => c.SumOfSquares.Value);
        Assert.Equal(26.4, joint, 10);
        Assert.Equal(single, joint, 10);
    }

    [Fact]
    public void DependentContrasts_AreRefused()
    {
        var m = new double[,] { { 1, 0, 0 }, { 0, 1, 0 }, { 0, 0, 1 } };
        ContrastSpec[] specs = [new("a", [1, -1, 0]), new("b", [2, -2, 0])];
        Assert.Throws<ArgumentException>(() => Contrasts.JointSumOfSquares([1, 2, 3], m, specs));
    }
}
