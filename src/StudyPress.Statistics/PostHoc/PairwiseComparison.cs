namespace StudyPress.Statistics.PostHoc;

/// <summary>One comparison of two levels in a post-hoc procedure.</summary>
/// <param name="LevelA">First level of the pair.</param>
/// <param name="LevelB">Second level of the pair.</param>
/// <param name="Diff">Mean of A minus mean of B (on the scale of the procedure).</param>
/// <param name="Se">Standard error of <paramref name="Diff"/>.</param>
/// <param name="Statistic">Test statistic of the comparison.</param>
/// <param name="CiLow">Lower limit of the (simultaneous) confidence interval for the difference.</param>
/// <param name="CiHigh">Upper limit of the (simultaneous) confidence interval for the difference.</param>
/// <param name="PAdjusted">p-value adjusted for the family of comparisons.</param>
/// <param name="Df">Degrees of freedom of the reference distribution, where there is one.</param>
public sealed record PairwiseComparison(string LevelA, string LevelB, double Diff, Quantity Se, Quantity Statistic, Quantity CiLow, Quantity CiHigh, Quantity PAdjusted, Quantity Df);

/// <summary>The result of a post-hoc procedure: its comparisons and the critical value used for the intervals.</summary>
public sealed record PostHocResult(string Method, double Alpha, IReadOnlyList<PairwiseComparison> Comparisons, Quantity CriticalValue);
