using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// Tukey's honestly significant difference (Tukey 1953) for all pairwise differences of k group
/// means, with the Tukey–Kramer form for unequal group sizes (Kramer 1956). NIST/SEMATECH
/// e-Handbook of Statistical Methods, section 7.4.7.1.
/// <para>
/// For levels i &lt; j: Diff = mean_i − mean_j; Se = √(MS_res (1/n_i + 1/n_j)) is the standard error
/// of the difference; the statistic q = |Diff| / √(MS_res/2 · (1/n_i + 1/n_j)) = √2 |Diff| / Se is
/// referred to the studentized range with k groups and df_res degrees of freedom:
/// p = P(Q_{k, df} &gt; q) (the simultaneous, multiplicity-adjusted p-value). The simultaneous
/// 1 − α intervals are Diff ± q_crit/√2 · Se with q_crit the upper-α quantile of Q_{k, df}; for
/// unequal sizes they are conservative (Hayter 1984).
/// </para>
/// <para>
/// Edge cases: no residual degrees of freedom or a residual mean square that is zero or not finite
/// make every statistic undefined with a reason (Diff stays defined). Groups must be non-empty;
/// a group of one is allowed (the pooled MS_res carries the variance).
/// </para>
/// </summary>
public static class TukeyHsd
{
    private const double Sqrt2 = 1.4142135623730950488;

    public static PostHocResult Compare(
        IReadOnlyList<string> levels,
        IReadOnlyList<double[]> groups,
        double msResidual,
        int dfResidual,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        Groups.RequireGroups(groups);

        // The work is done once, from the groups' counts, means and sums of squares.
        return PostHocFromSummaries.CompareTukey(levels, PostHocFromSummaries.Summaries(groups), msResidual, dfResidual, alpha);
    }
}
