namespace StudyPress.Statistics.Nonparametric;

/// <summary>Result of a Kruskal-Wallis test.</summary>
/// <param name="H">The tie-corrected statistic H = H0 / C.</param>
/// <param name="HUncorrected">H0, the statistic before the tie correction.</param>
/// <param name="TieCorrection">C = 1 - Σ (t³ - t) / (N³ - N); 1 without ties, 0 when all values are tied.</param>
/// <param name="Df">k - 1.</param>
/// <param name="P">Upper-tail chi-square(k - 1) probability of H (large-sample approximation).</param>
/// <param name="MeanRanks">Mean mid-rank of each group, in group order.</param>
/// <param name="Counts">Size of each group.</param>
/// <param name="N">Total number of observations.</param>
public sealed record KruskalWallisResult(
    Quantity H,
    Quantity HUncorrected,
    double TieCorrection,
    int Df,
    Quantity P,
    IReadOnlyList<double> MeanRanks,
    IReadOnlyList<int> Counts,
    int N);

/// <summary>
/// Kruskal-Wallis one-way analysis of variance by ranks (Kruskal and Wallis 1952, "Use of ranks in
/// one-criterion variance analysis", JASA 47, 583-621).
/// <para>
/// All N observations are ranked together with mid-ranks for ties; R̄_i is the mean rank of group
/// i (size n_i). Then
/// H0 = 12 / (N (N + 1)) Σ n_i (R̄_i - (N + 1)/2)², which equals the textbook
/// 12 / (N (N + 1)) Σ R_i² / n_i - 3 (N + 1) but is computed from centred mean ranks, so there is no
/// cancellation. The tie correction is C = 1 - Σ (t³ - t) / (N³ - N) over runs of t tied values,
/// H = H0 / C, and p = P(chi-square(k - 1) &gt;= H), the large-sample approximation (the exact
/// permutation distribution is not computed; for very small groups the approximation is rough).
/// </para>
/// <para>
/// Domain: at least two non-empty groups. When all N values are tied, C = 0 and H and p are
/// undefined (the ranks carry no information); the mean ranks are then all (N + 1)/2.
/// </para>
/// </summary>
public static class KruskalWallis
{
    /// <summary>Runs the test on the groups (one array per level, in level order).</summary>
    public static KruskalWallisResult Test(IReadOnlyList<double[]> groups)
    {
        ArgumentNullException.ThrowIfNull(groups);
        Groups.RequireGroups(groups);
        var (ranks, tieSum) = Ranking.MidRanks(groups);
        var n = Groups.Count(groups);
        var k = groups.Count;
        var meanRanks = ranks.Select(r => r.Sum() / r.Length).ToArray();
        var counts = groups.Select(g => g.Length).ToArray();
        var nd = (double)n;
        var centre = (nd + 1.0) / 2.0;
        double s = 0;
        for (var i = 0; i < k; i++)
        {
            var d = meanRanks[i] - centre;
            s += counts[i] * d * d;
        }

        var h0 = 12.0 / (nd * (nd + 1.0)) * s;
        var c = 1.0 - (tieSum / ((nd * nd * nd) - nd));
        // All tied is decided on the values (Σ(t³ − t) against N³ − N is not exact in double
        // beyond N ≈ 2·10^5).
        var first = groups[0][0];
        if (groups.All(g => g.All(v => v == first)))
        {
            const string reason = "all values are tied, so the ranks carry no information";
            return new KruskalWallisResult(
                Quantity.Undefined(reason), Quantity.Of(h0), 0.0, k - 1, Quantity.Undefined(reason), meanRanks, counts, n);
        }

        var h = h0 / c;
        return new KruskalWallisResult(
            Quantity.Of(h), Quantity.Of(h0), c, k - 1, Quantity.Of(Probability.ChiSquareUpper(h, k - 1)), meanRanks, counts, n);
    }
}
