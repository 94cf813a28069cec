namespace StudyPress.Statistics.Nonparametric;

/// <summary>Result of a Friedman test on n blocks × k treatments.</summary>
/// <param name="ChiSquare">The tie-corrected statistic χ² = χ²₀ / C (the default statistic).</param>
/// <param name="ChiSquareUncorrected">χ²₀ = 12 / (n k (k + 1)) Σ_j (R_j − n (k + 1)/2)², before the tie correction.</param>
/// <param name="TieCorrection">C = 1 − Σ (t³ − t) / (n (k³ − k)); 1 without ties, 0 when every block is tied throughout.</param>
/// <param name="Df">k − 1.</param>
/// <param name="P">Upper-tail chi-square(k − 1) probability of <paramref name="ChiSquare"/> (large-sample approximation).</param>
/// <param name="PUncorrected">Upper-tail chi-square(k − 1) probability of <paramref name="ChiSquareUncorrected"/>.</param>
/// <param name="KendallW">Kendall's coefficient of concordance W, tie-corrected; W = χ² / (n (k − 1)).</param>
/// <param name="ImanDavenportF">F = (n − 1) χ² / (n (k − 1) − χ²) from the tie-corrected χ² (the analysis-of-variance F of the within-block ranks).</param>
/// <param name="ImanDavenportFUncorrected">The same F from the uncorrected χ²₀ (the form usually printed; equal to the other without ties).</param>
/// <param name="ImanDavenportDf1">Numerator degrees of freedom, k − 1.</param>
/// <param name="ImanDavenportDf2">Denominator degrees of freedom, (k − 1)(n − 1).</param>
/// <param name="ImanDavenportP">Upper-tail F probability of <paramref name="ImanDavenportF"/>; 0 under perfect concordance.</param>
/// <param name="ImanDavenportPUncorrected">Upper-tail F probability of <paramref name="ImanDavenportFUncorrected"/>.</param>
/// <param name="PerfectConcordance">True when every block gives each treatment the same rank (χ² = n (k − 1), W = 1), ties included.</param>
/// <param name="RankSums">R_j, the sum over blocks of the within-block mid-ranks of treatment j, in treatment order.</param>
/// <param name="MeanRanks">R̄_j = R_j / n, in treatment order.</param>
/// <param name="Blocks">n, the number of blocks.</param>
/// <param name="Treatments">k, the number of treatments.</param>
public sealed record FriedmanResult(
    Quantity ChiSquare,
    Quantity ChiSquareUncorrected,
    double TieCorrection,
    int Df,
    Quantity P,
    Quantity PUncorrected,
    Quantity KendallW,
    Quantity ImanDavenportF,
    Quantity ImanDavenportFUncorrected,
    int ImanDavenportDf1,
    int ImanDavenportDf2,
    Quantity ImanDavenportP,
    Quantity ImanDavenportPUncorrected,
    bool PerfectConcordance,
    IReadOnlyList<double> RankSums,
    IReadOnlyList<double> MeanRanks,
    int Blocks,
    int Treatments);

/// <summary>
/// Friedman's (1937) test for k treatments in n complete blocks, one observation per block ×
/// treatment cell (Friedman, M. (1937), "The use of ranks to avoid the assumption of normality
/// implicit in the analysis of variance", JASA 32, 675-701), with Kendall's W and the
/// Iman–Davenport F (Iman, R. L. and Davenport, J. M. (1980), "Approximations of the critical
/// region of the Friedman statistic", Communications in Statistics A 9, 571-595).
/// <para>
/// Each block is ranked on its own, 1..k, tied values sharing the mean of the ranks they occupy
/// (mid-ranks). R_j is the rank sum of treatment j and S = Σ_j (R_j − n (k + 1)/2)². Then
/// χ²₀ = 12 S / (n k (k + 1)) (equal to the textbook 12/(n k (k + 1)) Σ R_j² − 3 n (k + 1), but
/// computed from centred sums); the tie correction is C = 1 − T / (n (k³ − k)), T = Σ over blocks
/// of Σ (t³ − t) over runs of t tied values, and χ² = χ²₀ / C, the default statistic, equal to
/// (k − 1) Σ_j (R_j − n (k + 1)/2)² / Σ_ij (r_ij − (k + 1)/2)². p = P(chi-square(k − 1) ≥ χ²), the
/// large-sample approximation; the exact permutation distribution is not computed (for small n and
/// k tables of it differ: Zar's Example 12.6 has χ² = 10.68, chi-square p = 0.0136, exact
/// 0.005 &lt; p &lt; 0.01).
/// </para>
/// <para>
/// Kendall's W (Kendall and Babington Smith 1939, tie-corrected form):
/// W = 12 S / (n² (k³ − k) − n T) = χ² / (n (k − 1)), in [0, 1]; 1 exactly when every block ranks
/// the treatments identically.
/// </para>
/// <para>
/// Iman–Davenport: F = (n − 1) χ² / (n (k − 1) − χ²) on (k − 1, (k − 1)(n − 1)) degrees of freedom.
/// With the tie-corrected χ² this is exactly the analysis-of-variance F for treatments on the
/// within-block ranks, (n − 1) S_t / SS_error with S_t = S / n, which is Conover's T₂ (Conover 1999,
/// Practical Nonparametric Statistics, 3rd ed., section 5.8) and handles ties; it is the default.
/// The form from the uncorrected χ²₀ (Iman and Davenport's and Demšar's (2006) formula, which
/// assumes no ties) is reported beside it. When χ² = n (k − 1) (perfect concordance: every block
/// gives each treatment the same rank, so the rank error sum of squares is zero) F is +∞: it is
/// then reported as not defined, with a reason saying it is infinite, and its p-value is 0, the
/// limit of P(F ≥ f) as f → ∞ (not a rounding of a small number).
/// </para>
/// <para>
/// Numerics: ranks are held as exact integers 2 r_ij − (k + 1) and all sums are exact (see
/// <see cref="FriedmanRanks"/>); each statistic is a ratio of exact integers, e.g.
/// χ² = (k − 1) Σ C_j² / Σ c_ij² and F = (n − 1) Σ C_j² / (n Σ c_ij² − Σ C_j²), so nothing cancels.
/// </para>
/// <para>
/// Domain: n ≥ 2 blocks, k ≥ 2 treatments, every block with exactly k finite values (an
/// <see cref="ArgumentException"/> names the first offending block and treatment otherwise). When
/// every block is tied throughout, C = 0 and χ², p, W and the tie-corrected F are undefined (the
/// ranks carry no information); the uncorrected χ²₀ is then 0.
/// </para>
/// </summary>
public static class Friedman
{
    private const string AllTiedReason = "every block has all its values tied, so the within-block ranks carry no information";

