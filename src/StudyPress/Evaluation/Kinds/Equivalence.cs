using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Evaluation.Kinds;

/// <summary>Where the standard error of an equivalence block's differences came from.</summary>
public enum EquivalenceError
{
    /// <summary>The anova block's residual mean square and df (equal variances, as the anova assumes).</summary>
    AnovaResidual = 0,

    /// <summary>The error term of the factor's F test in a declared design (a whole-plot error, a nested term).</summary>
    DesignTerm = 1,

    /// <summary>Welch: each pair's own two variances, because the anova's check found the variances unequal.</summary>
    WelchUnequalVariances = 2,

    /// <summary>Welch on the untransformed values, because the anova's error is on a transformed scale and the margin is in response units.</summary>
    WelchTransformed = 3,

    /// <summary>A declared design fitted as a mixed model (REML): the difference of its estimated marginal means, SE from Cov(β̂), its own Satterthwaite df.</summary>
    RemlModel = 4,
}

/// <summary>What an <c>equivalence</c> block computed: manifest values only, and the facts its text needs.</summary>
public sealed class EquivalenceOutcome(BoundBlock block) : BlockOutcome(block)
{
    /// <summary>The factor as the report names it.</summary>
    public string FactorLabel { get; init; } = string.Empty;

    /// <summary>True for non-inferiority, false for equivalence (TOST).</summary>
    public bool NonInferiority { get; init; }

    /// <summary>Non-inferiority: "higher" or "lower" is better.</summary>
    public string? Better { get; init; }

    /// <summary>The standard error's source (pooled from the anova, a design's error term, or Welch).</summary>
    public EquivalenceError Error { get; init; }

    /// <summary>The pooled error's mean square and df, when one was used; the design term's engine name.</summary>
    public (double MeanSquare, double Df, string Term)? Pooled { get; init; }

    /// <summary>The Brown–Forsythe p-value that made the block use Welch (rows route), if it did.</summary>
    public Quantity? UnequalVariancesP { get; init; }

    /// <summary>Each comparison, in order: the engine's result and its manifest values.</summary>
    public IReadOnlyList<(EquivalenceResult Result, IReadOnlyDictionary<string, ResultValue> Values)> Comparisons { get; init; } = [];
}

