using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Designs;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>marginal-means</c>: estimated marginal means of an anova block's model — each factor's levels
/// (or the cells of a crossing) averaged with equal weight over the other factors, with standard
/// errors and intervals on the error the anova tested them against — and, with <c>at</c>, the
/// simple effects of one factor at each level of another: the means, an F test within each level
/// and Holm-adjusted pairwise differences.
/// </summary>
public sealed class MarginalMeansKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new MarginalMeansKind());

    public override string Name => "marginal-means";

    public override string PrimaryTest => "emmeans";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "by", "at"];

    public override bool AnalysesAnovaBlock => true;

    /// <summary>A factor named in <c>by</c> or <c>at</c>, with where it is written.</summary>
    public sealed record Named(string Name, SourceLocation Location);

    /// <summary>
    /// The bound keys. <paramref name="By"/>: the factors whose crossing's means are wanted (empty:
    /// each factor of the anova on its own); <paramref name="At"/>: the factor at whose levels the
    /// simple effects of the single <c>by</c> factor are taken (null: none).
    /// </summary>
    public sealed record Options(IReadOnlyList<Named> By, SourceLocation ByLocation, Named? At);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var before = diagnostics.Items.Count;

        // The anova block analysed (its own mistakes are reported by the binder, not here).
        var anova = context.AnovaOf(keys, Name, new DiagnosticBag());
        var factors = anova?.Factors.Select(f => f.Name).ToList();
        var ofId = anova?.Id ?? string.Empty;

        Named? Check(YScalar v)
        {
            if (factors is null)
            {
                return new Named(v.Value, v.Location);
            }

            if (!factors.Contains(v.Value))
            {
                diagnostics.FactorNotInAnova(v.Location, v.Value, ofId, DiagnosticBag.Nearest(v.Value, factors));
                return null;
            }

            var spec = anova!.Factors.First(f => f.Name == v.Value);
            if (spec.Layout.Role != FactorRole.Treatment)
            {
                diagnostics.MarginalMeansOfLayoutFactor(v.Location, v.Value, spec.Layout.Role == FactorRole.Block ? "a block" : "a random factor");
                return null;
            }

            return new Named(v.Value, v.Location);
        }

        var by = new List<Named>();
        foreach (var v in keys.ScalarList("by") ?? [])
        {
            if (by.Exists(b => b.Name == v.Value))
            {
                diagnostics.DuplicateInList(v.Location, "by", v.Value);
                continue;
            }

            if (Check(v) is { } n)
            {
                by.Add(n);
            }
        }

        var byLocation = keys.Has("by") ? keys.KeyLocation("by") : context.Syntax.Location;
        Named? at = null;
        if (keys.Scalar("at") is { } atNode)
        {
            at = Check(atNode);
            if (at is not null && by.Exists(b => b.Name == at.Name))
            {
                diagnostics.MarginalMeansAtIsBy(atNode.Location, at.Name);
                at = null;
            }
            else if (at is not null && by.Count > 1)
            {
                diagnostics.MarginalMeansAtWithCrossing(by[1].Location, at.Name);
                at = null;
            }
            else if (at is not null && by.Count == 0 && factors is not null && diagnostics.Items.Count == before)
            {
                // Without 'by', the simple effects are those of the one other treatment factor.
                var others = anova!.Factors.Where(f => f.Name != at.Name && f.Layout.Role == FactorRole.Treatment).ToList();
                if (others.Count != 1)
                {
                    diagnostics.MarginalMeansAtNeedsBy(atNode.Location, at.Name, ofId);
                    at = null;
                }
                else
                {
                    by.Add(new Named(others[0].Name, atNode.Location));
                }
            }

            if (at is not null && anova?.Options is AnovaKind.Options { Interaction: false })
            {
                diagnostics.MarginalMeansAtWithoutInteraction(atNode.Location, at.Name, ofId);
                at = null;
            }
        }

        return diagnostics.Items.Count > before ? null : new Options(by, byLocation, at);
    }
}
