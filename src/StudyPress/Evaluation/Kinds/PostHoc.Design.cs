using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Evaluation.Kinds;

/// <summary>The error a design's comparisons use: the error of the factor's F test, its mean square and df.</summary>
/// <param name="Term">The engine name of the error term (a plot error, a nested term, the residual).</param>
public sealed record DesignErrorTerm(string Term, double MeanSquare, int Df);

public sealed partial class PostHocEvaluator
{
    /// <summary>
    /// Comparisons of a treatment of a design anova, on the error its F test uses (a whole-plot
    /// factor on the whole-plot error, a factor above a nested random term on that term): Tukey,
    /// Dunnett or pooled t tests with that mean square and its df. Refused where no single mean
    /// square is the error (a quasi-F), on the mixed-model route, for blocks and random factors, and
    /// for methods that estimate variances per group (they would ignore the strata).
    /// </summary>
    private static PostHocOutcome EvaluateDesign(EvaluationContext context, BoundBlock block, PostHocKind.Options options, AnovaOutcome anova, DesignFit design, DiagnosticBag diagnostics)
    {
        var outcome = new PostHocOutcome(block);
        var of = block.Of!.Id;
        var treatments = anova.Data!.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).ToList();
        BlockFactor? factor;
        if (options.Factor is { } name)
        {
            factor = anova.Data.Factors.FirstOrDefault(f => f.Spec.Name == name);
            if (factor is null)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, of, DiagnosticBag.Nearest(name, treatments.Select(f => f.Spec.Name)));
                return outcome;
            }

            if (factor.Spec.Layout.Role != FactorRole.Treatment)
            {
                diagnostics.DesignViewUnavailable(options.FactorLocation, "posthoc", name, "it is a block or random factor, whose levels are a sample of units rather than treatments to compare; its variance component is in the anova block");
                return outcome;
            }
        }
        else if (treatments.Count == 1)
        {
            factor = treatments[0];
        }
        else
        {
            diagnostics.FactorChoiceNeeded(block.Location, of);
            return outcome;
        }

        var at = options.Factor is null ? block.Location : options.FactorLocation;
        if (design.Method == DesignMethod.Reml)
        {
            diagnostics.DesignViewUnavailable(at, "posthoc", of, "it was fitted as a mixed model (REML), and comparisons of its marginal means are not available in this version; 'fit: classical' applies to balanced data only");
            return outcome;
        }

        if (options.Method is "games-howell")
        {
            diagnostics.DesignViewUnavailable(options.MethodLocation ?? block.Location, "posthoc", of, "Games–Howell estimates a variance per group and would ignore the error strata; use 'method: tukey', 'holm' or 'bonferroni', which use the error of the factor's F test");
            return outcome;
        }

        var row = design.Strata!.Row(factor.Spec.Name);
        if (row.Denominator is not [{ Coefficient: 1.0 } part] || row.IsQuasiF)
        {
            diagnostics.DesignViewUnavailable(at, "posthoc", of, $"{factor.Spec.Name} has no single error mean square in this design (its F test is approximate, against a combination of mean squares), so its comparisons would have no exact standard error");
            return outcome;
        }

        if (options.Control is { } control && !factor.Levels.Contains(control))
        {
            diagnostics.UnknownControl(options.ControlLocation, control, factor.Spec.Name, DiagnosticBag.Nearest(control, factor.Levels));
            return outcome;
        }

        outcome.FactorLabel = factor.Spec.Display;
        outcome.DesignError = new DesignErrorTerm(part.Term, part.MeanSquare, part.Df);
        var levels = factor.Levels;
        var groups = factor.Split(anova.Data.Response);
        var alpha = context.Header.Alpha;
        var ms = part.MeanSquare;
        var df = part.Df;
        var method = options.Method == "auto" ? "tukey" : options.Method;
        outcome.Direction = options.Direction;
        var (test, procedure, result) = method switch
        {
            "tukey" when options.Control is not null => ("dunnett", DunnettProcedure(options.Direction), Dunnett.CompareWithAlternative(levels, groups, ms, df, alpha, options.Control, options.Direction)),
            "tukey" => ("tukey_hsd", PostHocProcedure.TukeyHsd, TukeyHsd.Compare(levels, groups, ms, df, alpha)),
            "holm" => ("holm", PostHocProcedure.PooledHolm, PooledTTests.Compare(levels, groups, ms, df, alpha, PValueAdjustmentMethod.Holm, options.Control)),
            _ => ("bonferroni", PostHocProcedure.PooledBonferroni, PooledTTests.Compare(levels, groups, ms, df, alpha, PValueAdjustmentMethod.Bonferroni, options.Control)),
        };
        var inputs = context.Inputs(block);
        var term = factor.Spec.Name;
        outcome.Families.Add(Record(context, block, test, procedure, result, term, inputs));
        AddFamilySize(context, block, outcome, term, result.Comparisons.Count, alpha, inputs);

        outcome.SingleObservationLevels = groups.Any(g => g.Length < 2);
        AddInteractions(outcome, anova, term, alpha);
        return outcome;
    }
}