/// <summary>
/// Evaluates <c>equivalence</c> blocks: two one-sided tests (or the non-inferiority test) of level
/// differences of one factor of an anova block, on the anova's error where it holds, else Welch.
/// </summary>
public sealed class EquivalenceEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new EquivalenceEvaluator());

    public override string Kind => "equivalence";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<EquivalenceKind.Options>();
        // A block that stops at a mistake (or finds no anova to read) keeps its options only.
        var outcome = new EquivalenceOutcome(block) { NonInferiority = options.NonInferiority, Better = options.Better };
        if (PlainAnovaOf(context, block, diagnostics) is not { } anova)
        {
            return outcome;
        }

        string factorLabel;
        EquivalenceError error;
        (double MeanSquare, double Df, string Term)? pooled = null;
        Quantity? unequalVariancesP = null;

        var of = block.Of!.Id;
        IReadOnlyList<string> levels;
        IReadOnlyList<GroupStatistics> groups;
        string term;
        RemlFixedEffects? reml = null;
        if (anova.Route == AnovaRoute.Cells)
        {
            if (anova.Fit is not { } fit || anova.Cells is not { } selected)
            {
                return outcome;
            }

            var k = Choose(options, of, anova.Factors.Select(f => f.Name).ToList(), block, diagnostics);
            if (k < 0)
            {
                return outcome;
            }

            levels = selected.Levels[k];
            groups = Enumerable.Range(0, levels.Count)
                .Select(l => Statistics.Descriptive.DescriptivesFromSummaries.Pool(selected.Cells.Where(c => c.Levels[k] == l).Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares))))
                .ToList();
            term = anova.Factors[k].Name;
            factorLabel = anova.Factors[k].Display;
            var cellStats = selected.Cells.Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares)).ToList();
            var bartlett = cellStats.Count >= 2 ? GroupStatisticsTests.Bartlett(cellStats).P : Quantity.Undefined("one cell");
            if (bartlett.IsDefined && bartlett.Value < context.Header.Alpha)
            {
                error = EquivalenceError.WelchUnequalVariances;
                unequalVariancesP = bartlett;
            }
            else if (fit.ResidualMeanSquare.IsDefined)
            {
                error = EquivalenceError.AnovaResidual;
                pooled = (fit.ResidualMeanSquare.Value, fit.ResidualDf, "residual");
            }
            else
            {
                error = EquivalenceError.WelchUnequalVariances;
            }
        }
        else if (anova.Design is { } design)
        {
            if (anova.Data is null)
            {
                return outcome;
            }

            var names = anova.Data.Factors.Select(f => f.Spec.Name).ToList();
            var k = Choose(options, of, names, block, diagnostics, anova.Data.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).Select(f => f.Spec.Name).ToList());
            if (k < 0)
            {
                return outcome;
            }

            var factor = anova.Data.Factors[k];
            var at = options.Factor is null ? block.Location : options.FactorLocation;
            if (factor.Spec.Layout.Role != FactorRole.Treatment)
            {
                diagnostics.DesignViewUnavailable(at, Kind, factor.Spec.Name, "it is a block or random factor, whose levels are a sample of units rather than treatments to compare");
                return outcome;
            }

            levels = factor.Levels;
            groups = Statistics.PostHoc.PostHocFromSummaries.Summaries(factor.Split(anova.Data.Response));
            term = factor.Spec.Name;
            factorLabel = factor.Spec.Display;
            if (design.Method == DesignMethod.Reml)
            {
                // The difference of the mixed model's estimated marginal means, on its own Satterthwaite df.
                reml = design.Reml!.FixedEffects!;
                error = EquivalenceError.RemlModel;
            }
            else
            {
                var row = design.Strata!.Row(factor.Spec.Name);
                if (row.Denominator is not [{ Coefficient: 1.0 } part] || row.IsQuasiF)
                {
                    diagnostics.DesignViewUnavailable(at, Kind, of, $"{factor.Spec.Name} has no single error mean square in this design (its F test is approximate, against a combination of mean squares), so its differences would have no exact standard error");
                    return outcome;
                }

                error = EquivalenceError.DesignTerm;
                pooled = (part.MeanSquare, part.Df, part.Term);
            }
        }
        else
        {
            if (anova.Result is null || anova.Data is null)
            {
                return outcome;
            }

            var k = Choose(options, of, anova.Data.Factors.Select(f => f.Spec.Name).ToList(), block, diagnostics);
            if (k < 0)
            {
                return outcome;
            }

            var factor = anova.Data.Factors[k];
            levels = factor.Levels;

            // Margins are in response units, so the untransformed values are compared.
            groups = Statistics.PostHoc.PostHocFromSummaries.Summaries(factor.Split(anova.Data.Response));
            term = factor.Spec.Name;
            factorLabel = factor.Spec.Display;
            var ms = anova.Result.ResidualMeanSquare;
            if (anova.Transformed is not null)
            {
                error = EquivalenceError.WelchTransformed;
            }
            else if (anova.Review.UnequalVariances)
            {
                error = EquivalenceError.WelchUnequalVariances;
                unequalVariancesP = anova.Review.BrownForsythe.P;
            }
            else if (ms.IsDefined)
            {
                error = EquivalenceError.AnovaResidual;
                pooled = (ms.Value, anova.Result.ResidualDf, "residual");
            }
            else
            {
                error = EquivalenceError.WelchUnequalVariances;
            }
        }

        // The pairs: the given pair, or each other level against the reference (level − reference).
        var pairs = new List<(int A, int B)>();
        if (options.Pair is [var first, var second])
        {
            var a = Level(first, levels, groups, term, diagnostics);
            var b = a < 0 ? -1 : Level(second, levels, groups, term, diagnostics);
            if (a < 0 || b < 0)
            {
                return new EquivalenceOutcome(block);
            }

            pairs.Add((a, b));
        }
        else if (options.Reference is { } reference)
        {
            var r = Level(reference, levels, groups, term, diagnostics);
            if (r < 0)
            {
                return new EquivalenceOutcome(block);
            }

            pairs.AddRange(Enumerable.Range(0, levels.Count).Where(i => i != r && groups[i].Count > 0).Select(i => (i, r)));
        }

        var alpha = context.Header.Alpha;
        var inputs = context.Inputs(block);
        var comparisons = new List<(EquivalenceResult Result, IReadOnlyDictionary<string, ResultValue> Values)>();
        foreach (var (a, b) in pairs)
        {
            var result = reml is null
                ? Test(pooled, options, levels[a], groups[a], levels[b], groups[b], alpha)
                : RemlComparisons.Tost(levels[a], levels[b], reml.Combination(RemlComparisons.Difference(reml.MeanRow([term], [levels[a]]), reml.MeanRow([term], [levels[b]]))), options.MarginLow, options.MarginHigh, alpha);
            string[] pair = [result.LevelA, result.LevelB];
            ResultValue Add(string stat, Quantity q) => context.Results.Add(block.Id, TestName.Equivalence, term, null, pair, stat, q, inputs);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.Diff] = Add(Stat.Diff, Quantity.Of(result.Diff)),
                [Stat.Se] = Add(Stat.Se, result.Se),
                [Stat.Df] = Add(Stat.Df, result.Df),
                [Stat.CiLow] = Add(Stat.CiLow, result.CiLow),
                [Stat.CiHigh] = Add(Stat.CiHigh, result.CiHigh),
            };
            if (result.MarginLow is { } lo)
            {
                values[Stat.MarginLow] = Add(Stat.MarginLow, Quantity.Of(lo));
                values[Stat.PLower] = Add(Stat.PLower, result.PLower);
            }

            if (result.MarginHigh is { } hi)
            {
                values[Stat.MarginHigh] = Add(Stat.MarginHigh, Quantity.Of(hi));
                values[Stat.PUpper] = Add(Stat.PUpper, result.PUpper);
            }

            values[Stat.P] = Add(Stat.P, result.P);
            comparisons.Add((result, values.AsReadOnly()));
        }

        var frozen = comparisons.AsReadOnly();
        return new EquivalenceOutcome(block)
        {
            NonInferiority = options.NonInferiority,
            Better = options.Better,
            FactorLabel = factorLabel,
            Error = error,
            Pooled = pooled,
            UnequalVariancesP = unequalVariancesP,
            Comparisons = frozen,
            Figures = context.Header.Report.Figures && Figures.Equivalence(frozen, options.NonInferiority, factorLabel) is { } figure ? [figure] : [],
        };
    }

    private static EquivalenceResult Test((double MeanSquare, double Df, string Term)? error, EquivalenceKind.Options options, string levelA, GroupStatistics a, string levelB, GroupStatistics b, double alpha)
    {
        var pooled = error is { } p ? (p.MeanSquare, p.Df) : ((double MeanSquare, double Df)?)null;
        var variance = pooled is null ? EquivalenceVariance.Welch : EquivalenceVariance.Pooled;
        if (options.NonInferiority)
        {
            return Statistics.FollowUp.Equivalence.NonInferiority(levelA, a, levelB, b, options.MarginLow, options.MarginHigh, alpha, variance, pooled);
        }

        return pooled is { } e
            ? Statistics.FollowUp.Equivalence.Tost(levelA, a, levelB, b, options.MarginLow!.Value, options.MarginHigh!.Value, alpha, e.MeanSquare, e.Df)
            : Statistics.FollowUp.Equivalence.Tost(levelA, a, levelB, b, options.MarginLow!.Value, options.MarginHigh!.Value, alpha, EquivalenceVariance.Welch);
    }

    /// <summary>The index of the factor compared (the named one, or the only one), or −1 after one diagnostic.</summary>
    private static int Choose(EquivalenceKind.Options options, string of, IReadOnlyList<string> names, BoundBlock block, DiagnosticBag diagnostics, List<string>? candidates = null)
    {
        candidates ??= [.. names];
        if (options.Factor is { } name)
        {
            var k = names.ToList().IndexOf(name);
            if (k < 0)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, of, DiagnosticBag.Nearest(name, candidates));
            }

            return k;
        }

        if (candidates.Count == 1)
        {
            return names.ToList().IndexOf(candidates[0]);
        }

        diagnostics.FactorChoiceNeeded(block.Location, of);
        return -1;
    }

    /// <summary>The index of a level that has data, or −1 after one diagnostic.</summary>
    private static int Level(Syntax.YScalar level, IReadOnlyList<string> levels, IReadOnlyList<GroupStatistics> groups, string factor, DiagnosticBag diagnostics)
    {
        var i = levels.ToList().IndexOf(level.Value);
        if (i < 0 || groups[i].Count == 0)
        {
            var withData = levels.Where((_, j) => groups[j].Count > 0).ToList();
            diagnostics.EquivalenceUnknownLevel(level.Location, level.Value, factor, DiagnosticBag.Nearest(level.Value, withData));
            return -1;
        }

        return i;
    }
}
