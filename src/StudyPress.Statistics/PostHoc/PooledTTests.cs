namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// Pairwise t tests on the pooled (ANOVA residual) variance, with Holm or Bonferroni adjustment.
/// <para>
/// For levels i and j with means ȳ_i, ȳ_j and sizes n_i, n_j:
/// Diff = ȳ_i - ȳ_j, se = sqrt(MS_residual (1/n_i + 1/n_j)), t = Diff / se, referred to Student's
/// t with the residual degrees of freedom of the ANOVA. The raw two-sided p-values of the m
/// comparisons are adjusted by <see cref="PValueAdjustment"/> (Holm 1979, or Bonferroni).
/// </para>
/// <para>
/// Intervals: Diff ± t(1 - alpha/(2m); df) se, the Bonferroni simultaneous intervals (coverage at
/// least 1 - alpha for the whole family). The same intervals are given under Holm: Holm's
/// step-down procedure has no simultaneous two-sided intervals that match its decisions, and the
/// common practice is to report the Bonferroni interval beside Holm-adjusted p-values. An interval may therefore contain 0 while the Holm
/// p-value is below alpha. <see cref="PostHocResult.CriticalValue"/> is t(1 - alpha/(2m); df).
/// </para>
/// <para>
/// All pairs (m = k(k - 1)/2, pairs (i, j) with i &lt; j in level order, Diff = level i - level j),
/// or, with a control level, each other level against the control (m = k - 1, Diff = level -
/// control). A group of one observation is allowed (its mean has a standard error through the
/// pooled variance). Undefined when the residual mean square is zero or not positive (no
/// variance within groups) or when the residual df is zero.
/// </para>
/// Source of the method: e.g. Hochberg and Tamhane (1987), Multiple Comparison Procedures, Wiley,
/// chapter 2 (Bonferroni), and Holm (1979).
/// </summary>
public static class PooledTTests
{
    /// <summary>Runs the comparisons. <paramref name="control"/> selects many-to-one comparisons.</summary>
    public static PostHocResult Compare(
        IReadOnlyList<string> levels,
        IReadOnlyList<double[]> groups,
        double msResidual,
        int dfResidual,
        double alpha,
        PValueAdjustmentMethod method,
        string? control = null)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        PostHocInput.Validate(levels, groups, alpha);

        // The work is done once, from the groups' counts, means and sums of squares.
        return PostHocFromSummaries.ComparePooledT(levels, PostHocFromSummaries.Summaries(groups), msResidual, dfResidual, alpha, method, control);
    }
}
