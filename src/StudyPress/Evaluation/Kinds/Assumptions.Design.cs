using StudyPress.Binding;
using StudyPress.Statistics;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.Designs;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// Normality of one error stratum's residuals: the finest stratum's residuals per observation
/// (<see cref="Unit"/> "observations"), or a coarser error term's estimated effects, one per unit
/// of that stratum (whole plots, batches), or the mixed model's conditional residuals.
/// </summary>
/// <param name="Term">The manifest term (plot errors hyphenated).</param>
/// <param name="EngineTerm">The design engine's name of the term, which the renderer labels.</param>
public sealed record StratumCheck(string Term, string EngineTerm, StratumUnit Unit, int Count, ShapiroWilkResult Normality, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>What a stratum's normality check was computed on (the renderer words it).</summary>
public enum StratumUnit
{
    /// <summary>The finest stratum's residuals, one per observation.</summary>
    Observations,

    /// <summary>A coarser error term's estimated effects, one per unit of that stratum.</summary>
    EstimatedEffects,

    /// <summary>The mixed model's conditional residuals, one per observation.</summary>
    ConditionalResiduals,
}

/// <summary>The checks of a design anova, per stratum.</summary>
public sealed record DesignChecks(DesignMethod Method, IReadOnlyList<StratumCheck> Strata)
{
    /// <summary>Whether a stratum's residuals look non-normal at <paramref name="alpha"/>.</summary>
    public bool AnyNonNormal(double alpha) => Strata.Any(s => s.Normality.P.IsDefined && s.Normality.P.Value < alpha);
}

public sealed partial class AssumptionsEvaluator
{
    /// <summary>
    /// Checks of a design anova: Shapiro–Wilk on the residuals of each error stratum that has at
    /// least five units (fewer say nothing about a distribution's shape) (the finest stratum's residuals; each coarser error term's effects, one per
    /// unit), or on the conditional residuals of the mixed model. Variance-homogeneity tests across
    /// groups are not run: in a design with strata the groups do not share one error.
    /// </summary>
    private static AssumptionsOutcome EvaluateDesign(EvaluationContext context, BoundBlock block, AnovaOutcome anova, DesignFit design)
    {
        var inputs = context.Inputs(block);
        var checks = new List<StratumCheck>();
        void Check(string engineTerm, StratumUnit unit, double[] values)
        {
            var term = DesignFit.TermName(engineTerm);
            var sw = ShapiroWilk.Test(values);
            var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.W] = context.Results.Add(block.Id, TestName.ShapiroWilk, term, null, null, Stat.W, sw.W, inputs),
                [Stat.P] = context.Results.Add(block.Id, TestName.ShapiroWilk, term, null, null, Stat.P, sw.P, inputs),
            };
            checks.Add(new StratumCheck(term, engineTerm, unit, values.Length, sw, v));
        }

        if (design.Method == DesignMethod.Reml)
        {
            Check(StrataAnova.ResidualName, StratumUnit.ConditionalResiduals, design.Residuals);
        }
        else
        {
            var strata = design.Strata!;
            Check(StrataAnova.ResidualName, StratumUnit.Observations, strata.Residuals);
            foreach (var row in strata.Rows.Where(r => r.Kind is TermKind.PlotError or TermKind.Random && r.Denominator.Count > 0 && r.Df >= 2))
            {
                if (strata.StratumEffects.TryGetValue(row.Term, out var effects) && effects.Length >= 5)
                {
                    Check(row.Term, StratumUnit.EstimatedEffects, effects);
                }
            }
        }

        return new AssumptionsOutcome(block) { Anova = anova, Design = new DesignChecks(design.Method, checks.AsReadOnly()) };
    }
}
