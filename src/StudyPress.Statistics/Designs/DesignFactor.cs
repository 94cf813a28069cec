namespace StudyPress.Statistics.Designs;

/// <summary>What a factor is in the layout of a study.</summary>
public enum FactorRole
{
    /// <summary>A fixed treatment whose levels were chosen (and, in a split plot, applied to a unit level).</summary>
    Treatment,

    /// <summary>
    /// A blocking factor (random): blocks, or the rows and columns of a Latin square. Blocks are
    /// additive: they get no interaction with treatments or with each other, so block x treatment
    /// variation is the error of the stratum.
    /// </summary>
    Block,

    /// <summary>
    /// A random factor whose levels are a draw from a population (operators, batches, pens): crossed
    /// with the other non-block factors unless nested in one of them.
    /// </summary>
    Random,
}

/// <summary>The unit a treatment factor is applied to in a split-plot layout.</summary>
public enum PlotLevel
{
    /// <summary>Not a split-plot layout: the treatment is applied to the experimental unit.</summary>
    Unit = 0,

    /// <summary>Applied to whole plots (the main plots inside each block).</summary>
    WholePlot = 1,

    /// <summary>Applied to the sub-plots of each whole plot.</summary>
    SubPlot = 2,

    /// <summary>Applied to the sub-sub-plots of each sub-plot.</summary>
    SubSubPlot = 3,
}

/// <summary>
/// One factor of a design and its role. <paramref name="NestedIn"/> names the factors it is nested
/// in (its levels are distinct within each level combination of those factors; the same label
/// under two parents is two different levels). <paramref name="Plot"/> is used by treatments only.
/// </summary>
public sealed record DesignFactor(string Name, FactorRole Role, IReadOnlyList<string> NestedIn, PlotLevel Plot = PlotLevel.Unit)
{
    /// <summary>A fixed treatment, applied to the experimental unit or to one plot level of a split plot.</summary>
    public static DesignFactor Treatment(string name, PlotLevel plot = PlotLevel.Unit) => new(name, FactorRole.Treatment, [], plot);

    /// <summary>A blocking factor (random, additive).</summary>
    public static DesignFactor Block(string name) => new(name, FactorRole.Block, []);

    /// <summary>A random factor, crossed with the others unless nested in the named factors.</summary>
    public static DesignFactor Random(string name, params string[] nestedIn) => new(name, FactorRole.Random, nestedIn);

    /// <summary>True for blocks and random factors.</summary>
    public bool IsRandom => Role != FactorRole.Treatment;
}

/// <summary>
/// The data of a design: the response and, for each declared factor (same order), the level label
/// of every observation.
/// </summary>
public sealed record DesignData(double[] Response, IReadOnlyList<IReadOnlyList<string>> Labels);

/// <summary>What is wrong with a design or its data, in words a user can act on.</summary>
public enum DesignIssueKind
{
    /// <summary>A factor name is used twice, or a nesting names an unknown factor or forms a cycle.</summary>
    Declaration,

    /// <summary>A random factor or block has a single level: its variance cannot be estimated.</summary>
    SingleLevel,

    /// <summary>A level combination that a complete design must contain has no observations (a block missing a treatment).</summary>
    MissingCombination,

    /// <summary>The counts are not balanced (or not proportional), so the classical strata do not apply: use the mixed model.</summary>
    Unbalanced,

    /// <summary>A split-plot layout without blocks (the whole plots cannot be told apart from the treatments).</summary>
    SplitPlotWithoutBlocks,

    /// <summary>Too few observations for the model's terms.</summary>
    TooFewObservations,

    /// <summary>The response does not vary around the fixed effects: no variance can be estimated.</summary>
    NoVariation,

    /// <summary>A label of a nested factor occurs under two levels of its parent (when labels are meant to be unique).</summary>
    ContradictoryNesting,

    /// <summary>The mixed model keeps more columns dense than the REML fit takes (<see cref="MixedModel.MaxDenseColumns"/>, <see cref="MixedModel.MaxAbsorbWork"/>).</summary>
    TooLarge,
}

/// <summary>A design problem; <paramref name="Factors"/> names the factors concerned.</summary>
public sealed record DesignIssue(DesignIssueKind Kind, string Message, IReadOnlyList<string> Factors);
