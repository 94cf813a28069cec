namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// One pairwise comparison of a post-hoc procedure. <see cref="Diff"/> is mean(A) - mean(B)
/// (or the procedure's location difference, e.g. mean ranks); <see cref="Se"/> is its standard
/// error, <see cref="Statistic"/> the test statistic of the procedure (q, z, t), the interval
/// <see cref="CiLow"/>..<see cref="CiHigh"/> is simultaneous at the family's level where the
/// procedure gives one, <see cref="PAdjusted"/> the multiplicity-adjusted p-value and
/// <see cref="Df"/> the degrees of freedom of the reference distribution (undefined when the
/// reference distribution has none, e.g. a normal approximation).
/// </summary>
public sealed record PairwiseComparison(
    string LevelA,
    string LevelB,
    double Diff,
    Quantity Se,
    Quantity Statistic,
    Quantity CiLow,
    Quantity CiHigh,
    Quantity PAdjusted,
    Quantity Df);

/// <summary>
/// The result of a post-hoc procedure: its name, the family-wise alpha, the comparisons in
/// pair order (level i, level j) for i &lt; j over the level order, and the critical value of the
/// statistic at <see cref="Alpha"/> when a single one applies to all pairs (undefined otherwise,
/// e.g. per-pair degrees of freedom).
/// </summary>
public sealed record PostHocResult(
    string Method,
    double Alpha,
    IReadOnlyList<PairwiseComparison> Comparisons,
    Quantity CriticalValue);
