namespace StudyPress.Charts;

/// <summary>
/// The observations of one group (in level order), for <see cref="StatCharts.GroupDistributions"/>.
/// A crossed cell may also give its <see cref="Outer"/> label (the levels of every factor but the
/// last) and its <see cref="Inner"/> label (the last factor's level): when every group has both,
/// the x axis draws them in two tiers, the inner label under each box and the outer label once
/// under each run of boxes that share it, so that long level names stay apart.
/// </summary>
public sealed record GroupSample(string Label, IReadOnlyList<double> Values)
{
    /// <summary>The outer tier's label, or null.</summary>
    public string? Outer { get; init; }

    /// <summary>The inner tier's label, or null.</summary>
    public string? Inner { get; init; }
}

/// <summary>A group mean with its confidence interval, for <see cref="StatCharts.GroupMeans"/> (two-tier labels as for <see cref="GroupSample"/>).</summary>
public sealed record GroupMean(string Label, double Mean, double Lower, double Upper)
{
    /// <summary>The outer tier's label, or null.</summary>
    public string? Outer { get; init; }

    /// <summary>The inner tier's label, or null.</summary>
    public string? Inner { get; init; }
}

/// <summary>The mean of one cell (level of A × level of B), for <see cref="StatCharts.InteractionPlot"/>.</summary>
public sealed record CellMean(string LevelA, string LevelB, double Mean);

/// <summary>Power at a per-group sample size, for <see cref="StatCharts.PowerCurve"/>.</summary>
public sealed record PowerPoint(int PerGroupN, double Power);

/// <summary>One simultaneous interval: pair label, estimated difference and its bounds.</summary>
public sealed record IntervalComparison(string Pair, double Difference, double Lower, double Upper);

/// <summary>One subject's measurements at each level of a within-subject factor, for <see cref="StatCharts.SubjectProfiles"/>; <paramref name="Group"/> is its between-subject level (empty without groups).</summary>
public sealed record SubjectProfile(string Subject, string Group, IReadOnlyList<double> Values);

/// <summary>The mean profile with its interval at each level, for <see cref="StatCharts.SubjectProfiles"/>.</summary>
public sealed record ProfilePoint(double Mean, double Lower, double Upper);

/// <summary>
/// One equivalence comparison for <see cref="StatCharts.EquivalenceIntervals"/>: pair label, estimated
/// difference, its (1 − 2α) interval, and whether the test showed it within the margin (the caller's
/// verdict, so the figure cannot disagree with the table).
/// </summary>
public sealed record EquivalenceInterval(string Pair, double Difference, double Lower, double Upper, bool Shown);
