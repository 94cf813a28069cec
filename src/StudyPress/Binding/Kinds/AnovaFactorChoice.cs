using StudyPress.Diagnostics;
using StudyPress.Statistics.Designs;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// The factor a block that follows an anova block compares (posthoc, contrasts, equivalence,
/// power), checked when binding: a <c>factor</c> that the anova block does not have, or a missing
/// <c>factor</c> where the anova has several, is reported together with the study's other binding
/// mistakes instead of only after they are mended (evaluation keeps the same checks for the
/// routes decided there).
/// </summary>
internal static class AnovaFactorChoice
{
    /// <summary>
    /// Checks <paramref name="factor"/> (the block's <c>factor</c> key, or null) against the anova
    /// block <paramref name="anova"/>. Without <c>factor</c>, only an anova without a declared
    /// layout and without covariates is judged here: for those the candidates are simply its
    /// factors (a design's candidates are its treatment factors, decided when evaluating).
    /// </summary>
    public static void Check(BoundBlock? anova, YScalar? factor, KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        if (anova is not { Kind: AnovaKind })
        {
            return;
        }

        var declared = anova.Factors.Any(f => f.Layout.IsDeclared);
        if (factor is not null)
        {
            if (!anova.Factors.Any(f => f.Name == factor.Value))
            {
                var candidates = declared ? anova.Factors.Where(f => f.Layout.Role == FactorRole.Treatment) : anova.Factors;
                diagnostics.FactorNotInAnova(factor.Location, factor.Value, anova.Id, DiagnosticBag.Nearest(factor.Value, candidates.Select(f => f.Name)));
            }

            return;
        }

        if (!declared && !anova.OptionsOf<AnovaKind.Options>().HasCovariates && anova.Factors.Count > 1 && !keys.Misspelt.Contains("factor"))
        {
            diagnostics.FactorChoiceNeeded(context.Syntax.Location, anova.Id);
        }
    }
}
