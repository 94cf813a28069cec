using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>Which automatic rule of an anova or posthoc block decided what, and on what evidence.</summary>
public enum DecisionRule
{
    /// <summary>Welch's F shown because the block asks for it (welch: yes).</summary>
    WelchRequested,

    /// <summary>welch: auto, unequal variances found: Welch's F shown and read.</summary>
    WelchFired,

    /// <summary>welch: auto, no evidence of unequal variances: Welch's F not shown.</summary>
    WelchNotFired,

    /// <summary>welch: auto, variances could not be compared.</summary>
    WelchUnchecked,

    /// <summary>welch: auto, non-normal residuals in small groups: the rank test added.</summary>
    RankTestAdded,

    /// <summary>method: auto, unequal variances: Games–Howell used.</summary>
    GamesHowellFired,

    /// <summary>method: auto, no evidence of unequal variances: Tukey's HSD (or Dunnett's) used.</summary>
    PooledChosen,

    /// <summary>method: auto, variances could not be compared: Tukey's HSD (or Dunnett's) used.</summary>
    PooledUnchecked,

    /// <summary>method: auto, non-normal residuals in small groups: Dunn's comparisons added.</summary>
    DunnAdded,

    /// <summary>method: auto on aggregated data: Dunn's comparisons are not available.</summary>
    DunnUnavailable,
}

/// <summary>
/// One decision of an automatic rule: the rule, the p-value (or reason) it read, and what the
/// text needs (the smallest group, whether a control is named, what the variances were compared
/// over). <see cref="Cells"/>: on aggregated data (Bartlett's test instead of Brown–Forsythe).
/// The renderer writes the sentence.
/// </summary>
public sealed record RuleDecision(DecisionRule Rule, bool Cells = false)
{
    public Quantity P { get; init; } = Quantity.Undefined("not computed");

    public int SmallestGroup { get; init; }

    public bool WithControl { get; init; }

    /// <summary>Cells route: whether Bartlett's test compared the cells of the anova (several factors) rather than the groups of one factor.</summary>
    public bool OverCellsOfAnova { get; init; }
}
