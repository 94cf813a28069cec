using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// The Games–Howell procedure (Games and Howell 1976, "Pairwise multiple comparison procedures
/// with unequal n's and/or variances: a Monte Carlo study", J. Educational Statistics 1, 113-125):
/// Tukey's studentized range comparison with each pair's own variance estimate and
/// Welch–Satterthwaite degrees of freedom, for unequal variances.
/// <para>
/// For levels i &lt; j with sample variances v_i, v_j (divisor n − 1): Diff = mean_i − mean_j,
/// Se = √(v_i/n_i + v_j/n_j), df = Se⁴ / ((v_i/n_i)²/(n_i − 1) + (v_j/n_j)²/(n_j − 1)),
/// q = √2 |Diff| / Se (= √2 |t_Welch|), p = P(Q_{k, df} &gt; q) and the interval
/// Diff ± q_crit(α; k, df)/√2 · Se. For k = 2 this is Welch's t test. Since df differs per pair
/// there is no single critical value (<see cref="PostHocResult.CriticalValue"/> is undefined).
/// </para>
/// <para>
/// Edge cases: a group of one has no variance, and a pair whose groups both have zero variance
/// has Se = 0; such pairs get undefined statistics with a reason (Diff stays defined).
/// </para>
/// </summary>
public static class GamesHowell
{
    private const double Sqrt2 = 1.4142135623730950488;

    public static PostHocResult Compare(IReadOnlyList<string> levels, IReadOnlyList<double[]> groups, double alpha)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        Groups.RequireGroups(groups);

        // The work is done once, from the groups' counts, means and sums of squares.
        return PostHocFromSummaries.CompareGamesHowell(levels, PostHocFromSummaries.Summaries(groups), alpha);
    }
}
