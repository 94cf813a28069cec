using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Evaluation.Kinds;

public sealed partial class PostHocEvaluator
{
    /// <summary>
    /// Comparisons of an analysis of covariance: pairwise differences of the ADJUSTED means of a
    /// treatment factor (covariates at their means), each with its own standard error from the
    /// covariance model, by the engine's adjusted comparison (<see cref="Ancova"/>):
    /// <c>tukey</c> (and <c>auto</c>): the studentized range with each pair's own SE (Tukey–Kramer
    /// style; an approximation with covariates); <c>holm</c>: Holm step-down over t tests of the
    /// adjusted differences with Bonferroni intervals; <c>bonferroni</c>: the same t tests with
    /// p × m and the same Bonferroni intervals. Refused: Games–Howell (a variance per group of raw
    /// values), a control, and blocks.
    /// </summary>
    private static PostHocOutcome EvaluateCovariates(EvaluationContext context, BoundBlock block, PostHocKind.Options options, AnovaOutcome anova, CovariateAnalysis ancova, DiagnosticBag diagnostics)
    {
        var outcome = new Found { Adjusted = true };
        var of = block.Of!.Id;
        var factors = anova.Data!.Factors;
        BlockFactor? factor;
        if (options.Factor is { } name)
        {
            factor = factors.FirstOrDefault(f => f.Spec.Name == name);
            if (factor is null)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, of, DiagnosticBag.Nearest(name, factors.Select(f => f.Spec.Name)));
                return outcome.Build(block);
            }

            if (factor.Spec.Layout.Role == FactorRole.Block)
            {
                diagnostics.AncovaPostHocBlock(options.FactorLocation, name);
                return outcome.Build(block);
            }
        }
        else if (ancova.Treatments.Count == 1)
        {
            factor = factors.First(f => f.Spec.Name == ancova.Treatments[0]);
        }
        else
        {
            diagnostics.FactorChoiceNeeded(block.Location, of);
            return outcome.Build(block);
        }

        if (options.Method == "games-howell")
        {
            diagnostics.AncovaPostHocMethod(options.MethodLocation ?? block.Location, options.Method);
            return outcome.Build(block);
        }

        var family = ancova.Result.Family(factor.Spec.Name);
        var method = options.Method == "auto" ? "tukey" : options.Method;
        if (options.Control is { } control)
        {
            if (family.IndexOf(control) < 0)
            {
                diagnostics.UnknownControl(options.ControlLocation, control, factor.Spec.Name, DiagnosticBag.Nearest(control, family.Levels));
                return outcome.Build(block);
            }

            if (method == "tukey")
            {
                return WithControl(context, block, outcome, factor, family, control, options, diagnostics);
            }
        }

        // Every comparison from the one fit of the anova block (its adjusted means, their covariance and error df).
        var adjustment = method switch
        {
            "tukey" => AdjustedMeansComparison.TukeyKramer,
            "holm" => AdjustedMeansComparison.Holm,
            _ => AdjustedMeansComparison.Bonferroni,
        };
        // With a control and Holm or Bonferroni: each other level against the control (m = k − 1), no multivariate t.
        var pairs = AdjustedComparisons.Pairwise(family, adjustment, context.Header.Alpha, options.Control);
        var m = pairs.Count;
        var comparisons = pairs.Select(c => new PairwiseComparison(
            c.LevelA,
            c.LevelB,
            c.Diff,
            c.Se,
            method == "tukey" ? c.T.Map(t => Math.Sqrt(2.0) * Math.Abs(t)) : c.T,
            c.CiLow,
            c.CiHigh,
            c.PAdjusted,
            Quantity.Of(c.Df))).ToList();
        var (test, procedure) = method switch
        {
            "tukey" => (TestName.TukeyHsd, PostHocProcedure.AdjustedTukeyKramer),
            "holm" => (TestName.Holm, PostHocProcedure.AdjustedHolm),
            _ => (TestName.Bonferroni, PostHocProcedure.AdjustedBonferroni),
        };
        var result = new PostHocResult(AdjustedComparisons.Describe(adjustment), context.Header.Alpha, comparisons, Quantity.Undefined("each pair has its own standard error"));
        var inputs = context.Inputs(block);
        var term = factor.Spec.Name;
        outcome.FactorLabel = factor.Spec.Display;
        outcome.Families.Add(Record(context, block, test, procedure, result, term, inputs));
        outcome.Multiplicity[Stat.M] = context.Results.Add(block.Id, TestName.Family, term, null, null, Stat.M, m, inputs);
        outcome.Multiplicity[Stat.FwerUnadjusted] = context.Results.Add(block.Id, TestName.Family, term, null, null, Stat.FwerUnadjusted, PValueAdjustment.FamilyWiseErrorRate(m, context.Header.Alpha), inputs);
        outcome.SingleObservationLevels = factor.Split(anova.Data.Response).Any(g => g.Length < 2);
        return outcome.Build(block);
    }

    /// <summary>
    /// Every other level's adjusted mean against the control's, by the multivariate t with the
    /// adjusted means' own correlation (<see cref="AdjustedComparisons.WithControl"/>), from the same fit;
    /// SP0541 at <c>control</c> when its probabilities miss the required accuracy within the work limit.
    /// </summary>
    private static PostHocOutcome WithControl(EvaluationContext context, BoundBlock block, Found outcome, BlockFactor factor, AdjustedMeansFamily family, string control, PostHocKind.Options options, DiagnosticBag diagnostics)
    {
        var alpha = context.Header.Alpha;
        var direction = options.Direction;
        var dunnett = AdjustedComparisons.WithControl(family, control, direction, alpha);
        if (!dunnett.Accurate)
        {
            diagnostics.DunnettAccuracyNotReached(options.ControlLocation, control, family.Count - 1, dunnett.Error, AdjustedComparisons.RequiredAccuracy, block.Of!.Id);
            return outcome.Build(block);
        }

        var m = dunnett.Comparisons.Count;
        var comparisons = dunnett.Comparisons.Select(c => new PairwiseComparison(c.LevelA, c.LevelB, c.Diff, c.Se, c.T, c.CiLow, c.CiHigh, c.PAdjusted, Quantity.Of(c.Df))).ToList();
        var result = new PostHocResult(dunnett.Method, alpha, comparisons, dunnett.CriticalValue);
        var inputs = context.Inputs(block);
        var term = factor.Spec.Name;
        outcome.FactorLabel = factor.Spec.Display;
        outcome.Direction = direction;
        outcome.MultivariateTError = m > 1 ? dunnett.Error : null;
        outcome.Families.Add(Record(context, block, TestName.Dunnett, DunnettProcedure(direction), result, term, inputs));
        outcome.Multiplicity[Stat.M] = context.Results.Add(block.Id, TestName.Family, term, null, null, Stat.M, m, inputs);
        outcome.Multiplicity[Stat.FwerUnadjusted] = context.Results.Add(block.Id, TestName.Family, term, null, null, Stat.FwerUnadjusted, PValueAdjustment.FamilyWiseErrorRate(m, alpha), inputs);
        return outcome.Build(block);
    }
}
