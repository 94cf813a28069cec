using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;
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
        var outcome = new Found();
        var of = block.Of!.Id;
        var treatments = anova.Data!.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).ToList();
        BlockFactor? factor;
        if (options.Factor is { } name)
        {
            factor = anova.Data.Factors.FirstOrDefault(f => f.Spec.Name == name);
            if (factor is null)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, of, DiagnosticBag.Nearest(name, treatments.Select(f => f.Spec.Name)));
                return outcome.Build(block);
            }

            if (factor.Spec.Layout.Role != FactorRole.Treatment)
            {
                diagnostics.DesignViewUnavailable(options.FactorLocation, "posthoc", name, "it is a block or random factor, whose levels are a sample of units rather than treatments to compare; its variance component is in the anova block");
                return outcome.Build(block);
            }
        }
        else if (treatments.Count == 1)
        {
            factor = treatments[0];
        }
        else
        {
            diagnostics.FactorChoiceNeeded(block.Location, of);
            return outcome.Build(block);
        }

        var at = options.Factor is null ? block.Location : options.FactorLocation;
        if (options.Method is "games-howell")
        {
            diagnostics.DesignViewUnavailable(options.MethodLocation ?? block.Location, "posthoc", of, "Games–Howell estimates a variance per group and would ignore the error strata; use 'method: tukey', 'holm' or 'bonferroni', which use the error of the factor's F test");
            return outcome.Build(block);
        }

        if (design.Method == DesignMethod.Reml)
        {
            return EvaluateReml(context, block, options, anova, design, factor, diagnostics);
        }

        var row = design.Strata!.Row(factor.Spec.Name);
        if (row.Denominator is not [{ Coefficient: 1.0 } part] || row.IsQuasiF)
        {
            diagnostics.DesignViewUnavailable(at, "posthoc", of, $"{factor.Spec.Name} has no single error mean square in this design (its F test is approximate, against a combination of mean squares), so its comparisons would have no exact standard error");
            return outcome.Build(block);
        }

        if (options.Control is { } control && !factor.Levels.Contains(control))
        {
            diagnostics.UnknownControl(options.ControlLocation, control, factor.Spec.Name, DiagnosticBag.Nearest(control, factor.Levels));
            return outcome.Build(block);
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
        return outcome.Build(block);
    }

    /// <summary>
    /// Comparisons of a treatment of a design fitted as a mixed model (REML): differences of its
    /// estimated marginal means (<see cref="RemlFixedEffects"/>), each with its own SE from Cov(β̂)
    /// and its Satterthwaite df; Tukey–Kramer on each pair's df, Holm or Bonferroni t tests, or
    /// Dunnett against a control on the multivariate t of the differences (<see cref="RemlComparisons"/>).
    /// </summary>
    private static PostHocOutcome EvaluateReml(EvaluationContext context, BoundBlock block, PostHocKind.Options options, AnovaOutcome anova, DesignFit design, BlockFactor factor, DiagnosticBag diagnostics)
    {
        var fe = design.Reml!.FixedEffects!;
        var term = factor.Spec.Name;
        var fitted = fe.Levels(term);
        var levels = factor.Levels.Where(l => fitted.Contains(l)).ToList();
        if (options.Control is { } control && !levels.Contains(control))
        {
            diagnostics.UnknownControl(options.ControlLocation, control, term, DiagnosticBag.Nearest(control, levels));
            return new PostHocOutcome(block);
        }

        var alpha = context.Header.Alpha;
        var rows = levels.Select(l => fe.MeanRow([term], [l])).ToList();
        var method = options.Method == "auto" ? "tukey" : options.Method;
        string test;
        PostHocProcedure procedure;
        IReadOnlyList<RemlComparison> comparisons;
        Quantity critical;
        double? controlDf = null;
        double? mvtError = null;
        if (options.Control is { } c && method == "tukey")
        {
            var dunnett = RemlComparisons.WithControl(fe, levels, rows, levels.IndexOf(c), options.Direction, alpha);
            if (!dunnett.Accurate)
            {
                diagnostics.DunnettAccuracyNotReached(options.ControlLocation, c, levels.Count - 1, dunnett.Error, AdjustedComparisons.RequiredAccuracy, block.Of!.Id, mixedModel: true);
                return new PostHocOutcome(block);
            }

            (test, procedure, comparisons, critical) = (TestName.Dunnett, DunnettProcedure(options.Direction), dunnett.Comparisons, dunnett.CriticalValue);
            controlDf = double.IsFinite(dunnett.Df) ? dunnett.Df : null;
            mvtError = dunnett.Comparisons.Count > 1 ? dunnett.Error : null;
        }
        else
        {
            var adjustment = method switch
            {
                "tukey" => RemlPairAdjustment.TukeyKramer,
                "holm" => RemlPairAdjustment.Holm,
                _ => RemlPairAdjustment.Bonferroni,
            };
            if (options.Control is { } ctl)
            {
                var k = levels.IndexOf(ctl);
                var pairs = Enumerable.Range(0, levels.Count).Where(i => i != k)
                    .Select(i => (levels[i], ctl, fe.Combination(RemlComparisons.Difference(rows[i], rows[k])))).ToList();
                comparisons = RemlComparisons.Adjust(pairs, adjustment, alpha, levels.Count);
            }
            else
            {
                comparisons = RemlComparisons.Pairwise(fe, levels, rows, adjustment, alpha);
            }

            (test, procedure) = method switch
            {
                "tukey" => (TestName.TukeyHsd, PostHocProcedure.RemlTukeyKramer),
                "holm" => (TestName.Holm, PostHocProcedure.RemlHolm),
                _ => (TestName.Bonferroni, PostHocProcedure.RemlBonferroni),
            };
            critical = Quantity.Undefined("each pair has its own standard error and Satterthwaite df");
        }

        var tukey = test == TestName.TukeyHsd;
        var list = comparisons.Select(x => new PairwiseComparison(x.LevelA, x.LevelB, x.Diff, x.Se, tukey ? x.T.Map(t => Math.Sqrt(2.0) * Math.Abs(t)) : x.T, x.CiLow, x.CiHigh, x.PAdjusted, x.Df)).ToList();
        var outcome = new Found { Reml = true, ControlDf = controlDf, FactorLabel = factor.Spec.Display, Direction = options.Direction, MultivariateTError = mvtError };
        var inputs = context.Inputs(block);
        var result = new PostHocResult(test, alpha, list, critical);
        var recorded = RecordPairs(context, block, test, result, term, inputs);
        foreach (var (pair, values) in recorded)
        {
            values[Stat.Df] = context.Results.Add(block.Id, test, term, null, [pair.LevelA, pair.LevelB], Stat.Df, pair.Df, inputs);
        }

        outcome.Families.Add(Family(test, procedure, result, recorded));
        AddFamilySize(context, block, outcome, term, list.Count, alpha, inputs);
        outcome.SingleObservationLevels = factor.Split(anova.Data!.Response).Any(g => g.Length == 1);

        AddInteractions(outcome, anova, term, alpha);

        return outcome.Build(block);
    }
}
