using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Nonparametric;

// Friedman test against Reference/friedman (SOURCE.md there gives each value's status):
// "published" values are compared to their printed digits, the collection's exact recomputations
// (exact fractions, printed to 10-12 significant digits) at relative 1e-9, and values the sources do
// not print against this project's exact recomputation (recompute-pairwise.py, 20 digits shown).
public class FriedmanTests
{
    private const double Rel = 1e-9;

    // ---- Zar, Example 12.6: 5 blocks x 4 treatments, no ties ----------------------------------

    // Published (Zar, Example 12.6, via SciPy's transcription): chi2_r = 10.68.
    [Fact]
    public void Zar_PublishedChiSquare_10_68()
    {
        var (_, blocks) = FriedmanData.Load("zar-example-12-6.csv");
        var r = Friedman.Test(blocks);
        var published = FriedmanData.Text(FriedmanData.Expected("zar-example-12-6.expected.json"), "published", "chi2_r");
        Accuracy.AssertRoundsTo(r.ChiSquare.Value, published, "chi2 (Zar 12.6, published)");
        Accuracy.AssertRoundsTo(r.ChiSquareUncorrected.Value, published, "chi2 uncorrected (no ties: same)");
        Assert.Equal(1.0, r.TieCorrection);
        Assert.Equal(3, r.Df);
        Assert.Equal(5, r.Blocks);
        Assert.Equal(4, r.Treatments);
        Assert.False(r.PerfectConcordance);
    }