    private const string InfiniteF =
        "infinite: every block gives each treatment the same rank (perfect concordance, W = 1), so the error sum of squares of the ranks is zero";

    /// <summary>
    /// Runs the test. <paramref name="blocks"/>[i][j] is the observation of treatment j in block i
    /// (one array per block, treatments in the same order in every block).
    /// </summary>
    public static FriedmanResult Test(IReadOnlyList<double[]> blocks)
    {
        var r = FriedmanRanks.Of(blocks, nameof(blocks));
        int n = r.Blocks, k = r.Treatments;
        var df = k - 1;
        var df2 = checked((k - 1) * (n - 1));
        var rankSums = new double[k];
        var meanRanks = new double[k];
        for (var j = 0; j < k; j++)
        {
            rankSums[j] = r.RankSum(j);
            meanRanks[j] = r.MeanRank(j);
        }

        Int128 ni = n, ki = k;

        // Uncorrected: χ²₀ = 3 Σ C² / (n k (k + 1)); F₀ = 3 (n − 1) Σ C² / (n² k (k² − 1) − 3 Σ C²).
        var chi0 = FriedmanRanks.Ratio(checked(3 * r.SumC2), checked(ni * ki * (ki + 1)));
        var f0Denominator = checked((ni * ni * ki * ((ki * ki) - 1)) - (3 * r.SumC2));
        var (f0, pf0) = f0Denominator == 0
            ? (Quantity.Undefined(InfiniteF), Quantity.Of(0.0))
            : F(FriedmanRanks.Ratio(checked(3 * (ni - 1) * r.SumC2), f0Denominator), df, df2);
        var chiU = Quantity.Of(chi0);
        var pU = Quantity.Of(Probability.ChiSquareUpper(chi0, df));

        var tieCorrection = FriedmanRanks.Ratio(r.SumCells2, r.SumCells2WithoutTies);
        if (r.AllTied)
        {
            var none = Quantity.Undefined(AllTiedReason);
            return new FriedmanResult(
                none, chiU, 0.0, df, none, pU, none, none, f0, df, df2, none, pf0, false, rankSums, meanRanks, n, k);
        }

        // Tie-corrected: χ² = (k − 1) Σ C² / Σ c²; W = Σ C² / (n Σ c²); F = (n − 1) Σ C² / (n Σ c² − Σ C²).
        var perfect = r.ErrorNumerator == 0;
        var chi = perfect ? (double)n * (k - 1) : FriedmanRanks.Ratio(checked((ki - 1) * r.SumC2), r.SumCells2);
        var w = perfect ? 1.0 : FriedmanRanks.Ratio(r.SumC2, checked(ni * r.SumCells2));
        var (f, pf) = perfect
            ? (Quantity.Undefined(InfiniteF), Quantity.Of(0.0))
            : F(FriedmanRanks.Ratio(checked((ni - 1) * r.SumC2), r.ErrorNumerator), df, df2);

        return new FriedmanResult(
            Quantity.Of(chi),
            chiU,
            tieCorrection,
            df,
            Quantity.Of(Probability.ChiSquareUpper(chi, df)),
            pU,
            Quantity.Of(w),
            f,
            f0,
            df,
            df2,
            pf,
            pf0,
            perfect,
            rankSums,
            meanRanks,
            n,
            k);
    }

    private static (Quantity F, Quantity P) F(double f, int df1, int df2) =>
        (Quantity.Of(f), Quantity.Of(Probability.FUpper(f, df1, df2)));
}
