using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>Which procedure made a family of comparisons (its title is written by the renderer).</summary>
public enum PostHocProcedure
{
    /// <summary>Tukey's HSD, equal group sizes.</summary>
    TukeyHsd,

    /// <summary>Tukey–Kramer, unequal group sizes.</summary>
    TukeyKramer,

    /// <summary>Dunnett's two-sided comparisons with the control.</summary>
    Dunnett,

    /// <summary>Dunnett's one-sided comparisons, alternative: higher than the control.</summary>
    DunnettGreater,

    /// <summary>Dunnett's one-sided comparisons, alternative: lower than the control.</summary>
    DunnettLess,

    /// <summary>Games–Howell (unequal variances).</summary>
    GamesHowell,

    /// <summary>Pooled-variance t tests, Holm-adjusted.</summary>
    PooledHolm,

    /// <summary>Pooled-variance t tests, Bonferroni-adjusted.</summary>
    PooledBonferroni,

    /// <summary>Dunn's rank comparisons, Holm-adjusted.</summary>
    Dunn,

    /// <summary>Adjusted means (covariates), Tukey–Kramer-style, each pair's own standard error.</summary>
    AdjustedTukeyKramer,

    /// <summary>Adjusted-mean differences, Holm-adjusted (Bonferroni intervals).</summary>
    AdjustedHolm,

    /// <summary>Adjusted-mean differences, Bonferroni-adjusted.</summary>
    AdjustedBonferroni,

    /// <summary>Marginal means of a mixed model (REML): Tukey–Kramer with each pair's own SE and Satterthwaite df.</summary>
    RemlTukeyKramer,

    /// <summary>Marginal means of a mixed model (REML): t tests on each pair's Satterthwaite df, Holm-adjusted (Bonferroni intervals).</summary>
    RemlHolm,

    /// <summary>Marginal means of a mixed model (REML): t tests on each pair's Satterthwaite df, Bonferroni-adjusted.</summary>
    RemlBonferroni,
}

public sealed class PostHocFamily
{
    public required string Test { get; init; }

    public required PostHocProcedure Procedure { get; init; }

    public required PostHocResult Result { get; init; }

    public IReadOnlyList<(PairwiseComparison Pair, IReadOnlyDictionary<string, ResultValue> Values)> Pairs { get; init; } = [];
}

public sealed class PostHocOutcome(BoundBlock block) : BlockOutcome(block)
{
    public string FactorLabel { get; init; } = string.Empty;

    public IReadOnlyList<PostHocFamily> Families { get; init; } = [];

    /// <summary>Which automatic rules fired, and on what evidence (the renderer words them).</summary>
    public IReadOnlyList<RuleDecision> Decisions { get; init; } = [];

    public IReadOnlyDictionary<string, ResultValue> Multiplicity { get; init; } = new Dictionary<string, ResultValue>(StringComparer.Ordinal).AsReadOnly();

    public bool Transformed { get; init; }

    /// <summary>Whether the comparisons came from the anova's rows or from its cell statistics.</summary>
    public AnovaRoute Route { get; init; } = AnovaRoute.Rows;

    /// <summary>Groups whose every response is missing (not compared).</summary>
    public IReadOnlyList<string> EmptyGroups { get; init; } = [];

    /// <summary>Why the residual mean square is not defined, when pooled-variance comparisons were asked for.</summary>
    public string? UndefinedResidual { get; init; }

    /// <summary>Some level has a single observation.</summary>
    public bool SingleObservationLevels { get; init; }

    /// <summary>Cells route: the comparisons were made (the note on how is shown).</summary>
    public bool FromCells { get; init; }

    /// <summary>A design anova: the error term the comparisons use (that of the factor's F test).</summary>
    public DesignErrorTerm? DesignError { get; init; }

    /// <summary>The alternative of comparisons with a control (two-sided unless <c>direction</c> says otherwise).</summary>
    public DunnettAlternative Direction { get; init; } = DunnettAlternative.TwoSided;

    /// <summary>
    /// Interactions of the anova that contain the compared factor and are significant at α (the
    /// labels of the term's factors in the term's order, the labels of the other factors in it, and
    /// its p): the comparison averages over those factors' levels.
    /// </summary>
    public IReadOnlyList<(IReadOnlyList<string> TermLabels, IReadOnlyList<string> Others, ResultValue P)> Interactions { get; init; } = [];
    /// <summary>An analysis of covariance: the comparisons are of adjusted means (covariates at their means).</summary>
    public bool Adjusted { get; init; }

    /// <summary>Adjusted means against a control with several comparisons: the largest error estimate of the multivariate t probabilities (quasi-Monte Carlo).</summary>
    public double? MultivariateTError { get; init; }