    // Exact recomputation (collection file, exact fractions): rank sums 19, 8, 8, 15; chi2 = 267/25;
    // Iman-Davenport F = 4 * 10.68 / (15 - 10.68) = 89/9 on (3, 12) df; p-values at 1e-9.
    [Fact]
    public void Zar_ExactRecomputation_RanksChiSquareImanDavenport()
    {
        var (_, blocks) = FriedmanData.Load("zar-example-12-6.csv");
        var e = FriedmanData.Expected("zar-example-12-6.expected.json");
        var r = Friedman.Test(blocks);
        Assert.Equal(FriedmanData.Numbers(e, "exact_recomputation", "rank_sums"), r.RankSums);
        var meanRanks = FriedmanData.Numbers(e, "exact_recomputation", "mean_ranks");
        for (var j = 0; j < 4; j++)
        {
            FriedmanData.AssertRelative(r.MeanRanks[j], meanRanks[j], Rel, "mean rank");
        }

        Accuracy.AssertLre(r.ChiSquare.Value, 267.0 / 25, 15, "chi2 = 267/25 (exact)");
        FriedmanData.AssertRelative(r.P.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_tie_corrected_p"), Rel, "chi2 p");
        FriedmanData.AssertRelative(r.PUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_p"), Rel, "chi2 p uncorrected");
        Accuracy.AssertLre(r.ImanDavenportF.Value, 89.0 / 9, 15, "F = 89/9 (exact)");
        Accuracy.AssertLre(r.ImanDavenportFUncorrected.Value, 89.0 / 9, 15, "F uncorrected = 89/9 (no ties)");
        FriedmanData.AssertRelative(r.ImanDavenportF.Value, FriedmanData.Number(e, "exact_recomputation", "iman_davenport_F"), Rel, "F (file)");
        Assert.Equal(FriedmanData.Numbers(e, "exact_recomputation", "iman_davenport_df"), new double[] { r.ImanDavenportDf1, r.ImanDavenportDf2 });
        FriedmanData.AssertRelative(r.ImanDavenportP.Value, FriedmanData.Number(e, "exact_recomputation", "iman_davenport_p"), Rel, "F p");

        // Exact recomputation (recompute-pairwise.py): W = 89/125; 20-digit p-values.
        Accuracy.AssertLre(r.KendallW.Value, 89.0 / 125, 15, "W = 89/125");
        Accuracy.AssertLre(r.P.Value, 0.013588272958217648639, 12, "chi2 p (20 digits)");
        Accuracy.AssertLre(r.ImanDavenportP.Value, 0.0014518802293284164377, 12, "F p (20 digits)");
    }

    // Published note (Zar): the exact Friedman distribution gives 0.005 < p < 0.01; the engine's
    // chi-square approximation gives 0.0136, outside that bracket. This pins that the engine
    // reports the large-sample approximation and does not pretend to the exact table.
    [Fact]
    public void Zar_ChiSquareApproximation_IsNotZarsExactBracket()
    {
        var (_, blocks) = FriedmanData.Load("zar-example-12-6.csv");
        var r = Friedman.Test(blocks);
        Assert.Equal("0.005 < p < 0.01", FriedmanData.Text(FriedmanData.Expected("zar-example-12-6.expected.json"), "published", "p"));
        Assert.True(r.P.Value > 0.01);
        Accuracy.AssertRoundsTo(r.P.Value, "0.0136", "chi-square p");
    }

    // ---- Demsar (2006): 14 data sets x 4 classifiers, ties in some blocks ---------------------

    // Published (Demsar 2006, via SciPy's transcription): chi2_F = 9.28, the statistic without the
    // tie correction.
    [Fact]
    public void Demsar_PublishedChiSquareWithoutTieCorrection_9_28()
    {
        var (treatments, blocks) = FriedmanData.Load("demsar-2006-auc.csv");
        Assert.Equal(["C4.5", "C4.5+m", "C4.5+cf", "C4.5+m+cf"], treatments);
        var r = Friedman.Test(blocks);
        var published = FriedmanData.Text(FriedmanData.Expected("demsar-2006-auc.expected.json"), "published", "chi2_F_without_tie_correction");
        Accuracy.AssertRoundsTo(r.ChiSquareUncorrected.Value, published, "chi2_F (Demsar, published)");
        Assert.True(r.ChiSquare.Value - r.ChiSquareUncorrected.Value > 0.9, "the tie correction matters here");
    }

    // Exact recomputation (collection file): rank sums 26, 42, 29.5, 42.5; chi2 uncorrected
    // 1299/140, corrected 1299/127 (C = 127/140); Iman-Davenport F (uncorrected form) 5629/1527 on
    // (3, 39) df. Exact recomputation (recompute-pairwise.py): tie-corrected F 5629/1345, W 433/1778.
    [Fact]
    public void Demsar_ExactRecomputation_WithAndWithoutTieCorrection()
    {
        var (_, blocks) = FriedmanData.Load("demsar-2006-auc.csv");
        var e = FriedmanData.Expected("demsar-2006-auc.expected.json");
        var r = Friedman.Test(blocks);
        Assert.Equal(FriedmanData.Numbers(e, "exact_recomputation", "rank_sums"), r.RankSums);
        var meanRanks = FriedmanData.Numbers(e, "exact_recomputation", "mean_ranks");
        for (var j = 0; j < 4; j++)
        {
            FriedmanData.AssertRelative(r.MeanRanks[j], meanRanks[j], Rel, "mean rank");
        }

        FriedmanData.AssertRelative(r.ChiSquareUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_no_tie_correction"), Rel, "chi2 uncorrected");
        FriedmanData.AssertRelative(r.PUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_p"), Rel, "p uncorrected");
        FriedmanData.AssertRelative(r.ChiSquare.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_tie_corrected"), Rel, "chi2");
        FriedmanData.AssertRelative(r.P.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_tie_corrected_p"), Rel, "p");
        FriedmanData.AssertRelative(r.ImanDavenportFUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "iman_davenport_F"), Rel, "F uncorrected");
        Assert.Equal(FriedmanData.Numbers(e, "exact_recomputation", "iman_davenport_df"), new double[] { r.ImanDavenportDf1, r.ImanDavenportDf2 });
        FriedmanData.AssertRelative(r.ImanDavenportPUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "iman_davenport_p"), Rel, "F p uncorrected");

        Accuracy.AssertLre(r.ChiSquareUncorrected.Value, 1299.0 / 140, 15, "chi2 uncorrected = 1299/140");
        Accuracy.AssertLre(r.ChiSquare.Value, 1299.0 / 127, 15, "chi2 = 1299/127");
        Accuracy.AssertLre(r.TieCorrection, 127.0 / 140, 15, "C = 127/140");
        Accuracy.AssertLre(r.ImanDavenportFUncorrected.Value, 5629.0 / 1527, 15, "F uncorrected = 5629/1527");
        Accuracy.AssertLre(r.ImanDavenportF.Value, 5629.0 / 1345, 15, "F = 5629/1345 (recompute-pairwise.py)");
        Accuracy.AssertLre(r.ImanDavenportP.Value, 0.011620659515311038826, 12, "F p (recompute-pairwise.py)");
        Accuracy.AssertLre(r.KendallW.Value, 433.0 / 1778, 15, "W = 433/1778 (recompute-pairwise.py)");
    }

    // ---- Bioestadistica: 12 blocks x 4 treatments, many ties --------------------------------

    // Published (via SciPy's transcription): chi2_r = 18.95, p < 0.001. The exact tie-corrected
    // value 663/35 = 18.942857 rounds to 18.94, not 18.95 (the collection notes the discrepancy and
    // its tolerance 0.01); the uncorrected 16.575 is far from the published value, so the book's
    // statistic is the tie-corrected one.
    [Fact]
    public void Bioestadistica_PublishedTieCorrected_18_95()
    {
        var (_, blocks) = FriedmanData.Load("bioestadistica-12x4.csv");
        var r = Friedman.Test(blocks);
        var e = FriedmanData.Expected("bioestadistica-12x4.expected.json");
        var published = FriedmanData.Number(e, "published", "chi2_r");
        Assert.True(Math.Abs(r.ChiSquare.Value - published) <= 0.01, $"chi2 {r.ChiSquare.Value} vs published 18.95 (tolerance 0.01)");
        Assert.True(Math.Abs(r.ChiSquareUncorrected.Value - published) > 1);
        Assert.Equal("< 0.001", FriedmanData.Text(e, "published", "p"));
        Assert.True(r.P.Value < 0.001);
    }

    // Exact recomputation (collection file): chi2 uncorrected 663/40 = 16.575, corrected
    // 663/35 (C = 7/8: tie sum 90 over n (k^3 - k) = 720), Iman-Davenport F (uncorrected form)
    // 2431/259 on (3, 33) df. Exact recomputation (recompute-pairwise.py): tie-corrected F
    // 2431/199, W = 221/420.
    [Fact]
    public void Bioestadistica_ExactRecomputation_WithAndWithoutTieCorrection()
    {
        var (_, blocks) = FriedmanData.Load("bioestadistica-12x4.csv");
        var e = FriedmanData.Expected("bioestadistica-12x4.expected.json");
        var r = Friedman.Test(blocks);
        Assert.Equal(FriedmanData.Numbers(e, "exact_recomputation", "rank_sums"), r.RankSums);
        var meanRanks = FriedmanData.Numbers(e, "exact_recomputation", "mean_ranks");
        for (var j = 0; j < 4; j++)
        {
            FriedmanData.AssertRelative(r.MeanRanks[j], meanRanks[j], Rel, "mean rank");
        }

        FriedmanData.AssertRelative(r.ChiSquareUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_no_tie_correction"), Rel, "chi2 uncorrected");
        FriedmanData.AssertRelative(r.PUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_p"), Rel, "p uncorrected");
        FriedmanData.AssertRelative(r.ChiSquare.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_tie_corrected"), Rel, "chi2");
        FriedmanData.AssertRelative(r.P.Value, FriedmanData.Number(e, "exact_recomputation", "chi2_tie_corrected_p"), Rel, "p");
        FriedmanData.AssertRelative(r.ImanDavenportFUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "iman_davenport_F"), Rel, "F uncorrected");
        Assert.Equal(FriedmanData.Numbers(e, "exact_recomputation", "iman_davenport_df"), new double[] { r.ImanDavenportDf1, r.ImanDavenportDf2 });
        FriedmanData.AssertRelative(r.ImanDavenportPUncorrected.Value, FriedmanData.Number(e, "exact_recomputation", "iman_davenport_p"), Rel, "F p uncorrected");

        Accuracy.AssertLre(r.ChiSquareUncorrected.Value, 663.0 / 40, 15, "chi2 uncorrected = 663/40");
        Accuracy.AssertLre(r.ChiSquare.Value, 663.0 / 35, 15, "chi2 = 663/35");
        Assert.Equal(0.875, r.TieCorrection);
        Accuracy.AssertLre(r.ImanDavenportF.Value, 2431.0 / 199, 15, "F = 2431/199 (recompute-pairwise.py)");
        Accuracy.AssertLre(r.ImanDavenportP.Value, 0.000015477102904612423144, 12, "F p (recompute-pairwise.py)");
        Accuracy.AssertLre(r.KendallW.Value, 221.0 / 420, 15, "W = 221/420 (recompute-pairwise.py)");
    }

    // ---- hand computations and edge cases ----------------------------------------------------

    // Exact hand computation, k = 2: Friedman's chi2 is then the sign-test chi-square
    // (n+ - n-)^2 / n. Blocks (1, 2), (3, 4), (6, 5), (7, 8): 3 blocks favour treatment 2, one
    // treatment 1: chi2 = (3 - 1)^2 / 4 = 1, p = P(chi2_1 >= 1) = erfc(1/sqrt 2). W = chi2/(n(k-1)) = 1/4.
    // F = 3 * 1 / (4 - 1) = 1 on (1, 3) df; P(F(1, 3) >= 1) = P(|t_3| >= 1), by the closed form
    // for 3 df: 1 - (2/pi)(atan(1/sqrt 3) + sqrt 3 / 4) = 1 - (2/pi)(pi/6 + sqrt 3/4).
    [Fact]
    public void HandComputation_TwoTreatments_SignTestChiSquare()
    {
        var r = Friedman.Test([[1, 2], [3, 4], [6, 5], [7, 8]]);
        Assert.Equal(1.0, r.ChiSquare.Value, 15);
        Accuracy.AssertLre(r.P.Value, MathNet.Numerics.SpecialFunctions.Erfc(1 / Math.Sqrt(2)), 14, "p");
        Assert.Equal(0.25, r.KendallW.Value, 15);
        Assert.Equal(1.0, r.ImanDavenportF.Value, 15);
        Assert.Equal((1, 3), (r.ImanDavenportDf1, r.ImanDavenportDf2));
        Accuracy.AssertLre(r.ImanDavenportP.Value, 1 - (2 / Math.PI * ((Math.PI / 6) + (Math.Sqrt(3) / 4))), 13, "F p");
        Assert.Equal([5.0, 7.0], r.RankSums);
    }

    // Exact hand computation: every block orders the three treatments the same way, no ties.
    // chi2 = n (k - 1) = 4, W = 1; p = P(chi2_2 >= 4) = exp(-2). Iman-Davenport F = 1 * 4 / (4 - 4)
    // is infinite: not defined (reason says infinite), its p is 0 (the limit).
    [Fact]
    public void PerfectConcordance_NoTies_FInfinitePZero()
    {
        var r = Friedman.Test([[1, 2, 3], [10, 20, 30]]);
        Assert.True(r.PerfectConcordance);
        Assert.Equal(4.0, r.ChiSquare.Value);
        Assert.Equal(4.0, r.ChiSquareUncorrected.Value, 15);
        Assert.Equal(1.0, r.KendallW.Value);
        Accuracy.AssertLre(r.P.Value, Math.Exp(-2), 14, "p = exp(-2)");
        Assert.False(r.ImanDavenportF.IsDefined);
        Assert.StartsWith("infinite", r.ImanDavenportF.Reason, StringComparison.Ordinal);
        Assert.Equal(0.0, r.ImanDavenportP.Value);
        Assert.True(r.ImanDavenportP.IsDefined);
        Assert.False(r.ImanDavenportFUncorrected.IsDefined);
        Assert.Equal(0.0, r.ImanDavenportPUncorrected.Value);
    }

    // Exact hand computation, perfect concordance with ties: every block ranks (1.5, 1.5, 3).
    // Per block sum (r - 2)^2 = 1/4 + 1/4 + 1 = 3/2, SS_total = 9/2; rank sums 4.5, 4.5, 9,
    // S = (4.5 - 6)^2 * 2 + 3^2 = 13.5; tie sum 6 per block, 18 in all; C = 1 - 18/(3 * 24) = 3/4.
    // chi2_0 = 12 * 13.5 / (3 * 3 * 4) = 4.5; chi2 = 4.5 / 0.75 = 6 = n (k - 1); W = 1.
    // Uncorrected F = 2 * 4.5 / (6 - 4.5) = 6 on (2, 4) df, P(F(2, 4) >= 6) = (1 + 2*6/4)^(-2) = 1/16;
    // corrected F infinite.
    [Fact]
    public void PerfectConcordance_WithTies_CorrectedFInfinite_UncorrectedFinite()
    {
        var r = Friedman.Test([[1, 1, 2], [5, 5, 9], [0, 0, 3]]);
        Assert.True(r.PerfectConcordance);
        Assert.Equal(0.75, r.TieCorrection);
        Assert.Equal(6.0, r.ChiSquare.Value);
        Assert.Equal(4.5, r.ChiSquareUncorrected.Value, 15);
        Assert.Equal(1.0, r.KendallW.Value);
        Assert.False(r.ImanDavenportF.IsDefined);
        Assert.Equal(0.0, r.ImanDavenportP.Value);
        Assert.Equal(6.0, r.ImanDavenportFUncorrected.Value, 14);
        Accuracy.AssertLre(r.ImanDavenportPUncorrected.Value, 1.0 / 16, 14, "P(F(2,4) >= 6) = 1/16");
        Assert.Equal([4.5, 4.5, 9.0], r.RankSums);
    }

    // Every block tied throughout: the tie-corrected statistics are 0/0 and not defined; the
    // uncorrected chi2 is 0 (p = 1); C = 0; every mean rank is (k + 1)/2.
    [Fact]
    public void AllBlocksTied_CorrectedUndefined()
    {
        var r = Friedman.Test([[2, 2, 2], [5, 5, 5]]);
        Assert.False(r.ChiSquare.IsDefined);
        Assert.Contains("tied", r.ChiSquare.Reason, StringComparison.Ordinal);
        Assert.False(r.P.IsDefined);
        Assert.False(r.KendallW.IsDefined);
        Assert.False(r.ImanDavenportF.IsDefined);
        Assert.False(r.ImanDavenportP.IsDefined);
        Assert.False(r.PerfectConcordance);
        Assert.Equal(0.0, r.TieCorrection);
        Assert.Equal(0.0, r.ChiSquareUncorrected.Value);
        Assert.Equal(1.0, r.PUncorrected.Value);
        Assert.Equal(0.0, r.ImanDavenportFUncorrected.Value);
        Assert.Equal(1.0, r.ImanDavenportPUncorrected.Value);
        Assert.All(r.MeanRanks, m => Assert.Equal(2.0, m));
    }

    // Exact hand computation with many blocks and a tiny statistic (cancellation check): the three
    // rotations of (1, 2, 3), m times each, plus one block (1, 2, 3). n = 3m + 1, rank sums
    // 6m + 1, 6m + 2, 6m + 3, deviations from n (k + 1)/2 = 6m + 2 are -1, 0, 1: S = 2 and
    // chi2 = 12 S / (n k (k + 1)) = 2/n, W = chi2 / (n (k - 1)) = 1/n^2,
    // F = (n - 1) chi2 / (2n - chi2) = (n - 1)/(n^2 - 1) = 1/(n + 1). The textbook form
    // 12/(nk(k+1)) sum R^2 - 3n(k+1) loses about 5 of 16 digits here (terms near 1.2e6, result 7e-6).
    [Fact]
    public void ManyBlocks_TinyStatistic_NoCancellation()
    {
        const int m = 100_000;
        var blocks = new List<double[]>(3 * m + 1);
        for (var i = 0; i < m; i++)
        {
            blocks.Add([1, 2, 3]);
            blocks.Add([2, 3, 1]);
            blocks.Add([3, 1, 2]);
        }

        blocks.Add([1, 2, 3]);
        double n = (3 * m) + 1;
        var r = Friedman.Test(blocks);
        Accuracy.AssertLre(r.ChiSquare.Value, 2 / n, 15, "chi2 = 2/n");
        Accuracy.AssertLre(r.KendallW.Value, 1 / (n * n), 15, "W = 1/n^2");
        Accuracy.AssertLre(r.ImanDavenportF.Value, 1 / (n + 1), 15, "F = 1/(n + 1)");
        Assert.Equal([(6.0 * m) + 1, (6.0 * m) + 2, (6.0 * m) + 3], r.RankSums);
    }

    [Fact]
    public void Validation_OneBlock_Throws()
    {
        var ex = Assert.Throws<ArgumentException>(() => Friedman.Test([[1, 2, 3]]));
        Assert.Equal("blocks", ex.ParamName);
        Assert.Contains("at least 2 blocks; got 1", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Validation_OneTreatment_Throws()
    {
        var ex = Assert.Throws<ArgumentException>(() => Friedman.Test([[1], [2]]));
        Assert.Contains("at least 2 treatments", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Validation_IncompleteBlock_NamesTheBlock()
    {
        var ex = Assert.Throws<ArgumentException>(() => Friedman.Test([[1, 2, 3], [4, 5, 6], [7, 8]]));
        Assert.Contains("block 3 has 2 value(s) but block 1 has 3", ex.Message, StringComparison.Ordinal);
        Assert.Contains("complete blocks", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(double.NaN, "NaN")]
    [InlineData(double.PositiveInfinity, "Infinity")]
    [InlineData(double.NegativeInfinity, "-Infinity")]
    public void Validation_NonFinite_NamesTheCell(double bad, string shown)
    {
        var ex = Assert.Throws<ArgumentException>(() => Friedman.Test([[1, 2], [3, bad], [5, 6]]));
        Assert.Contains("block 2, treatment 2: the value " + shown + " is not finite", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Validation_NullBlock_Throws()
    {
        var ex = Assert.Throws<ArgumentException>(() => Friedman.Test([[1, 2], null!]));
        Assert.Contains("block 2 is missing", ex.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentNullException>(() => Friedman.Test(null!));
    }
}
