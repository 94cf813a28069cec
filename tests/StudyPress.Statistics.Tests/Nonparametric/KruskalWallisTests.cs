using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Nonparametric;

// No published worked example with a verified statistic was found (the shared reference README
// says the same; a search of stored handbook and textbook pages found only examples without their
// data). The checks below are hand computations with the formula written out.
public class KruskalWallisTests
{
    // Hand computation, no ties. A = {1.2, 3.4, 2.2}, B = {5.1, 4.0}, C = {0.5, 6.3, 7.7, 4.5}, N = 9.
    // Pooled order: 0.5 C (1), 1.2 A (2), 2.2 A (3), 3.4 A (4), 4.0 B (5), 4.5 C (6), 5.1 B (7),
    // 6.3 C (8), 7.7 C (9). Rank sums R_A = 9, R_B = 12, R_C = 24 (total 45 = 9 * 10 / 2).
    // H = 12 / (N (N + 1)) * sum R_i^2 / n_i - 3 (N + 1) = 12/90 * (27 + 72 + 144) - 30 = 32.4 - 30 = 2.4.
    // df = 2 and P(chi2_2 >= H) = exp(-H/2) = exp(-1.2).
    [Fact]
    public void Test_HandComputationNoTies_HIs2Point4()
    {
        var r = KruskalWallis.Test([[1.2, 3.4, 2.2], [5.1, 4.0], [0.5, 6.3, 7.7, 4.5]]);
        Accuracy.AssertLre(r.H.Value, 2.4, 14, "H");
        Accuracy.AssertLre(r.HUncorrected.Value, 2.4, 14, "H0");
        Assert.Equal(1.0, r.TieCorrection);
        Assert.Equal(2, r.Df);
        Assert.Equal(9, r.N);
        Accuracy.AssertLre(r.P.Value, Math.Exp(-1.2), 13, "p = exp(-H/2)");
        Assert.Equal([3.0, 6.0, 6.0], r.MeanRanks);
        Assert.Equal([3, 2, 4], r.Counts);
    }

    // Hand computation with ties. A = {1, 2, 2}, B = {2, 3, 5}, C = {5, 5, 6, 7}, N = 10.
    // Ranks: 1 -> 1; the three 2s share ranks 2, 3, 4 -> 3; 3 -> 5; the three 5s share 6, 7, 8 -> 7;
    // 6 -> 9; 7 -> 10. R_A = 1 + 3 + 3 = 7, R_B = 3 + 5 + 7 = 15, R_C = 7 + 7 + 9 + 10 = 33 (total 55).
    // sum R_i^2 / n_i = 49/3 + 225/3 + 1089/4 = 4363/12, H0 = 12/110 * 4363/12 - 33 = 733/110.
    // Ties: two runs of t = 3, sum (t^3 - t) = 48, C = 1 - 48/990 = 157/165.
    // H = H0 / C = 2199/314, df = 2, p = exp(-2199/628).
    [Fact]
    public void Test_HandComputationWithTies_TieCorrected()
    {
        var r = KruskalWallis.Test([[1, 2, 2], [2, 3, 5], [5, 5, 6, 7]]);
        Accuracy.AssertLre(r.HUncorrected.Value, 733.0 / 110, 14, "H0");
        Accuracy.AssertLre(r.TieCorrection, 157.0 / 165, 15, "C");
        Accuracy.AssertLre(r.H.Value, 2199.0 / 314, 14, "H");
        Accuracy.AssertLre(r.P.Value, Math.Exp(-2199.0 / 628), 13, "p");
        Accuracy.AssertLre(r.MeanRanks[0], 7.0 / 3, 15, "mean rank A");
        Assert.Equal(5.0, r.MeanRanks[1]);
        Assert.Equal(8.25, r.MeanRanks[2]);
    }

    // Hand computation, k = 4, for df = 3: A = {1}, B = {2}, C = {3, 4}, D = {5, 6}, N = 6.
    // R = 1, 2, 7, 11; sum R^2/n = 1 + 4 + 24.5 + 60.5 = 90; H = 12/42 * 90 - 21 = 360/14 - 21 = 4.714285...
    // P(chi2_3 >= H) is checked by its closed form 2 phi(sqrt H) sqrt H + 2 Phi(-sqrt H).
    [Fact]
    public void Test_HandComputationFourGroups_ThreeDf()
    {
        var r = KruskalWallis.Test([[1], [2], [3, 4], [5, 6]]);
        var h = (360.0 / 14) - 21;
        Accuracy.AssertLre(r.H.Value, h, 14, "H");
        Assert.Equal(3, r.Df);
        var z = Math.Sqrt(h);
        var p3 = (2 * Math.Exp(-h / 2) * z / Math.Sqrt(2 * Math.PI)) + Probability.NormalTwoSided(z);
        Accuracy.AssertLre(r.P.Value, p3, 12, "chi2_3 tail");
    }

    [Fact]
    public void Test_AllTied_Undefined()
    {
        var r = KruskalWallis.Test([[4, 4], [4], [4, 4, 4]]);
        Assert.False(r.H.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Contains("tied", r.H.Reason, StringComparison.Ordinal);
        Assert.Equal(0.0, r.TieCorrection);
        Assert.All(r.MeanRanks, m => Assert.Equal(3.5, m));
    }

    [Fact]
    public void Test_OneGroup_Throws()
    {
        Assert.Throws<ArgumentException>(() => KruskalWallis.Test([[1, 2, 3]]));
    }

    [Fact]
    public void Test_NonFiniteValue_Throws()
    {
        Assert.Throws<ArgumentException>(() => KruskalWallis.Test([[1, double.NaN], [2]]));
    }
}