    /// <summary>A declared design fitted as a mixed model (REML): the comparisons are of its estimated marginal means, each with its own SE and Satterthwaite df.</summary>
    public bool Reml { get; init; }

    /// <summary>REML comparisons with a control: the one df of the multivariate t (the smallest of the comparisons' Satterthwaite df).</summary>
    public double? ControlDf { get; init; }
}

/// <summary>Evaluates <c>posthoc</c> blocks into values (no HTML, no report text).</summary>
public sealed partial class PostHocEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new PostHocEvaluator());

    public override string Kind => "posthoc";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<PostHocKind.Options>();
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is AnovaOutcome { Ancova: { } ancova } covariance)
        {
            return EvaluateCovariates(context, block, options, covariance, ancova, diagnostics);
        }

        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is AnovaOutcome { Route: AnovaRoute.Cells } cells)
        {
            return EvaluateCells(context, block, options, cells, diagnostics);
        }

        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is AnovaOutcome { Design: { } design } designAnova)
        {
            return EvaluateDesign(context, block, options, designAnova, design, diagnostics);
        }

        var outcome = new Found();
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is not AnovaOutcome { Result: not null } anova)
        {
            return outcome.Build(block);
        }

        var factors = anova.Data!.Factors;
        BlockFactor? factor;
        if (options.Factor is { } name)
        {
            factor = factors.FirstOrDefault(f => f.Spec.Name == name);
            if (factor is null)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, block.Of.Id, DiagnosticBag.Nearest(name, factors.Select(f => f.Spec.Name)));
                return outcome.Build(block);
            }
        }
        else if (factors.Count == 1)
        {
            factor = factors[0];
        }
        else
        {
            diagnostics.FactorChoiceNeeded(block.Location, block.Of.Id);
            return outcome.Build(block);
        }

        var empty = SummaryEvaluator.EmptyGroups(context, anova.Block, anova.Data);
        outcome.EmptyGroups = empty;

        if (options.Control is { } control && !factor.Levels.Contains(control))
        {
            diagnostics.UnknownControl(options.ControlLocation, control, factor.Spec.Name, DiagnosticBag.Nearest(control, factor.Levels));
            return outcome.Build(block);
        }

        outcome.FactorLabel = factor.Spec.Display;
        outcome.Transformed = anova.Transformed is not null;
        var levels = factor.Levels;
        var groups = factor.Split(anova.Input!.Response);
        var ms = anova.Result.ResidualMeanSquare;
        var df = anova.Result.ResidualDf;
        var alpha = context.Header.Alpha;
        var method = options.Method;
        if (method == "auto")
        {
            var review = anova.Review;
            if (review.UnequalVariances)
            {
                method = "games-howell";
                outcome.Decisions.Add(new RuleDecision(DecisionRule.GamesHowellFired) { P = review.BrownForsythe.P });
            }
            else if (!review.BrownForsythe.P.IsDefined)
            {
                method = "tukey";
                outcome.Decisions.Add(new RuleDecision(DecisionRule.PooledUnchecked) { P = review.BrownForsythe.P, WithControl = options.Control is not null });
            }
            else
            {
                method = "tukey";
                outcome.Decisions.Add(new RuleDecision(DecisionRule.PooledChosen) { P = review.BrownForsythe.P, WithControl = options.Control is not null });
            }

            if (review.WantsRankTest)
            {
                outcome.Decisions.Add(new RuleDecision(DecisionRule.DunnAdded) { P = review.Normality.P, SmallestGroup = review.SmallestGroup });
            }
        }

        if (method == "games-howell" && options.Direction != DunnettAlternative.TwoSided)
        {
            diagnostics.DirectionNeedsPooledVariance(options.DirectionLocation, "the Brown-Forsythe test", "p = " + anova.Review.BrownForsythe.P.Value.ToString("0.####", CultureInfo.InvariantCulture));
            return new PostHocOutcome(block);
        }

        if ((method is "tukey" or "holm" or "bonferroni") && !ms.IsDefined)
        {
            outcome.UndefinedResidual = ms.Reason;
        }

        outcome.Direction = options.Direction;
        var msValue = ms.IsDefined ? ms.Value : double.NaN;
        var (test, procedure, result) = method switch
        {
            "tukey" when options.Control is not null => ("dunnett", DunnettProcedure(options.Direction), Dunnett.CompareWithAlternative(levels, groups, msValue, df, alpha, options.Control, options.Direction)),
            "tukey" => ("tukey_hsd", groups.Select(g => g.Length).Distinct().Count() > 1 ? PostHocProcedure.TukeyKramer : PostHocProcedure.TukeyHsd, TukeyHsd.Compare(levels, groups, msValue, df, alpha)),
            "games-howell" => ("games_howell", PostHocProcedure.GamesHowell, ControlOnly(GamesHowell.Compare(levels, groups, alpha), options.Control)),
            "holm" => ("holm", PostHocProcedure.PooledHolm, PooledTTests.Compare(levels, groups, msValue, df, alpha, PValueAdjustmentMethod.Holm, options.Control)),
            _ => ("bonferroni", PostHocProcedure.PooledBonferroni, PooledTTests.Compare(levels, groups, msValue, df, alpha, PValueAdjustmentMethod.Bonferroni, options.Control)),
        };
        var inputs = context.Inputs(block);
        var term = factor.Spec.Name;
        outcome.Families.Add(Record(context, block, test, procedure, result, term, inputs));
        if (options.Method == "auto" && anova.Review.WantsRankTest)
        {
            var rawGroups = factor.Split(anova.Data.Response);
            outcome.Families.Add(Record(context, block, "dunn", PostHocProcedure.Dunn, Dunn.Compare(levels, rawGroups, alpha, PValueAdjustmentMethod.Holm), term, inputs));
        }

        AddFamilySize(context, block, outcome, term, result.Comparisons.Count, alpha, inputs);

        outcome.SingleObservationLevels = groups.Any(g => g.Length < 2);
        AddInteractions(outcome, anova, term, alpha);
        return outcome.Build(block);
    }

    /// <summary>
    /// The family's size and its family-wise error rate without adjustment (manifest), and its
    /// intervals figure: the same on every route (rows, cell statistics, declared design).
    /// </summary>
    private static void AddFamilySize(EvaluationContext context, BoundBlock block, Found outcome, string term, int m, double alpha, IReadOnlyList<string> inputs)
    {
        outcome.Multiplicity[Stat.M] = context.Results.Add(block.Id, TestName.Family, term, null, null, Stat.M, m, inputs);
        outcome.Multiplicity[Stat.FwerUnadjusted] = context.Results.Add(block.Id, TestName.Family, term, null, null, Stat.FwerUnadjusted, PValueAdjustment.FamilyWiseErrorRate(m, alpha), inputs);
        if (context.Header.Report.Figures && Figures.Intervals(outcome.Families, alpha) is { } figure)
        {
            outcome.Figures.Add(figure);
        }
    }

    /// <summary>Dunnett's procedure with its alternative.</summary>
    internal static PostHocProcedure DunnettProcedure(DunnettAlternative direction) => direction switch
    {
        DunnettAlternative.Greater => PostHocProcedure.DunnettGreater,
        DunnettAlternative.Less => PostHocProcedure.DunnettLess,
        _ => PostHocProcedure.Dunnett,
    };

    /// <summary>Records the anova's significant interactions that contain the compared factor.</summary>
    private static void AddInteractions(Found outcome, AnovaOutcome anova, string factor, double alpha)
    {
        foreach (var (t, values) in anova.Terms)
        {
            if (t.Factors.Count > 1 && t.Factors.Contains(factor) && t.P.IsDefined && t.P.Value < alpha && values.TryGetValue(Stat.P, out var p))
            {
                outcome.Interactions.Add(InteractionLabels(anova, t.Factors, factor, p));
            }
        }

        // A declared layout keeps its F tests in its design rows (the strata's, or the mixed model's):
        // a treatment interaction there (tested against its own error) counts the same way.
        foreach (var row in anova.Design?.Rows ?? [])
        {
            if (row.TreatmentFactors is { Count: > 1 } factors && factors.Contains(factor)
                && row.Values.TryGetValue(Stat.P, out var p) && p.Value is { IsDefined: true } q && q.Value < alpha)
            {
                outcome.Interactions.Add(InteractionLabels(anova, factors, factor, p));
            }
        }
    }

    /// <summary>An interaction's factors and the factors other than the compared one, by their labels.</summary>
    private static (IReadOnlyList<string> TermLabels, IReadOnlyList<string> Others, ResultValue P) InteractionLabels(AnovaOutcome anova, IReadOnlyList<string> factors, string compared, ResultValue p)
    {
        string Label(string name) => anova.Factors.FirstOrDefault(f => f.Name == name)?.Display ?? name;
        return ([.. factors.Select(Label)], [.. factors.Where(f => f != compared).Select(Label)], p);
    }

    internal static PostHocResult ControlOnly(PostHocResult all, string? control)
    {
        if (control is null)
        {
            return all;
        }

        // Keep the comparisons with the control, oriented as level − control.
        var kept = all.Comparisons
            .Where(c => c.LevelA == control || c.LevelB == control)
            .Select(c => c.LevelB == control ? c : c with
            {
                LevelA = c.LevelB,
                LevelB = c.LevelA,
                Diff = -c.Diff,
                Statistic = c.Statistic,
                CiLow = c.CiHigh.Map(v => -v),
                CiHigh = c.CiLow.Map(v => -v),
            })
            .ToList();
        return all with { Comparisons = kept };
    }

    internal static PostHocFamily Record(EvaluationContext context, BoundBlock block, string test, PostHocProcedure procedure, PostHocResult result, string term, IReadOnlyList<string> inputs) =>
        Family(test, procedure, result, RecordPairs(context, block, test, result, term, inputs));

    /// <summary>A family built once from its recorded pairs (each pair's values frozen).</summary>
    private static PostHocFamily Family(string test, PostHocProcedure procedure, PostHocResult result, List<(PairwiseComparison Pair, Dictionary<string, ResultValue> Values)> pairs) =>
        new() { Test = test, Procedure = procedure, Result = result, Pairs = pairs.Select(p => (p.Pair, (IReadOnlyDictionary<string, ResultValue>)p.Values.AsReadOnly())).ToList().AsReadOnly() };

    /// <summary>Records each comparison's values (diff, se, statistic, interval, adjusted p), in order.</summary>
    private static List<(PairwiseComparison Pair, Dictionary<string, ResultValue> Values)> RecordPairs(EvaluationContext context, BoundBlock block, string test, PostHocResult result, string term, IReadOnlyList<string> inputs)
    {
        var pairs = new List<(PairwiseComparison Pair, Dictionary<string, ResultValue> Values)>();
        foreach (var c in result.Comparisons)
        {
            string[] pair = [c.LevelA, c.LevelB];
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.Diff] = context.Results.Add(block.Id, test, term, null, pair, Stat.Diff, c.Diff, inputs),
                [Stat.Se] = context.Results.Add(block.Id, test, term, null, pair, Stat.Se, c.Se, inputs),
                [Stat.Statistic] = context.Results.Add(block.Id, test, term, null, pair, Stat.Statistic, c.Statistic, inputs),
            };
            if (c.CiLow.IsDefined || test != "dunn")
            {
                values[Stat.CiLow] = context.Results.Add(block.Id, test, term, null, pair, Stat.CiLow, c.CiLow, inputs);
                values[Stat.CiHigh] = context.Results.Add(block.Id, test, term, null, pair, Stat.CiHigh, c.CiHigh, inputs);
            }

            values[Stat.PAdj] = context.Results.Add(block.Id, test, term, null, pair, Stat.PAdj, c.PAdjusted, inputs);
            pairs.Add((c, values));
        }

        return pairs;
    }

    /// <summary>What a posthoc evaluation has found, in recording order; built once into its outcome at each return (<see cref="Build"/>).</summary>
    private sealed class Found
    {
        public readonly List<PostHocFamily> Families = [];
        public readonly List<RuleDecision> Decisions = [];
        public readonly Dictionary<string, ResultValue> Multiplicity = new(StringComparer.Ordinal);
        public readonly List<(IReadOnlyList<string> TermLabels, IReadOnlyList<string> Others, ResultValue P)> Interactions = [];
        public readonly List<FigurePlan> Figures = [];
        public AnovaRoute Route = AnovaRoute.Rows;
        public bool Adjusted;
        public bool Reml;
        public double? ControlDf;
        public string FactorLabel = string.Empty;
        public bool Transformed;
        public IReadOnlyList<string> EmptyGroups = [];
        public string? UndefinedResidual;
        public bool SingleObservationLevels;
        public bool FromCells;
        public DesignErrorTerm? DesignError;
        public DunnettAlternative Direction = DunnettAlternative.TwoSided;
        public double? MultivariateTError;

        public PostHocOutcome Build(BoundBlock block) => new(block)
        {
            Route = Route,
            Adjusted = Adjusted,
            Reml = Reml,
            ControlDf = ControlDf,
            FactorLabel = FactorLabel,
            Families = Families.AsReadOnly(),
            Decisions = Decisions.AsReadOnly(),
            Multiplicity = Multiplicity.AsReadOnly(),
            Interactions = Interactions.AsReadOnly(),
            Transformed = Transformed,
            EmptyGroups = EmptyGroups,
            UndefinedResidual = UndefinedResidual,
            SingleObservationLevels = SingleObservationLevels,
            FromCells = FromCells,
            DesignError = DesignError,
            Direction = Direction,
            MultivariateTError = MultivariateTError,
            Figures = Figures.AsReadOnly(),
        };
    }

}
