using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Nonparametric;

/// <summary>
/// Dunn's (1964) pairwise comparisons of mean ranks after a Kruskal-Wallis test
/// (Dunn, O. J. (1964), "Multiple comparisons using rank sums", Technometrics 6, 241-252).
/// <para>
/// All N observations are ranked together (mid-ranks for ties, the same ranks as
/// <see cref="KruskalWallis"/>). For levels i &lt; j (level order): Diff = R̄_i - R̄_j,
/// se = sqrt([N (N + 1)/12 - Σ (t³ - t) / (12 (N - 1))] (1/n_i + 1/n_j)) (the tie-corrected
/// variance), z = Diff / se, two-sided normal p-value, adjusted over the k (k - 1)/2 pairs by
/// Holm (1979) (default) or Bonferroni (Dunn's own proposal).
/// </para>
/// <para>
/// Intervals: not given (<see cref="PairwiseComparison.CiLow"/> and CiHigh are undefined). Dunn's
/// test gives no interval on the mean-rank scale: the mean ranks depend on all groups, so an
/// interval for R̄_i - R̄_j is not an interval for a parameter of the two populations compared.
/// <see cref="PairwiseComparison.Df"/> is undefined (the reference distribution is the standard
/// normal). <see cref="PostHocResult.CriticalValue"/> is the Bonferroni z critical value
/// z(1 - alpha/(2m)), which is also the first step of Holm's procedure.
/// </para>
/// <para>
/// Undefined (se, z, p) when all values are tied (the variance is zero). Groups of one are allowed.
/// </para>
/// </summary>
public static class Dunn
{
    private const string NoInterval = "Dunn's test gives no interval on the mean-rank scale";

    /// <summary>All pairwise comparisons of mean ranks.</summary>
    public static PostHocResult Compare(
        IReadOnlyList<string> levels,
        IReadOnlyList<double[]> groups,
        double alpha,
        PValueAdjustmentMethod method = PValueAdjustmentMethod.Holm)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        PostHocInput.Validate(levels, groups, alpha);

        var (ranks, tieSum) = Ranking.MidRanks(groups);
        var meanRanks = ranks.Select(r => r.Sum() / r.Length).ToArray();
        double n = Groups.Count(groups);
        var variance = (n * (n + 1.0) / 12.0) - (tieSum / (12.0 * (n - 1.0)));
        string? problem = tieSum >= (n * n * n) - n || !(variance > 0)
            ? "all values are tied, so the rank variance is zero"
            : null;

        var k = levels.Count;
        var m = k * (k - 1) / 2;
        var critical = Quantity.Of(-MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, alpha / (2.0 * m)));
        var pairs = PostHocInput.Pairs(levels, control: null);

        var se = new Quantity[m];
        var z = new Quantity[m];
        var raw = new Quantity[m];
        for (var c = 0; c < m; c++)
        {
            var (a, b) = pairs[c];
            if (problem is not null)
            {
                se[c] = z[c] = raw[c] = Quantity.Undefined(problem);
                continue;
            }

            var s = Math.Sqrt(variance * ((1.0 / groups[a].Length) + (1.0 / groups[b].Length)));
            var stat = (meanRanks[a] - meanRanks[b]) / s;
            se[c] = Quantity.Of(s);
            z[c] = Quantity.Of(stat);
            raw[c] = Quantity.Of(Probability.NormalTwoSided(stat));
        }

        var adjusted = PValueAdjustment.Adjust(raw, method);
        var noCi = Quantity.Undefined(NoInterval);
        var noDf = Quantity.Undefined("the reference distribution is the standard normal, which has no degrees of freedom");
        var list = new PairwiseComparison[m];
        for (var c = 0; c < m; c++)
        {
            var (a, b) = pairs[c];
            list[c] = new PairwiseComparison(
                levels[a], levels[b], meanRanks[a] - meanRanks[b], se[c], z[c], noCi, noCi, adjusted[c], noDf);
        }

        var name = method == PValueAdjustmentMethod.Holm ? "Dunn's test (Holm)" : "Dunn's test (Bonferroni)";
        return new PostHocResult(name, alpha, list, critical);
    }
}
