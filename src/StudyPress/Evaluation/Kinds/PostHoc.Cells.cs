using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.PostHoc;
using StudyPress.Binding.Kinds;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// A <c>posthoc</c> block whose anova block ran on a dataset the database aggregated
/// (<c>aggregate: true</c>): the comparisons come from each level's count, mean and sum of squares
/// (the anova's cells pooled over the other factors) and the anova's residual mean square, through
/// <see cref="PostHocFromSummaries"/>, which computes what the procedures on the values compute.
/// <c>method: auto</c> compares the variances by Bartlett's test (Brown–Forsythe needs the rows);
/// Dunn's rank comparisons need the rows and are not available. Manifest values and rendering are
/// those of the rows route (one <see cref="PostHocOutcome"/>, with <see cref="AnovaRoute.Cells"/>).
/// </summary>
public sealed partial class PostHocEvaluator
{
    private static PostHocOutcome EvaluateCells(EvaluationContext context, BoundBlock block, PostHocKind.Options options, AnovaOutcome anova, DiagnosticBag diagnostics)
    {
        var outcome = new Found { Route = AnovaRoute.Cells };
        if (anova.Fit is not { } fit || anova.Cells is not { } selected)
        {
            return outcome.Build(block);
        }

        var factors = anova.Factors;
        int k;
        if (options.Factor is { } name)
        {
            k = factors.Select((f, i) => (f, i)).FirstOrDefault(p => p.f.Name == name, (null!, -1)).Item2;
            if (k < 0)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, block.Of!.Id, DiagnosticBag.Nearest(name, factors.Select(f => f.Name)));
                return outcome.Build(block);
            }
        }
        else if (factors.Count == 1)
        {
            k = 0;
        }
        else
        {
            diagnostics.FactorChoiceNeeded(block.Location, block.Of!.Id);
            return outcome.Build(block);
        }

        var allLevels = selected.Levels;
        var cells = selected.Cells;
        var levels = allLevels[k];
        var factor = factors[k];
        if (options.Control is { } control && !levels.Contains(control))
        {
            diagnostics.UnknownControl(options.ControlLocation, control, factor.Name, DiagnosticBag.Nearest(control, levels));
            return outcome.Build(block);
        }

        outcome.FactorLabel = factor.Display;
        var groups = Enumerable.Range(0, levels.Count)
            .Select(l => Statistics.Descriptive.DescriptivesFromSummaries.Pool(cells.Where(c => c.Levels[k] == l).Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares))))
            .ToList();
        var ms = fit.ResidualMeanSquare;
        var df = fit.ResidualDf;
        var alpha = context.Header.Alpha;
        var method = options.Method;
        if (method == "auto")
        {
            var bt = GroupStatisticsTests.Bartlett([.. cells.Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares))]);
            var overCells = factors.Count != 1;
            if (bt.P.IsDefined && bt.P.Value < alpha)
            {
                method = "games-howell";
                outcome.Decisions.Add(new RuleDecision(DecisionRule.GamesHowellFired, Cells: true) { P = bt.P, OverCellsOfAnova = overCells });
            }
            else
            {
                method = "tukey";
                outcome.Decisions.Add(new RuleDecision(bt.P.IsDefined ? DecisionRule.PooledChosen : DecisionRule.PooledUnchecked, Cells: true) { P = bt.P, OverCellsOfAnova = overCells, WithControl = options.Control is not null });
            }

            outcome.Decisions.Add(new RuleDecision(DecisionRule.DunnUnavailable, Cells: true));
        }

        if (method == "games-howell" && options.Direction != DunnettAlternative.TwoSided)
        {
            var bp = outcome.Decisions.FirstOrDefault(d => d.Rule == DecisionRule.GamesHowellFired)?.P;
            diagnostics.DirectionNeedsPooledVariance(options.DirectionLocation, "Bartlett's test over the cells", bp is { IsDefined: true } q ? "p = " + q.Value.ToString("0.####", CultureInfo.InvariantCulture) : "p below α");
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
            "tukey" when options.Control is not null => ("dunnett", DunnettProcedure(options.Direction), Dunnett.CompareFromSummaries(levels, groups, msValue, df, alpha, options.Control, options.Direction)),
            "tukey" => ("tukey_hsd", groups.Select(g => g.Count).Distinct().Count() > 1 ? PostHocProcedure.TukeyKramer : PostHocProcedure.TukeyHsd, PostHocFromSummaries.CompareTukey(levels, groups, msValue, df, alpha)),
            "games-howell" => ("games_howell", PostHocProcedure.GamesHowell, ControlOnly(PostHocFromSummaries.CompareGamesHowell(levels, groups, alpha), options.Control)),
            "holm" => ("holm", PostHocProcedure.PooledHolm, PostHocFromSummaries.ComparePooledT(levels, groups, msValue, df, alpha, PValueAdjustmentMethod.Holm, options.Control)),
            _ => ("bonferroni", PostHocProcedure.PooledBonferroni, PostHocFromSummaries.ComparePooledT(levels, groups, msValue, df, alpha, PValueAdjustmentMethod.Bonferroni, options.Control)),
        };
        var inputs = context.Inputs(block);
        var term = factor.Name;
        outcome.Families.Add(Record(context, block, test, procedure, result, term, inputs));
        AddFamilySize(context, block, outcome, term, result.Comparisons.Count, alpha, inputs);

        outcome.SingleObservationLevels = groups.Any(g => g.Count < 2);
        outcome.FromCells = true;
        AddInteractions(outcome, anova, term, alpha);
        return outcome.Build(block);
    }

}
